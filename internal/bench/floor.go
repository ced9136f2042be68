package bench

import (
	"context"
	"fmt"
	"runtime"
	"time"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/ingest"
)

// FloorResult is what one read of the record cost.
type FloorResult struct {
	Values int64         // values read
	Wall   time.Duration // wall time of the reads (the catalog excluded)
}

// ReadFloor reads every value of the catalog's role variables once, straight
// through the NetCDF library in each variable's stored type, in the order a
// run reads them (file by file, blocks of blockSteps time steps, roles in
// ingest.Roles order, the whole cell range per read), and does nothing else
// with them: no unpacking, no scatter, no statistics. It is the least any
// tool that reads the record through this library must spend.
func ReadFloor(cat *ingest.Catalog, blockSteps int) (FloorResult, error) {
	if blockSteps <= 0 {
		blockSteps = 64
	}
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	var res FloorResult
	t0 := time.Now()
	var buf32 []float32
	var buf64 []float64
	var buf16 []int16
	for _, fe := range cat.Files {
		ds, err := netcdf.OpenFile(fe.Path, netcdf.NOWRITE)
		if err != nil {
			return res, fmt.Errorf("bench: read floor: open %s: %v", fe.Path, err)
		}
		type rv struct {
			v     netcdf.Var
			t     netcdf.Type
			shape []uint64
		}
		var vars []rv
		for _, role := range ingest.Roles {
			vi := cat.Vars[role]
			if vi == nil || role == ingest.Depth {
				continue
			}
			v, err := ds.Var(vi.Name)
			if err != nil {
				ds.Close()
				return res, fmt.Errorf("bench: read floor: %s: variable %q: %v", fe.Path, vi.Name, err)
			}
			t, err := v.Type()
			if err != nil {
				ds.Close()
				return res, err
			}
			dims, err := v.Dims()
			if err != nil {
				ds.Close()
				return res, err
			}
			shape := make([]uint64, len(dims))
			for i, d := range dims {
				if shape[i], err = d.Len(); err != nil {
					ds.Close()
					return res, err
				}
			}
			vars = append(vars, rv{v, t, shape})
		}
		for t0 := 0; t0 < fe.Steps; t0 += blockSteps {
			nt := min(blockSteps, fe.Steps-t0)
			for _, x := range vars {
				start := make([]uint64, len(x.shape))
				count := append([]uint64(nil), x.shape...)
				start[0], count[0] = uint64(t0), uint64(nt)
				n := 1
				for _, c := range count {
					n *= int(c)
				}
				switch x.t {
				case netcdf.FLOAT:
					if cap(buf32) < n {
						buf32 = make([]float32, n)
					}
					err = x.v.ReadFloat32Slice(buf32[:n], start, count)
				case netcdf.DOUBLE:
					if cap(buf64) < n {
						buf64 = make([]float64, n)
					}
					err = x.v.ReadFloat64Slice(buf64[:n], start, count)
				case netcdf.SHORT:
					if cap(buf16) < n {
						buf16 = make([]int16, n)
					}
					err = x.v.ReadInt16Slice(buf16[:n], start, count)
				default:
					err = fmt.Errorf("stored type %v not handled by the floor reader", x.t)
				}
				if err != nil {
					ds.Close()
					return res, fmt.Errorf("bench: read floor: %s: %v", fe.Path, err)
				}
				res.Values += int64(n)
			}
		}
		ds.Close()
	}
	res.Wall = time.Since(t0)
	return res, nil
}

// ReadIngest reads the record through ingest's reader (unpacking, unit
// conversion and the scatter into canonical cell order) and releases every
// block once counted (ingest.Block.Release), as the run's workers do: the
// read stage of a run without any computation.
func ReadIngest(cat *ingest.Catalog, blockSteps int) (FloorResult, error) {
	var res FloorResult
	t0 := time.Now()
	out := make(chan *ingest.Block, 2)
	errc := make(chan error, 1)
	go func() {
		errc <- cat.Read(context.Background(), ingest.ReadRange{MaxSteps: blockSteps}, out)
		close(out)
	}()
	for b := range out {
		for _, v := range b.Bulk {
			res.Values += int64(len(v))
		}
		res.Values += int64(len(b.Spec))
		b.Release()
	}
	if err := <-errc; err != nil {
		return res, err
	}
	res.Wall = time.Since(t0)
	return res, nil
}
