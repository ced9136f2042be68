// Package bench measures a whole swellgrid run against the cost of reading
// its input: it generates invented benchmark hindcasts with pipelines/synth
// (cached outside the repository), runs each measured case in a child
// process so that its peak memory is its own, and reports wall times, the
// ratio of the pipeline to the read floor, throughput and peak memory.
//
// It is benchmark tooling; its programs are cmd/sgbench (`make bench`) and
// cmd/sgmem (`make bench-memory`), and compare_outputs.sh here compares two
// builds' tables with cmd/sgdiff. It drives pipelines.Run and the ingest
// catalog as a user would; it must not know about the per-cell statistics or
// the output formats, and no product package (ingest, grid, stats, export,
// pipelines, cmd/swellgrid) imports it outside its _test.go files. `make
// bench` copies it and cmd/sgbench over an older commit and builds them
// there, so it imports only product packages and names that the before tree
// (BENCH_BEFORE) has too.
package bench

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"swellgrid/pipelines/synth"
)

// Dataset is one cached benchmark hindcast.
type Dataset struct {
	Name     string // "bulk" or "spectral"
	Scenario synth.Scenario
	Dir      string   // where its files are
	Files    []string // sorted; one per month
}

// BulkScenario is the bulk benchmark hindcast: an invented 100 x 100 regular
// grid, 3-hourly, NetCDF-4 with zlib, one file per month.
func BulkScenario(years int) synth.Scenario {
	return synth.Scenario{
		Name:      "sgbench_bulk",
		Title:     "swellgrid benchmark: synthetic regular bulk grid 100 x 100, 3-hourly, one file per month",
		Place:     "the Nullport Shelf, an invented stretch of coast",
		Grid:      synth.Grid{Kind: synth.Regular, NX: 100, NY: 100, LonMin: -40, LonMax: -30.1, LatMin: 40, LatMax: 49.9},
		Bulk:      true,
		KeepBits:  12,
		Start:     synth.Date{Year: 2001, Month: 1},
		Months:    12 * years,
		StepHours: 3,
		Calendar:  synth.Standard,
		Deflate:   1,
		PerMonth:  true,
		Mask:      true,
		Seed:      9001,
	}
}

// SpectralScenario is the spectral benchmark hindcast: 200 invented output
// points with 29 frequencies x 24 directions, 3-hourly, NetCDF-4 with zlib,
// one file per month.
func SpectralScenario(years int) synth.Scenario {
	return synth.Scenario{
		Name:      "sgbench_spec",
		Title:     "swellgrid benchmark: synthetic directional spectra at 200 points, 29 x 24, 3-hourly, one file per month",
		Place:     "the Nullport Shelf, an invented stretch of coast",
		Grid:      synth.Grid{Kind: synth.Points, NX: 200, LonMin: -40, LonMax: -30, LatMin: 40, LatMax: 50},
		Spectra:   &synth.Spectra{FloorRel: 1e-4},
		KeepBits:  12,
		Start:     synth.Date{Year: 2001, Month: 1},
		Months:    12 * years,
		StepHours: 3,
		Calendar:  synth.Standard,
		Deflate:   1,
		PerMonth:  true,
		Seed:      9002,
	}
}

// key names a scenario's cache directory: a hash of every field, so a changed
// scenario never reuses stale files. (A changed generator with the same
// scenario does; delete the cache directory then.)
// The spectra are hashed by value and their pointer left out: "%+v" of the
// scenario would print the pointer's address, different in every run, and
// so regenerate the spectral hindcast (2 minutes) every time.
func key(s synth.Scenario) string {
	sp := ""
	if s.Spectra != nil {
		sp = fmt.Sprintf("%+v", *s.Spectra)
	}
	s.Spectra = nil
	h := sha256.Sum256([]byte(fmt.Sprintf("%+v|%s", s, sp)))
	return s.Name + "-" + hex.EncodeToString(h[:6])
}

const doneMarker = "COMPLETE"

// Ensure returns the dataset under cache, generating it first if it is not
// there yet (a directory without the completion marker is regenerated).
func Ensure(cache, name string, s synth.Scenario, log func(string, ...any)) (*Dataset, error) {
	dir := filepath.Join(cache, key(s))
	d := &Dataset{Name: name, Scenario: s, Dir: dir}
	if _, err := os.Stat(filepath.Join(dir, doneMarker)); err != nil {
		log("generating %s benchmark hindcast in %s (once; later runs reuse it)", name, dir)
		if err := os.RemoveAll(dir); err != nil {
			return nil, fmt.Errorf("bench: clear %s: %v", dir, err)
		}
		if _, err := s.Write(dir); err != nil {
			return nil, fmt.Errorf("bench: generate %s: %v", name, err)
		}
		if err := os.WriteFile(filepath.Join(dir, doneMarker), []byte(s.Title+"\n"), 0o644); err != nil {
			return nil, fmt.Errorf("bench: %v", err)
		}
	}
	files, err := filepath.Glob(filepath.Join(dir, "*.nc"))
	if err != nil {
		return nil, err
	}
	sort.Strings(files)
	if len(files) != s.Months {
		return nil, fmt.Errorf("bench: %s holds %d files, want %d; delete the directory to regenerate", dir, len(files), s.Months)
	}
	d.Files = files
	return d, nil
}

// Bytes is the total size of the dataset's files.
func (d *Dataset) Bytes(files []string) int64 {
	var n int64
	for _, f := range files {
		if st, err := os.Stat(f); err == nil {
			n += st.Size()
		}
	}
	return n
}

// Describe is a one-line description of a scenario.
func Describe(s synth.Scenario) string {
	var b strings.Builder
	if s.Spectra != nil {
		fmt.Fprintf(&b, "%d points, 29 x 24 spectra", s.Grid.NX)
	} else {
		fmt.Fprintf(&b, "%d x %d regular grid, bulk hm0/te/tp/wdir", s.Grid.NX, s.Grid.NY)
	}
	fmt.Fprintf(&b, ", %d months %d-hourly, NetCDF-4 deflate %d, one file per month", s.Months, s.StepHours, s.Deflate)
	return b.String()
}
