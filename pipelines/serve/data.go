package serve

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export/contract"
	"swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/grid"
)

// layer is one map layer: a numeric column of cells.parquet.
type layer struct {
	Column string  `json:"column"`
	Doc    string  `json:"doc"`
	Unit   string  `json:"unit"`
	Label  string  `json:"unit_label"` // " (unit)", "" when dimensionless
	Int    bool    `json:"int"`
	Lo     float64 `json:"lo"` // the sea cells' range
	Hi     float64 `json:"hi"`
	Min    float64 `json:"min"` // the colour scale's (report.MapScale)
	Max    float64 `json:"max"`
	Valid  int     `json:"valid"`
}

type place struct {
	Name string  `json:"name"`
	Lon  float64 `json:"lon"`
	Lat  float64 `json:"lat"`
}

type contourFile struct {
	File  string `json:"file"`
	Label string `json:"label"`
	Bands bool   `json:"bands"`
}

type atlasDoc struct {
	Title     string         `json:"title"`
	Caution   string         `json:"caution"`
	Kind      string         `json:"grid_kind"`
	NX        int            `json:"nx"`
	NY        int            `json:"ny"`
	Cells     int            `json:"cells"`
	Outlines  bool           `json:"outlines"`
	Layers    []layer        `json:"layers"`
	Empty     []string       `json:"empty_columns"`
	Colours   []string       `json:"colours"`
	Land      string         `json:"land"`
	NoData    string         `json:"no_data"`
	Contours  []contourFile  `json:"contours"`
	Sites     []place        `json:"sites"`
	Stations  []place        `json:"stations"`
	Extent    [4]float64     `json:"extent"`
	Synthetic string         `json:"synthetic,omitempty"`
	Columns   map[string]int `json:"-"`
}

// notLayers are numeric columns of cells.parquet that are not mapped: the
// cell's id and position.
var notLayers = map[string]bool{contract.ColCellID: true, contract.ColLon: true, contract.ColLat: true}

// prepare makes the map's data, once: atlas.json (the layers with their
// colour scales, the contour files, sites, stations), the cells' centres
// (centres.bin: lon then lat, float64 little-endian, lon in the run's
// continuous frame), the land mask (land.bin: a byte per cell) and the
// cells' outlines (outlines.bin, see outlinesBin) on a structured grid (as
// the report draws them) or a mesh (its faces, or its nodes' median dual
// cells: rundir.Mesh.CellOutlines, as atlas.gpkg's footprints).
func (s *Server) prepare() error {
	r := s.run
	m := r.Manifest
	d := atlasDoc{Title: "Wave-energy resource atlas", Caution: m.Caution, Kind: m.Grid.Kind.String(), NX: r.NX, NY: r.NY, Cells: r.Cells.Rows,
		Synthetic: r.Cells.Meta["swellgrid:synthetic"], Sites: []place{}, Stations: []place{}, Contours: []contourFile{}, Empty: []string{}}
	first := true
	for _, c := range r.Cells.Columns {
		if !c.Numeric() || notLayers[c.Name] {
			continue
		}
		lo, hi, n := math.Inf(1), math.Inf(-1), 0
		for i := 0; i < r.Cells.Rows; i++ {
			v := c.Value(i)
			if r.Land[i] || math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			lo, hi, n = math.Min(lo, v), math.Max(hi, v), n+1
		}
		if n == 0 {
			d.Empty = append(d.Empty, c.Name)
			continue
		}
		sc := report.MapScale(lo, hi)
		if first {
			d.Colours, d.Land, d.NoData, first = sc.Colours, sc.Land, sc.NoData, false
		}
		d.Layers = append(d.Layers, layer{Column: c.Name, Doc: c.Doc, Unit: c.Unit, Label: report.UnitLabel(c.Unit), Int: c.Kind == rundir.Int,
			Lo: lo, Hi: hi, Min: sc.Min, Max: sc.Max, Valid: n})
	}
	if len(d.Layers) == 0 {
		return fmt.Errorf("serve: %s: no numeric column of cells.parquet has a value on a sea cell; nothing to map", r.Dir)
	}
	// the report's first map first: mean power
	sort.SliceStable(d.Layers, func(i, j int) bool {
		return d.Layers[i].Column == contract.ColPowerMean && d.Layers[j].Column != contract.ColPowerMean
	})
	for _, o := range m.Outputs {
		rel := filepath.ToSlash(o)
		if !strings.HasPrefix(rel, contract.ContourDir+"/") || !strings.HasSuffix(rel, ".geojson") {
			continue
		}
		base := strings.TrimSuffix(strings.TrimPrefix(rel, contract.ContourDir+"/"), ".geojson")
		bands := strings.HasSuffix(base, ".bands")
		label := strings.TrimSuffix(base, ".bands")
		if bands {
			label += " (bands)"
		} else {
			label += " (isolines)"
		}
		d.Contours = append(d.Contours, contourFile{File: "run/" + rel, Label: label, Bands: bands})
	}
	sort.Slice(d.Contours, func(i, j int) bool { return d.Contours[i].File < d.Contours[j].File })
	for _, st := range m.Parameters.Sites {
		d.Sites = append(d.Sites, place{Name: st.Name, Lon: st.Lon, Lat: st.Lat})
	}
	if b, err := s.root.ReadFile(contract.ValidationFile); err == nil {
		var sum contract.ValidationSummary
		if err := json.Unmarshal(b, &sum); err != nil {
			return fmt.Errorf("serve: %s: %w; run swellgrid validate again", filepath.Join(r.Dir, contract.ValidationFile), err)
		}
		for _, st := range sum.Stations {
			d.Stations = append(d.Stations, place{Name: st.Name, Lon: st.Lon, Lat: st.Lat})
		}
	} else if !os.IsNotExist(err) {
		return fmt.Errorf("serve: %w", err)
	}
	lon, lat := r.FrameLon(), r.Lat()
	d.Extent = [4]float64{math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)}
	for i := range lon {
		if math.IsNaN(lon[i]) || math.IsNaN(lat[i]) {
			continue
		}
		d.Extent = [4]float64{math.Min(d.Extent[0], lon[i]), math.Min(d.Extent[1], lat[i]), math.Max(d.Extent[2], lon[i]), math.Max(d.Extent[3], lat[i])}
	}
	s.bins = map[string][]byte{}
	var cb bytes.Buffer
	binary.Write(&cb, binary.LittleEndian, lon)
	binary.Write(&cb, binary.LittleEndian, lat)
	s.bins["centres.bin"] = cb.Bytes()
	land := make([]byte, r.Cells.Rows)
	for i, l := range r.Land {
		if l {
			land[i] = 1
		}
	}
	s.bins["land.bin"] = land
	if out := s.outlines(); out != nil {
		d.Outlines = true
		s.bins["outlines.bin"] = outlinesBin(out)
	}
	b, err := json.Marshal(d)
	if err != nil {
		return fmt.Errorf("serve: %w", err)
	}
	s.atlas = b
	var ib bytes.Buffer
	if err := indexPage.Execute(&ib, struct {
		Title, Dir, Caution, Synthetic string
	}{d.Title, r.Dir, m.Caution, d.Synthetic}); err != nil {
		return fmt.Errorf("serve: %w", err)
	}
	s.index = ib.Bytes()
	return nil
}

