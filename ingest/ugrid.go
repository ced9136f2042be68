package ingest

// UGRID 1.0 meshes (https://ugrid-conventions.github.io/ugrid-conventions/):
// a mesh topology variable (cf_role = "mesh_topology", topology_dimension
// = 2) names the node coordinates, the face-node connectivity and,
// optionally, the face coordinates; data variables say where they are by
// their mesh and location attributes ("node" or "face"). The cells of the
// hindcast are the nodes or the faces the data are on.

import (
	"math"
	"strings"

	"swellgrid/grid"
)

// meshInfo is how a file stores its mesh.
type meshInfo struct {
	topo     string // the mesh topology variable
	location string // grid.OnNodes or grid.OnFaces
	nodeDim  string
	faceDim  string
}

// dim is the dimension of the cells: the node or the face dimension.
func (m *meshInfo) dim() string {
	if m.location == grid.OnFaces {
		return m.faceDim
	}
	return m.nodeDim
}

// findMesh reads the file's UGRID mesh, if it has one (found reports so),
// and makes it the scan's grid: cells are the nodes or the faces that the
// time-varying data are on. It is strict: a mesh it cannot read exactly is
// refused, naming the file and the variable.
func (s *scan) findMesh(timeDim string) (found bool, err error) {
	var topos []*ncVar
	for i := range s.f.vars {
		if s.f.vars[i].str("cf_role") == "mesh_topology" {
			topos = append(topos, &s.f.vars[i])
		}
	}
	if len(topos) == 0 {
		return false, nil
	}
	path := s.f.path
	if len(topos) > 1 {
		return true, errf(path, "", "%d mesh topology variables (cf_role = \"mesh_topology\": %s and %s); swellgrid reads files with one mesh", len(topos), topos[0].name, topos[1].name)
	}
	tv := topos[0]
	if td := tv.nums("topology_dimension"); len(td) != 1 || td[0] != 2 {
		return true, errf(path, tv.name, "topology_dimension is %v; swellgrid reads 2-D meshes (topology_dimension = 2, UGRID 1.0)", td)
	}
	mi := &meshInfo{topo: tv.name}
	// Node coordinates: longitude and latitude.
	nlon, nlat, err := s.lonLatPair(tv, "node_coordinates", true)
	if err != nil {
		return true, err
	}
	if len(nlon.dims) != 1 || len(nlat.dims) != 1 || nlon.dims[0] != nlat.dims[0] {
		return true, errf(path, nlon.name+"/"+nlat.name, "node coordinates of dimensions %v and %v; UGRID node coordinates are 1-D on the node dimension", nlon.dims, nlat.dims)
	}
	mi.nodeDim = nlon.dims[0]
	m := &grid.Mesh{}
	if m.NodeLon, err = s.finiteCoords(nlon); err != nil {
		return true, err
	}
	if m.NodeLat, err = s.finiteCoords(nlat); err != nil {
		return true, err
	}
	// Face-node connectivity.
	cname := strings.TrimSpace(tv.str("face_node_connectivity"))
	cv := s.f.find(cname)
	if cname == "" || cv == nil {
		return true, errf(path, tv.name, "attribute face_node_connectivity names %q, which is not a variable of the file; a 2-D mesh needs its face-node connectivity (UGRID 1.0)", cname)
	}
	if len(cv.dims) != 2 {
		return true, errf(path, cv.name, "face_node_connectivity has dimensions %v; it must be (faces, nodes per face), or the reverse with face_dimension set", cv.dims)
	}
	faceAxis := 0
	if fd := strings.TrimSpace(tv.str("face_dimension")); fd != "" {
		switch fd {
		case cv.dims[0]:
		case cv.dims[1]:
			faceAxis = 1
		default:
			return true, errf(path, tv.name, "face_dimension %q is neither dimension of %s %v", fd, cv.name, cv.dims)
		}
	}
	mi.faceDim = cv.dims[faceAxis]
	if !typeIsInt(cv.typ) {
		return true, errf(path, cv.name, "face_node_connectivity is stored as %s; UGRID indices are integers: store them as an integer type", typeName(cv.typ))
	}
	start := 0.0
	if si := cv.attr("start_index"); si.present {
		if len(si.nums) != 1 || (si.nums[0] != 0 && si.nums[0] != 1) {
			return true, errf(path, cv.name, "start_index is %v; UGRID 1.0 allows 0 or 1 (the index of the first node)", si.nums)
		}
		start = si.nums[0]
	}
	var fills []float64
	if fv := cv.nums("_FillValue"); len(fv) > 0 {
		fills = fv
	} else if df := defaultFill(cv.typ); !math.IsNaN(df) {
		fills = []float64{df}
	}
	raw, err := cv.readAll(path)
	if err != nil {
		return true, err
	}
	nf, per := int(cv.shape[faceAxis]), int(cv.shape[1-faceAxis])
	if per < 3 {
		return true, errf(path, cv.name, "face_node_connectivity has %d nodes per face; a face needs at least 3", per)
	}
	nn := len(m.NodeLon)
	m.FaceOff = make([]int32, 1, nf+1)
	for f := 0; f < nf; f++ {
		ended := -1
		for k := 0; k < per; k++ {
			x := raw[f*per+k]
			if faceAxis == 1 {
				x = raw[k*nf+f]
			}
			isFill := false
			for _, fv := range fills {
				isFill = isFill || x == fv
			}
			if isFill {
				if ended < 0 {
					ended = k
				}
				continue
			}
			if ended >= 0 {
				return true, errf(path, cv.name, "face %d has a node after a fill value (position %d after the fill at %d); fill values may only end a face's list", f, k, ended)
			}
			idx := x - start
			if idx != math.Trunc(idx) || idx < 0 || idx >= float64(nn) {
				hint := ""
				switch {
				case idx == float64(nn) && start == 0:
					hint = "; the indices seem to count from 1: set start_index = 1"
				case idx == -1 && start == 1:
					hint = "; the indices seem to count from 0: set start_index = 0"
				}
				return true, errf(path, cv.name, "face %d, node %d is %v, outside the %d nodes of dimension %q (start_index %v, valid %v..%v)%s", f, k, x, nn, mi.nodeDim, start, start, start+float64(nn)-1, hint)
			}
			m.FaceNode = append(m.FaceNode, int32(idx))
		}
		if got := len(m.FaceNode) - int(m.FaceOff[f]); got < 3 {
			return true, errf(path, cv.name, "face %d has %d nodes; a face needs at least 3", f, got)
		}
		m.FaceOff = append(m.FaceOff, int32(len(m.FaceNode)))
	}
	// Where the data are.
	if mi.location, err = s.meshLocation(mi, timeDim); err != nil {
		return true, err
	}
	m.Location = mi.location
	var flon, flat []float64
	if mi.location == grid.OnFaces && strings.TrimSpace(tv.str("face_coordinates")) != "" {
		fx, fy, err := s.lonLatPair(tv, "face_coordinates", false)
		if err != nil {
			return true, err
		}
		if len(fx.dims) != 1 || fx.dims[0] != mi.faceDim || len(fy.dims) != 1 || fy.dims[0] != mi.faceDim {
			return true, errf(path, fx.name+"/"+fy.name, "face coordinates of dimensions %v and %v; they must be on the face dimension %q", fx.dims, fy.dims, mi.faceDim)
		}
		if flon, err = s.finiteCoords(fx); err != nil {
			return true, err
		}
		if flat, err = s.finiteCoords(fy); err != nil {
			return true, err
		}
	}
	g, err := grid.NewMesh(m, flon, flat)
	if err != nil {
		return true, errf(path, cv.name, "%v", err)
	}
	s.grid, s.mesh = g, mi
	s.gridDim = map[string]axis{mi.dim(): axP}
	s.invX, s.invY = invert(g.XFile), invert(g.YFile)
	s.info.xFile, s.info.yFile = g.XFile, g.YFile
	return true, nil
}

