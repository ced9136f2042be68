package engine

import (
	"context"
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"sort"
	"sync"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/grid"
)

// tableSink writes the run's tables as the results come, pass by pass, in
// cell order: cells.parquet and every long table is a Parquet stream, put
// in place at close (each atomically), and only the values of the contour
// columns are kept over the whole grid for the contour layers. What a run
// holds for its results is thus one chunk of cells, whatever the number of
// passes. Every table's row groups end at the grid's cell blocks
// (blocks.go). A shard's sink (part) writes the rows of its cells lo..hi-1
// only, without contours or mesh tables; a merge's sink takes the shards'
// row groups (assemble).
type tableSink struct {
	e       *engine
	out     string
	lo, hi  int  // the cells of the tables
	part    bool // a shard's share of the tables
	blocks  cellBlocks
	cells   *export.TableStream
	long    []*export.TableStream // in the order of their file names
	schemas []longTable           // the schema of each of long
	names   []string              // file names of long
	workers int                   // the run's workers (sinkEncoders caps the goroutines)
	next    int                   // the next cell id to write
	contour map[string][]float64  // the contour columns over the grid
	keep    map[int]bool          // the cells with long-table rows (siteCells; nil: all)
}

// tableFiles are the names of the tables a sink writes: cells.parquet and
// the long tables.
func (e *engine) tableFiles() []string {
	fs := []string{contract.CellsFile}
	for _, t := range e.writtenLongTables() {
		fs = append(fs, t.file())
	}
	return fs
}

// openSink starts the tables of cells lo..hi-1 in out: the whole grid's
// (part false) or a shard's share (part true).
func (e *engine) openSink(out string, workers, lo, hi int, part bool) (*tableSink, error) {
	g := e.cat.Grid
	s := &tableSink{e: e, out: out, workers: workers, contour: map[string][]float64{}, keep: e.siteCells(), lo: lo, hi: hi, next: lo, part: part, blocks: blocksOf(g)}
	var err error
	if s.cells, err = export.NewGeoParquetStream(filepath.Join(out, "cells.parquet"), e.cellsTable(0, 0, nil), g.Lon[lo:hi], g.Lat[lo:hi]); err != nil {
		return nil, fmt.Errorf("writing cells.parquet: %w", err)
	}
	// in the order of the file names (the order of Result.Files)
	byName := map[string]longTable{}
	for _, t := range e.writtenLongTables() {
		byName[t.file()] = t
	}
	for _, name := range slices.Sorted(maps.Keys(byName)) {
		st, err := export.NewParquetStream(filepath.Join(out, name), byName[name].build(nil))
		if err != nil {
			s.abort()
			return nil, fmt.Errorf("writing %s: %w", name, err)
		}
		s.long, s.schemas, s.names = append(s.long, st), append(s.schemas, byName[name]), append(s.names, name)
	}
	if !part {
		for _, col := range e.spec.Contours.Columns {
			s.contour[col] = nil // contourer says whether the grid has contours
		}
	}
	return s, nil
}

// add writes the rows of cells lo..hi-1, which must follow the cells
// written before; res are the results of cells in that range (masked cells
// have none), in any order.
func (s *tableSink) add(lo, hi int, res []*cellResult) error {
	if lo != s.next || hi > s.hi {
		return fmt.Errorf("internal error: the tables have cells up to %d of %d..%d, the next part is %d..%d", s.next-1, s.lo, s.hi-1, lo, hi-1)
	}
	sortByID(res)
	// block by block: each block's rows end a row group of every table
	for lo < hi {
		end := min(hi, s.blocks.next(lo))
		k := sort.Search(len(res), func(i int) bool { return res[i].id >= end })
		if err := s.addBlock(lo, end, res[:k]); err != nil {
			return err
		}
		if end == s.blocks.next(end-1) { // the block is complete
			if err := s.cut(); err != nil {
				return err
			}
		}
		lo, res = end, res[k:]
	}
	return nil
}

// cut ends a row group of every table (at the end of a block).
func (s *tableSink) cut() error {
	if err := s.cells.Cut(); err != nil {
		return fmt.Errorf("writing cells.parquet: %w", err)
	}
	return s.eachLong(func(k int) error {
		if err := s.long[k].Cut(); err != nil {
			return fmt.Errorf("writing %s: %w", s.names[k], err)
		}
		return nil
	})
}

