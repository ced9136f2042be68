package raster

// atlas.nc of a run on a UGRID mesh: the per-cell results as data variables
// on the input mesh (UGRID 1.0: mesh topology variable, node coordinates,
// face-node connectivity from 0 with fill -1), in the input file's node or
// face order, so the atlas overlays the hindcast's own mesh.

import (
	"fmt"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

func writeMesh(path string, r *rundir.Run, monthly *rundir.Table) (err error) {
	ds, err := netcdf.CreateFile(path, netcdf.CLOBBER|netcdf.NETCDF4)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := ds.Close(); err == nil && cerr != nil {
			err = cerr
		}
	}()
	m := r.Mesh
	nn, nf := len(m.NodeLon), m.NFaces()
	maxNodes := 3
	for f := 0; f < nf; f++ {
		maxNodes = max(maxNodes, len(m.Face(f)))
	}
	nd, err := ds.AddDim("node", uint64(nn))
	if err != nil {
		return err
	}
	fd, err := ds.AddDim("face", uint64(nf))
	if err != nil {
		return err
	}
	md, err := ds.AddDim("max_face_nodes", uint64(maxNodes))
	if err != nil {
		return err
	}
	mond, err := ds.AddDim("month", 12)
	if err != nil {
		return err
	}
	if err := globalAttrs(ds, r, "CF-1.8 UGRID-1.0", "per-cell results of a wave hindcast on an unstructured mesh (cells.parquet, monthly.parquet, mesh_nodes.parquet, mesh_faces.parquet of this run directory)"); err != nil {
		return err
	}
	texts := func(v netcdf.Var, kvs ...[2]string) error {
		for _, kv := range kvs {
			if kv[1] == "" {
				continue
			}
			if err := text(v.Attr(kv[0]), kv[1]); err != nil {
				return err
			}
		}
		return nil
	}
	crs, err := ds.AddVar("crs", netcdf.INT, nil)
	if err != nil {
		return err
	}
	if err := texts(crs, [2]string{"grid_mapping_name", "latitude_longitude"}, [2]string{"crs_wkt", WGS84WKT}); err != nil {
		return err
	}
	if err := crs.Attr("semi_major_axis").WriteFloat64s([]float64{6378137}); err != nil {
		return err
	}
	if err := crs.Attr("inverse_flattening").WriteFloat64s([]float64{298.257223563}); err != nil {
		return err
	}
	onFaces := m.Location == "face"
	mv, err := ds.AddVar("mesh", netcdf.INT, nil)
	if err != nil {
		return err
	}
	topo := [][2]string{{"cf_role", "mesh_topology"}, {"long_name", "topology of the hindcast's 2-D unstructured mesh"},
		{"node_coordinates", "node_lon node_lat"}, {"face_node_connectivity", "face_nodes"}, {"face_dimension", "face"}}
	if onFaces {
		topo = append(topo, [2]string{"face_coordinates", "face_lon face_lat"})
	}
	if err := texts(mv, topo...); err != nil {
		return err
	}
	if err := mv.Attr("topology_dimension").WriteInt32s([]int32{2}); err != nil {
		return err
	}
	coord := func(name, std, units string, dim netcdf.Dim, vals []float64) error {
		v, err := ds.AddVar(name, netcdf.DOUBLE, []netcdf.Dim{dim})
		if err != nil {
			return err
		}
		if err := texts(v, [2]string{"standard_name", std}, [2]string{"units", units}, [2]string{"long_name", std + " of mesh " + map[netcdf.Dim]string{nd: "nodes", fd: "faces"}[dim]}); err != nil {
			return err
		}
		return v.WriteFloat64s(vals)
	}
	if err := coord("node_lon", "longitude", "degrees_east", nd, m.NodeLon); err != nil {
		return err
	}
	if err := coord("node_lat", "latitude", "degrees_north", nd, m.NodeLat); err != nil {
		return err
	}
	conn := make([]int32, nf*maxNodes)
	for f := 0; f < nf; f++ {
		for k := 0; k < maxNodes; k++ {
			conn[f*maxNodes+k] = -1
		}
		for k, a := range m.Face(f) {
			conn[f*maxNodes+k] = int32(a)
		}
	}
	cv, err := ds.AddVar("face_nodes", netcdf.INT, []netcdf.Dim{fd, md})
	if err != nil {
		return err
	}
	if err := cv.Attr("_FillValue").WriteInt32s([]int32{-1}); err != nil {
		return err
	}
	if err := texts(cv, [2]string{"cf_role", "face_node_connectivity"}, [2]string{"long_name", "nodes of each face, in the input mesh's order"}); err != nil {
		return err
	}
	if err := cv.Attr("start_index").WriteInt32s([]int32{0}); err != nil {
		return err
	}
	if err := cv.WriteInt32s(conn); err != nil {
		return err
	}
	// Per-cell values in the file's order of the data's location.
	locDim, loc, coords := nd, "node", "node_lon node_lat"
	if onFaces {
		locDim, loc, coords = fd, "face", "face_lon face_lat"
	}
	order := func(vals []float64) []float64 {
		out := make([]float64, len(m.Cell))
		for i, c := range m.Cell {
			out[i] = vals[c]
		}
		return out
	}
	if onFaces {
		if err := coord("face_lon", "longitude", "degrees_east", fd, order(r.Lon())); err != nil {
			return err
		}
		if err := coord("face_lat", "latitude", "degrees_north", fd, order(r.Lat())); err != nil {
			return err
		}
	}
	attrs := func(v netcdf.Var, c *rundir.Column, long string) error {
		return texts(v, [2]string{"units", CFUnits(c.Unit)}, [2]string{"long_name", long}, [2]string{"standard_name", c.StandardName},
			[2]string{"cell_methods", c.CellMethods}, [2]string{"mesh", "mesh"}, [2]string{"location", loc},
			[2]string{"coordinates", coords}, [2]string{"grid_mapping", "crs"})
	}
	floatVar := func(name string, dims []netcdf.Dim, c *rundir.Column, long string, vals []float64) error {
		return addFloatVar(ds, name, dims, vals, func(v netcdf.Var) error { return attrs(v, c, long) })
	}
	for _, c := range r.Cells.Columns {
		if !c.Numeric() || c.Name == contract.ColLon || c.Name == contract.ColLat {
			continue
		}
		long := c.LongName
		if long == "" {
			long = c.Doc
		}
		switch c.Kind {
		case rundir.Float:
			if err := floatVar(c.Name, []netcdf.Dim{locDim}, c, long, order(c.Float)); err != nil {
				return err
			}
		case rundir.Int:
			v, err := ds.AddVar(c.Name, netcdf.INT64, []netcdf.Dim{locDim})
			if err != nil {
				return err
			}
			if err := v.Attr("_FillValue").WriteInt64s([]int64{IntFill}); err != nil {
				return err
			}
			if err := attrs(v, c, long); err != nil {
				return err
			}
			vals := make([]int64, len(m.Cell))
			for i, cell := range m.Cell {
				vals[i] = c.Int[cell]
				if !c.Valid[cell] {
					vals[i] = IntFill
				}
			}
			if err := v.WriteInt64s(vals); err != nil {
				return fmt.Errorf("variable %s: %w", c.Name, err)
			}
		}
	}
	if err := lcoeVars(ds, r, func(c *rundir.Column, long string) error {
		return floatVar(c.Name, []netcdf.Dim{locDim}, c, long, order(c.Float))
	}); err != nil {
		return err
	}
	if monthly == nil {
		return nil
	}
	cells := r.Cells.Rows
	clim, err := Climatology(monthly, cells)
	if err != nil {
		return err
	}
	for _, cvar := range []struct{ name, col, std, long string }{
		{"power_monthly_mean_kw_m", contract.ColPowerMean, "", "mean wave power J of each calendar month over the included years"},
		{"hm0_monthly_mean_m", contract.ColHm0Mean, "sea_surface_wave_significant_height", "mean significant wave height Hm0 of each calendar month over the included years"},
	} {
		a := clim[cvar.col]
		vals := make([]float64, 0, 12*len(m.Cell))
		for mo := 0; mo < 12; mo++ {
			vals = append(vals, order(a[mo*cells:(mo+1)*cells])...)
		}
		c := &rundir.Column{Unit: monthly.Col(cvar.col).Unit, StandardName: cvar.std, CellMethods: "time: mean"}
		if err := floatVar(cvar.name, []netcdf.Dim{mond, locDim}, c, cvar.long, vals); err != nil {
			return err
		}
	}
	return nil
}