// lonLatPair finds the longitude and latitude among the variables named by
// attribute attr of the topology variable.
func (s *scan) lonLatPair(tv *ncVar, attr string, required bool) (lon, lat *ncVar, err error) {
	names := strings.Fields(tv.str(attr))
	if len(names) == 0 {
		return nil, nil, errf(s.f.path, tv.name, "no %s attribute; UGRID 1.0 requires the node coordinates", attr)
	}
	for _, n := range names {
		v := s.f.find(n)
		if v == nil {
			return nil, nil, errf(s.f.path, tv.name, "%s names %q, which is not a variable of the file", attr, n)
		}
		sn, u := v.str("standard_name"), strings.ToLower(v.str("units"))
		switch {
		case sn == "longitude" || sn == "" && strings.HasPrefix(u, "degrees_east"):
			lon = v
		case sn == "latitude" || sn == "" && strings.HasPrefix(u, "degrees_north"):
			lat = v
		}
	}
	if lon == nil || lat == nil {
		return nil, nil, errf(s.f.path, tv.name, "%s %v are not longitude and latitude (standard_name longitude/latitude or units degrees_east/degrees_north); swellgrid reads meshes in lon/lat: add those attributes, or reproject the mesh", attr, names)
	}
	return lon, lat, nil
}

// finiteCoords reads a coordinate variable, refusing non-finite values.
func (s *scan) finiteCoords(v *ncVar) ([]float64, error) {
	vals, err := v.readAll(s.f.path)
	if err != nil {
		return nil, err
	}
	for _, fv := range v.nums("_FillValue") {
		for i, x := range vals {
			if x == fv {
				return nil, errf(s.f.path, v.name, "value %d is the fill value %v; every mesh node or face needs a position", i, fv)
			}
		}
	}
	for i, x := range vals {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, errf(s.f.path, v.name, "value %d is %v; coordinates must be finite: give every mesh node or face a position", i, x)
		}
	}
	return vals, nil
}