// addBlock writes the rows of cells lo..hi-1, within one block; res are
// their results, sorted.
func (s *tableSink) addBlock(lo, hi int, res []*cellResult) error {
	t := s.e.cellsTable(lo, hi, res)
	if err := s.cells.Append(t); err != nil {
		return fmt.Errorf("writing cells.parquet: %w", err)
	}
	for _, c := range t.Columns {
		if v, ok := s.contour[c.Name]; ok {
			if c.Float64 == nil {
				s.contour[c.Name] = nil // not numeric: writeContours says so
				continue
			}
			s.contour[c.Name] = append(v, c.Float64...)
		}
	}
	// Each long table is its own stream: they are built and encoded
	// side by side, each by one goroutine in cell order, so the bytes are
	// those of one table after the other.
	lres := longRowCells(res, s.keep)
	if err := s.eachLong(func(k int) error {
		if err := s.long[k].Append(s.schemas[k].build(lres)); err != nil {
			return fmt.Errorf("writing %s: %w", s.names[k], err)
		}
		return nil
	}); err != nil {
		return err
	}
	s.next = hi
	return nil
}

// sinkEncoders is the number of long tables built and encoded at a time
// (at most; never more than the run's workers). Two take the stage off one
// core; each more would hold one more table's columns and encoder
// (memoryModel counts this many) for less gain, the tables being unequal.
const sinkEncoders = 2

// eachLong calls f for every long table k, on up to sinkEncoders
// goroutines, and returns the error of the first table (in file order)
// that failed.
func (s *tableSink) eachLong(f func(k int) error) error {
	errs := make([]error, len(s.long))
	next := make(chan int, len(s.long))
	for k := range s.long {
		next <- k
	}
	close(next)
	var wg sync.WaitGroup
	for w := 0; w < min(max(s.workers, 1), sinkEncoders, len(s.long)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range next {
				errs[k] = f(k)
			}
		}()
	}
	wg.Wait()
	return firstErr(errs)
}

// firstErr is the first non-nil error of errs, or nil.
func firstErr(errs []error) error {
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// close puts the tables in place and writes the contour layers; it returns
// the files written (relative to the run directory) and the warnings.
func (s *tableSink) close() ([]string, []string, error) {
	if s.next != s.hi {
		s.abort()
		return nil, nil, fmt.Errorf("internal error: the tables have cells %d..%d of %d..%d", s.lo, s.next-1, s.lo, s.hi-1)
	}
	written := []string{"cells.parquet"}
	if err := s.cells.Close(); err != nil {
		s.abort()
		return nil, nil, fmt.Errorf("writing cells.parquet: %w", err)
	}
	if err := s.eachLong(func(k int) error {
		if err := s.long[k].Close(); err != nil {
			return fmt.Errorf("writing %s: %w", s.names[k], err)
		}
		return nil
	}); err != nil {
		s.abort()
		return nil, nil, err
	}
	written = append(written, s.names...)
	if s.part {
		return written, nil, nil
	}
	if s.e.cat.Grid.Kind == grid.MeshKind {
		files, err := writeMeshTables(s.out, s.e.cat.Grid)
		if err != nil {
			return nil, nil, err
		}
		written = append(written, files...)
	}
	files, warns, err := s.e.writeContours(s.out, s.contour)
	if err != nil {
		return nil, nil, err
	}
	return append(written, files...), warns, nil
}

// abort removes the unfinished tables.
func (s *tableSink) abort() {
	if s.cells != nil {
		s.cells.Abort()
	}
	for _, st := range s.long {
		st.Abort()
	}
}

// abortSink removes the unfinished tables of a run that did not reach its
// export (a no-op once they are in place).
func (j *job) abortSink() {
	if j.sink != nil {
		j.sink.abort()
	}
}

// assemble appends a shard's tables (in dir, cells c0..c1-1, which must
// follow the cells written before) row group by row group, without
// refitting, and takes the values of the contour columns from its
// cells.parquet. The shard wrote its row groups at the grid's cell blocks, as
// this sink would have, so the merged tables are the single run's bytes.
func (s *tableSink) assemble(ctx context.Context, dir string, c0, c1 int) error {
	if c0 != s.next || c1 > s.hi {
		return fmt.Errorf("internal error: the tables have cells up to %d, the shard in %s holds %d..%d", s.next-1, dir, c0, c1-1)
	}
	src := filepath.Join(dir, contract.CellsFile)
	cols := slices.Sorted(maps.Keys(s.contour))
	if _, err := s.cells.AppendRowGroups(ctx, src, cols, func(col string, v []float64) {
		if v == nil {
			s.contour[col] = nil // not numeric: writeContours says so
			return
		}
		s.contour[col] = append(s.contour[col], v...)
	}); err != nil {
		return err
	}
	if s.cells.Rows() != c1 {
		return fmt.Errorf("%s holds rows for cells %d..%d, the shard's cells are %d..%d; rerun the shard", src, c0, s.cells.Rows()-1, c0, c1-1)
	}
	if err := s.eachLong(func(k int) error {
		_, err := s.long[k].AppendRowGroups(ctx, filepath.Join(dir, s.names[k]), nil, nil)
		return err
	}); err != nil {
		return err
	}
	s.next = c1
	return nil
}