// layerBin is the values of the mapped column name, float64 little-endian
// per cell (NaN for null); false if name is not a layer.
func (s *Server) layerBin(name string) ([]byte, bool) {
	c := s.run.Cells.Col(name)
	if c == nil || !c.Numeric() || notLayers[name] {
		return nil, false
	}
	v := make([]float64, s.run.Cells.Rows)
	for i := range v {
		v[i] = c.Value(i)
	}
	var b bytes.Buffer
	binary.Write(&b, binary.LittleEndian, v)
	return b.Bytes(), true
}

// jsonNum is x for JSON (null when not finite).
func jsonNum(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "null"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// outlines returns each cell's outline in the run's continuous longitude
// frame (corners without the closing repeat; nil where a cell has none):
// a structured grid's as the report draws them, a mesh's faces or median
// dual cells; nil for a point set.
func (s *Server) outlines() [][][2]float64 {
	r := s.run
	if out := report.CellOutlines(r); out != nil {
		return out
	}
	if r.GridKind != grid.MeshKind || r.Mesh == nil {
		return nil
	}
	frame := r.FrameLon()
	out := make([][][2]float64, r.Cells.Rows)
	for c, ring := range r.Mesh.CellOutlines(r.Cells.Rows) {
		if len(ring) > 1 && ring[0] == ring[len(ring)-1] {
			ring = ring[:len(ring)-1]
		}
		if len(ring) < 3 || c >= len(frame) || math.IsNaN(frame[c]) {
			continue
		}
		p := make([][2]float64, len(ring))
		prev := frame[c]
		for k, q := range ring {
			// each corner within half a turn of the one before (the first
			// of the cell's centre): the ring stays whole in the frame
			lon := q[0] + 360*math.Round((prev-q[0])/360)
			p[k], prev = [2]float64{lon, q[1]}, lon
		}
		out[c] = p
	}
	return out
}

// outlinesBin encodes outlines for the page: n+1 uint32 offsets (cell i
// has corners off[i] to off[i+1]-1; none for a cell without an outline),
// then the corners as (lon, lat) float32 pairs, little-endian.
func outlinesBin(out [][][2]float64) []byte {
	off := make([]uint32, 1, len(out)+1)
	var xy []float32
	for _, p := range out {
		for _, q := range p {
			xy = append(xy, float32(q[0]), float32(q[1]))
		}
		off = append(off, uint32(len(xy)/2))
	}
	var b bytes.Buffer
	binary.Write(&b, binary.LittleEndian, off)
	binary.Write(&b, binary.LittleEndian, xy)
	return b.Bytes()
}