// meshLocation is where the file's data are: the location attribute of
// the variables on the mesh (those with time first, else all of them;
// UGRID 1.0 "mesh" and "location" attributes). Data on nodes and on faces
// in one file are refused: the cells would be two different sets.
func (s *scan) meshLocation(mi *meshInfo, timeDim string) (string, error) {
	locs := map[string]string{} // location -> a variable there
	for pass := 0; pass < 2 && len(locs) == 0; pass++ {
		for i := range s.f.vars {
			v := &s.f.vars[i]
			if strings.TrimSpace(v.str("mesh")) != mi.topo {
				continue
			}
			if pass == 0 && (timeDim == "" || len(v.dims) == 0 || v.dims[0] != timeDim) {
				continue
			}
			loc := strings.TrimSpace(v.str("location"))
			if loc == "" {
				return "", errf(s.f.path, v.name, "has mesh = %q but no location attribute; say where the data are (location = \"node\" or \"face\", UGRID 1.0)", mi.topo)
			}
			if loc != grid.OnNodes && loc != grid.OnFaces {
				return "", errf(s.f.path, v.name, "location %q; swellgrid reads data on the mesh's nodes or faces", loc)
			}
			if _, ok := locs[loc]; !ok {
				locs[loc] = v.name
			}
		}
	}
	switch {
	case len(locs) == 2:
		return "", errf(s.f.path, locs[grid.OnFaces], "data on faces while %q is on nodes; the cells are the nodes or the faces: give all wave variables on one location", locs[grid.OnNodes])
	case locs[grid.OnFaces] != "":
		return grid.OnFaces, nil
	}
	return grid.OnNodes, nil
}

// checkMeshRole refuses a role variable that is on another location of the
// mesh than the cells (depth on nodes with wave data on faces).
func (s *scan) checkMeshRole(v *ncVar, r Role) error {
	mi := s.mesh
	if mi == nil {
		return nil
	}
	loc := strings.TrimSpace(v.str("location"))
	other := mi.nodeDim
	if mi.location == grid.OnNodes {
		other = mi.faceDim
	}
	onOther := loc != "" && loc != mi.location
	for _, d := range v.dims {
		onOther = onOther || d == other
	}
	if onOther {
		return errf(s.f.path, v.name, "role %s is on the mesh's %ss but the wave data (the cells) are on its %ss; give %s on the %ss too", r, map[bool]string{true: grid.OnNodes, false: grid.OnFaces}[mi.location == grid.OnFaces], mi.location, r, mi.location)
	}
	return nil
}
