package runspec

// The [screening] section of the run spec: constraint layers and named
// scenarios, and the reading and validation of the layers' files.

import (
	"bytes"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"
	"github.com/paulmach/orb/geojson"
	_ "modernc.org/sqlite"

	"swellgrid/export/contract"
	"swellgrid/grid"
	"swellgrid/pipelines/fault"
	"swellgrid/stats/delivery"
)

// ScreeningSpec is the [screening] section: layers, then scenarios using
// them.
type ScreeningSpec struct {
	Layers    []ScreenLayerSpec `toml:"layer" json:"layers"`
	Scenarios []ScenarioSpec    `toml:"scenario" json:"scenarios"`
}

// ScreenLayerSpec is a constraint layer: a GeoJSON file (RFC 7946,
// FeatureCollection or Feature) or a GeoPackage feature table, in WGS 84.
type ScreenLayerSpec struct {
	Name string `toml:"name" json:"name"`
	File string `toml:"file" json:"file"`
	// Table is the GeoPackage feature table ("": the file's only one).
	Table string `toml:"table" json:"table,omitempty"`
}

// ScenarioSpec is one named screening scenario. A cell passes when it is a
// sea cell, meets every criterion, lies in no Exclude polygon and in every
// Within layer, and keeps every distance rule.
type ScenarioSpec struct {
	Name string `toml:"name" json:"name"`
	// Criteria on cells.parquet columns: "COLUMN >= X", "<= X", "> X",
	// "< X", or "COLUMN between A and B" (A <= value <= B). A missing value
	// fails the criterion.
	Criteria []string       `toml:"criteria" json:"criteria"`
	Exclude  []string       `toml:"exclude" json:"exclude,omitempty"` // polygon layers a cell's centre must not lie in
	Within   []string       `toml:"within" json:"within,omitempty"`   // polygon layers a cell's centre must lie in (each)
	Distance []DistanceRule `toml:"distance" json:"distance,omitempty"`
	// Device whose aep_<device>_mwh gives the layout's annual energy, at
	// DevicesPerKm2 devices per km2 of passing area ("": no layout energy).
	Device        string  `toml:"device" json:"device,omitempty"`
	DevicesPerKm2 float64 `toml:"devices_per_km2" json:"devices_per_km2,omitempty"`
	// SpacingAlongM and SpacingAcrossM (m, along and across the mean wave
	// direction) give the density instead: 1e6 / (along x across) devices
	// per km2 (stats/delivery.DevicesPerKm2).
	SpacingAlongM  float64 `toml:"spacing_along_m" json:"spacing_along_m,omitempty"`
	SpacingAcrossM float64 `toml:"spacing_across_m" json:"spacing_across_m,omitempty"`
	// SpacingAlongWidths and SpacingAcrossWidths give the spacings in
	// multiples of the device's width_m instead (DensityOf).
	SpacingAlongWidths  float64 `toml:"spacing_along_widths" json:"spacing_along_widths,omitempty"`
	SpacingAcrossWidths float64 `toml:"spacing_across_widths" json:"spacing_across_widths,omitempty"`

	// Energy delivered ashore (issue 32; with device). ArrayFactor is the
	// array interaction (0: the default 1, recorded as an assumption).
	// Connection names a layer of grid connection points or lines: the
	// export route is the geodesic distance to its nearest feature times
	// RouteFactor (0: defaultRouteFactor); Export "ac" (default) or "dc"
	// chooses the loss defaults (stats/delivery.DefaultAC, DefaultDC),
	// which LossFixed and LossPerKm replace when given.
	ArrayFactor float64  `toml:"array_factor" json:"array_factor,omitempty"`
	Connection  string   `toml:"connection" json:"connection,omitempty"`
	RouteFactor float64  `toml:"route_factor" json:"route_factor,omitempty"`
	Export      string   `toml:"export" json:"export,omitempty"`
	LossFixed   *float64 `toml:"loss_fixed" json:"loss_fixed,omitempty"`
	LossPerKm   *float64 `toml:"loss_per_km" json:"loss_per_km,omitempty"`

	// Levelised cost (optional; all five, with connection): capital cost
	// per MW installed, export cable cost per km of route, operating cost
	// per MW-year, discount rate (0.08 is 8 %) and lifetime in years.
	// Currency as the user's; the figures are screening figures from stated
	// assumptions, not investment advice.
	CapexPerMW   float64 `toml:"capex_per_mw" json:"capex_per_mw,omitempty"`
	CablePerKm   float64 `toml:"cable_per_km" json:"cable_per_km,omitempty"`
	OpexPerMWYr  float64 `toml:"opex_per_mw_yr" json:"opex_per_mw_yr,omitempty"`
	DiscountRate float64 `toml:"discount_rate" json:"discount_rate,omitempty"`
	LifetimeY    int     `toml:"lifetime_y" json:"lifetime_y,omitempty"`
}

// defaultRouteFactor is the export route's length over the geodesic
// distance when the spec gives none: 1.1 (common practice for screening;
// from memory).
const defaultRouteFactor = 1.1

// Density returns the scenario's devices per km2 (devices_per_km2, or
// from the spacings).
func (c ScenarioSpec) Density() float64 {
	if c.DevicesPerKm2 > 0 {
		return c.DevicesPerKm2
	}
	if c.SpacingAlongM > 0 && c.SpacingAcrossM > 0 {
		return delivery.DevicesPerKm2(c.SpacingAlongM, c.SpacingAcrossM)
	}
	return 0
}

// DensityOf returns the scenario's devices per km2 for a device of width
// widthM (m): from the spacings in widths when given (spacing along x
// widthM by spacing across x widthM, stats/delivery.DevicesPerKm2; NaN
// without a positive width), else Density.
func (c ScenarioSpec) DensityOf(widthM float64) float64 {
	if c.SpacingAlongWidths > 0 && c.SpacingAcrossWidths > 0 {
		if !(widthM > 0) {
			return math.NaN()
		}
		return delivery.DevicesPerKm2(c.SpacingAlongWidths*widthM, c.SpacingAcrossWidths*widthM)
	}
	return c.Density()
}

// Array returns the scenario's array factor (1 when not given).
func (c ScenarioSpec) Array() float64 {
	if c.ArrayFactor > 0 {
		return c.ArrayFactor
	}
	return 1
}

// Route returns the scenario's route factor.
func (c ScenarioSpec) Route() float64 {
	if c.RouteFactor > 0 {
		return c.RouteFactor
	}
	return defaultRouteFactor
}

// Losses returns the scenario's export loss model: the AC or DC default,
// with loss_fixed and loss_per_km in its place when given.
func (c ScenarioSpec) Losses() delivery.LossModel {
	m := delivery.DefaultAC
	if c.Export == "dc" {
		m = delivery.DefaultDC
	}
	if c.LossFixed != nil {
		m.Fixed = *c.LossFixed
	}
	if c.LossPerKm != nil {
		m.PerKm = *c.LossPerKm
	}
	return m
}

// HasCost reports whether the scenario gives the levelised-cost inputs.
func (c ScenarioSpec) HasCost() bool { return c.LifetimeY > 0 }

// DistanceRule bounds the geodesic distance from a cell's centre to the
// nearest feature of a layer: at least MinKm, at most MaxKm (0: no bound).
type DistanceRule = contract.DistanceRule

// ScreenLayer is a layer read and validated: its geometries and checksum.
type ScreenLayer struct {
	ScreenLayerSpec
	SHA256   string
	Geoms    []orb.Geometry
	polygons bool // every geometry is a (multi)polygon
}

var screenName = regexp.MustCompile(`^[a-z][a-z0-9_]{0,39}$`)

const maxLayerBytes = 256 << 20

// Criterion is a parsed screening criterion ("COLUMN >= X", "COLUMN between A and B").
type Criterion struct {
	Text   string
	Column string
	op     string // >=, <=, >, <, between
	a, b   float64
}

var critRe = regexp.MustCompile(`^\s*([a-z][a-z0-9_]*)\s*(>=|<=|>|<)\s*(\S+)\s*$`)
var betweenRe = regexp.MustCompile(`^\s*([a-z][a-z0-9_]*)\s+between\s+(\S+)\s+and\s+(\S+)\s*$`)

func ParseCriterion(s string) (Criterion, error) {
	num := func(t string) (float64, error) {
		v, err := strconv.ParseFloat(t, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("%q is not a finite number", t)
		}
		return v, nil
	}
	if m := betweenRe.FindStringSubmatch(s); m != nil {
		a, err := num(m[2])
		if err != nil {
			return Criterion{}, err
		}
		b, err := num(m[3])
		if err != nil {
			return Criterion{}, err
		}
		if a > b {
			return Criterion{}, fmt.Errorf("between %g and %g: the first bound must not exceed the second", a, b)
		}
		return Criterion{Text: fmt.Sprintf("%s between %g and %g", m[1], a, b), Column: m[1], op: "between", a: a, b: b}, nil
	}
	if m := critRe.FindStringSubmatch(s); m != nil {
		a, err := num(m[3])
		if err != nil {
			return Criterion{}, err
		}
		return Criterion{Text: fmt.Sprintf("%s %s %g", m[1], m[2], a), Column: m[1], op: m[2], a: a}, nil
	}
	return Criterion{}, fmt.Errorf(`not a criterion; write "COLUMN >= X" (or <=, >, <) or "COLUMN between A and B"`)
}

// Holds reports whether v meets the criterion; a missing value (NaN) never does.
func (c Criterion) Holds(v float64) bool {
	if math.IsNaN(v) {
		return false
	}
	switch c.op {
	case ">=":
		return v >= c.a
	case "<=":
		return v <= c.a
	case ">":
		return v > c.a
	case "<":
		return v < c.a
	}
	return v >= c.a && v <= c.b
}

// checkScreening checks the [screening] section (names, criteria,
// references between scenarios and layers) without reading a file;
// devices, when not nil, are the device names the run has. The layer files
// are read, and the layers that exclude and within name checked to hold
// polygons, by readScreenLayers.
func (s *Spec) checkScreening(devices map[string]bool) error {
	sc := s.Screening
	if sc == nil {
		return nil
	}
	if len(sc.Scenarios) == 0 {
		return fmt.Errorf("spec: [screening] has no [[screening.scenario]]; give at least one, or remove the section")
	}
	if err := withinLimit("screening.layer", len(sc.Layers)); err != nil {
		return err
	}
	if err := withinLimit("screening.scenario", len(sc.Scenarios)); err != nil {
		return err
	}
	byName := map[string]bool{}
	for i, l := range sc.Layers {
		key := fmt.Sprintf("screening.layer[%d]", i)
		if !screenName.MatchString(l.Name) {
			return fmt.Errorf("spec: %s.name = %q: must be lower-case letters, digits and _, starting with a letter, at most 40 characters (it names columns)", key, l.Name)
		}
		if byName[l.Name] {
			return fmt.Errorf("spec: %s.name = %q appears twice", key, l.Name)
		}
		if l.File == "" {
			return fmt.Errorf("spec: %s.file is empty; give a GeoJSON or GeoPackage file in WGS 84", key)
		}
		byName[l.Name] = true
	}
	seen := map[string]bool{}
	for i, c := range sc.Scenarios {
		key := fmt.Sprintf("screening.scenario[%d]", i)
		if !screenName.MatchString(c.Name) {
			return fmt.Errorf("spec: %s.name = %q: must be lower-case letters, digits and _, starting with a letter, at most 40 characters (it names files)", key, c.Name)
		}
		if seen[c.Name] {
			return fmt.Errorf("spec: %s.name = %q appears twice", key, c.Name)
		}
		seen[c.Name] = true
		for _, l := range []struct {
			k string
			n int
		}{{".criteria", len(c.Criteria)}, {".exclude", len(c.Exclude)}, {".within", len(c.Within)}, {".distance", len(c.Distance)}} {
			if err := withinLimit(key+l.k, l.n); err != nil {
				return err
			}
		}
		for k, t := range c.Criteria {
			if _, err := ParseCriterion(t); err != nil {
				return fmt.Errorf("spec: %s.criteria[%d] = %q: %w", key, k, t, err)
			}
		}
		for _, ref := range []struct {
			what  string
			names []string
		}{{"exclude", c.Exclude}, {"within", c.Within}} {
			for _, n := range ref.names {
				if !byName[n] {
					return fmt.Errorf("spec: %s.%s names layer %q, which no [[screening.layer]] defines", key, ref.what, n)
				}
			}
		}
		for k, d := range c.Distance {
			dk := fmt.Sprintf("%s.distance[%d]", key, k)
			if !byName[d.Layer] {
				return fmt.Errorf("spec: %s.layer = %q: no [[screening.layer]] of that name", dk, d.Layer)
			}
			if !(d.MinKm >= 0) || !(d.MaxKm >= 0) || math.IsInf(d.MinKm, 0) || math.IsInf(d.MaxKm, 0) || (d.MinKm == 0 && d.MaxKm == 0) || (d.MaxKm > 0 && d.MaxKm < d.MinKm) {
				return fmt.Errorf("spec: %s: min_km = %v, max_km = %v: give min_km and/or max_km, positive distances in km with min_km <= max_km", dk, d.MinKm, d.MaxKm)
			}
		}
		spaced := c.SpacingAlongM != 0 || c.SpacingAcrossM != 0
		widths := c.SpacingAlongWidths != 0 || c.SpacingAcrossWidths != 0
		if c.Device != "" {
			if devices != nil && !devices[c.Device] {
				return fmt.Errorf("spec: %s.device = %q is not a [[device]] of the run", key, c.Device)
			}
			switch {
			case widths && (spaced || c.DevicesPerKm2 != 0):
				return fmt.Errorf("spec: %s: give one of devices_per_km2, spacing_along_m and spacing_across_m, or spacing_along_widths and spacing_across_widths", key)
			case widths:
				if !(c.SpacingAlongWidths > 0 && c.SpacingAcrossWidths > 0) || math.IsInf(c.SpacingAlongWidths, 0) || math.IsInf(c.SpacingAcrossWidths, 0) {
					return fmt.Errorf("spec: %s: spacing_along_widths = %v, spacing_across_widths = %v: give both, positive multiples of the device's width_m", key, c.SpacingAlongWidths, c.SpacingAcrossWidths)
				}
				for _, d := range s.Devices {
					if d.Name == c.Device && !(d.WidthM > 0 && !math.IsInf(d.WidthM, 0)) {
						return fmt.Errorf("spec: %s: spacing in widths needs the [[device]] %s's width_m (m, > 0), got %v", key, d.Name, d.WidthM)
					}
				}
			case spaced && c.DevicesPerKm2 != 0:
				return fmt.Errorf("spec: %s: give devices_per_km2 or spacing_along_m and spacing_across_m, not both", key)
			case spaced:
				if !(c.SpacingAlongM > 0 && c.SpacingAcrossM > 0) || math.IsInf(c.SpacingAlongM, 0) || math.IsInf(c.SpacingAcrossM, 0) {
					return fmt.Errorf("spec: %s: spacing_along_m = %v, spacing_across_m = %v: give both, positive distances between devices in m", key, c.SpacingAlongM, c.SpacingAcrossM)
				}
			case !(c.DevicesPerKm2 > 0) || math.IsInf(c.DevicesPerKm2, 0):
				return fmt.Errorf("spec: %s.devices_per_km2 = %v: give the layout density, devices per km2 (> 0), or spacing_along_m and spacing_across_m, with device", key, c.DevicesPerKm2)
			}
		} else if c.DevicesPerKm2 != 0 || spaced || widths {
			return fmt.Errorf("spec: %s.devices_per_km2 (or a spacing) is set without device; name the [[device]] whose AEP the layout uses", key)
		}
		if err := c.checkDelivery(key, byName); err != nil {
			return err
		}
	}
	return nil
}

// readScreenLayers reads, checks and hashes every layer file of the checked
// [screening] section (checkScreening), in order, with the layers' entries
// among the spec's named files; a layer that a scenario's exclude or within
// names must hold polygons only.
func (s *Spec) readScreenLayers() ([]*ScreenLayer, []NamedFile, error) {
	sc := s.Screening
	if sc == nil {
		return nil, nil, nil
	}
	var layers []*ScreenLayer
	var named []NamedFile
	byName := map[string]*ScreenLayer{}
	for i, l := range sc.Layers {
		key := fmt.Sprintf("screening.layer[%d]", i)
		sl, err := readScreenLayer(l)
		if err != nil {
			return nil, nil, fileErr(key+".file", l.File, err)
		}
		byName[l.Name] = sl
		layers = append(layers, sl)
		named = append(named, NamedFile{Key: key + ".file", Path: l.File, SHA256: sl.SHA256})
	}
	for i, c := range sc.Scenarios {
		key := fmt.Sprintf("screening.scenario[%d]", i)
		for _, ref := range []struct {
			what  string
			names []string
		}{{"exclude", c.Exclude}, {"within", c.Within}} {
			for _, n := range ref.names {
				if l := byName[n]; !l.polygons {
					return nil, nil, fmt.Errorf("spec: %s.%s: layer %q (%s) holds geometries other than polygons; %s takes polygon layers (measure distances to lines and points with distance)", key, ref.what, n, l.File, ref.what)
				}
			}
		}
	}
	return layers, named, nil
}

// readScreenLayer reads, checks and hashes one layer file.
func readScreenLayer(l ScreenLayerSpec) (*ScreenLayer, error) {
	b, err := readBounded(l.File, maxLayerBytes)
	if err != nil {
		return nil, err
	}
	h := sha256.Sum256(b)
	sl := &ScreenLayer{ScreenLayerSpec: l, SHA256: hex.EncodeToString(h[:])}
	switch {
	case bytes.HasPrefix(b, []byte("SQLite format 3\x00")):
		sl.Geoms, err = readGeoPackageLayer(l.File, l.Table)
	default:
		if l.Table != "" {
			return nil, fmt.Errorf("table = %q is for GeoPackage files; this is not one (GeoJSON?)", l.Table)
		}
		sl.Geoms, err = readGeoJSONLayer(b)
	}
	if err != nil {
		return nil, err
	}
	if len(sl.Geoms) == 0 {
		return nil, fmt.Errorf("the layer has no features")
	}
	sl.polygons = true
	for k, g := range sl.Geoms {
		if err := checkGeometry(g); err != nil {
			return nil, fmt.Errorf("feature %d: %w", k, err)
		}
		switch g.(type) {
		case orb.Polygon, orb.MultiPolygon:
		default:
			sl.polygons = false
		}
	}
	return sl, nil
}

func checkGeometry(g orb.Geometry) error {
	switch g := g.(type) {
	case orb.Point:
		return grid.CheckPosition(g)
	case orb.MultiPoint:
		for _, p := range g {
			if err := grid.CheckPosition(p); err != nil {
				return err
			}
		}
	case orb.LineString:
		return grid.CheckLine(g)
	case orb.MultiLineString:
		for _, l := range g {
			if err := grid.CheckLine(l); err != nil {
				return err
			}
		}
	case orb.Polygon:
		return grid.CheckPolygon(g)
	case orb.MultiPolygon:
		for k, p := range g {
			if err := grid.CheckPolygon(p); err != nil {
				return fmt.Errorf("polygon %d: %w", k, err)
			}
		}
	case nil:
		return fmt.Errorf("no geometry (null); give every feature a geometry")
	default:
		return fmt.Errorf("geometry type %s is not supported; use Point, LineString, Polygon or their Multi forms", g.GeoJSONType())
	}
	return nil
}

// wgs84CRS reports whether a CRS name is WGS 84 longitude/latitude.
func wgs84CRS(name string) bool {
	n := strings.ToUpper(name)
	for _, ok := range []string{"CRS84", "EPSG::4326", "EPSG:4326"} {
		if strings.HasSuffix(n, ok) {
			return true
		}
	}
	return false
}

const reprojectHint = "reproject it to WGS 84 longitude/latitude (EPSG:4326), e.g. ogr2ogr -t_srs EPSG:4326 out.gpkg in.gpkg"

// readGeoJSONLayer reads a FeatureCollection or a Feature. RFC 7946 has no
// crs member: WGS 84 is implied; a legacy (2008) crs member naming anything
// else is refused.
func readGeoJSONLayer(b []byte) ([]orb.Geometry, error) {
	var head struct {
		Type string `json:"type"`
		CRS  *struct {
			Type       string `json:"type"`
			Properties struct {
				Name string `json:"name"`
			} `json:"properties"`
		} `json:"crs"`
	}
	if err := json.Unmarshal(b, &head); err != nil {
		return nil, fmt.Errorf("not GeoJSON (nor a GeoPackage): %w", err)
	}
	if head.CRS != nil && !wgs84CRS(head.CRS.Properties.Name) {
		return nil, fmt.Errorf("the layer's crs is %q, not WGS 84; %s", head.CRS.Properties.Name, strings.ReplaceAll(reprojectHint, ".gpkg", ".geojson"))
	}
	switch head.Type {
	case "FeatureCollection":
		fc, err := geojson.UnmarshalFeatureCollection(b)
		if err != nil {
			return nil, fmt.Errorf("not a valid GeoJSON FeatureCollection: %w", err)
		}
		var out []orb.Geometry
		for _, f := range fc.Features {
			out = append(out, f.Geometry)
		}
		return out, nil
	case "Feature":
		f, err := geojson.UnmarshalFeature(b)
		if err != nil {
			return nil, fmt.Errorf("not a valid GeoJSON Feature: %w", err)
		}
		return []orb.Geometry{f.Geometry}, nil
	}
	return nil, fmt.Errorf("GeoJSON of type %q; give a FeatureCollection or a Feature", head.Type)
}

// readGeoPackageLayer reads the geometries of a feature table of an OGC
// GeoPackage (12-128r18): its srs must be EPSG:4326 (or OGC CRS84); each
// blob is the GeoPackage binary header (2.1.3) followed by WKB.
func readGeoPackageLayer(path, table string) ([]orb.Geometry, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, err
	}
	db, err := sql.Open("sqlite", "file:"+abs+"?mode=ro")
	if err != nil {
		return nil, fmt.Errorf("cannot open the GeoPackage: %w", err)
	}
	defer db.Close()
	rows, err := db.Query(`SELECT c.table_name, g.column_name, g.srs_id, COALESCE(s.organization, ''), COALESCE(s.organization_coordsys_id, -1)
		FROM gpkg_contents c JOIN gpkg_geometry_columns g ON g.table_name = c.table_name
		LEFT JOIN gpkg_spatial_ref_sys s ON s.srs_id = g.srs_id WHERE c.data_type = 'features' ORDER BY c.table_name`)
	if err != nil {
		return nil, fmt.Errorf("not a GeoPackage with feature tables (gpkg_contents, gpkg_geometry_columns): %w", err)
	}
	type ft struct {
		name, col, org string
		srs, code      int64
	}
	var tables []ft
	for rows.Next() {
		var t ft
		if err := rows.Scan(&t.name, &t.col, &t.srs, &t.org, &t.code); err != nil {
			rows.Close()
			return nil, err
		}
		tables = append(tables, t)
	}
	rows.Close()
	var names []string
	var pick *ft
	for i := range tables {
		names = append(names, tables[i].name)
		if tables[i].name == table || (table == "" && len(tables) == 1) {
			pick = &tables[i]
		}
	}
	if pick == nil {
		if table == "" {
			return nil, fmt.Errorf("the GeoPackage has %d feature tables (%s); choose one with table = \"...\"", len(tables), strings.Join(names, ", "))
		}
		return nil, fmt.Errorf("the GeoPackage has no feature table %q (it has: %s)", table, strings.Join(names, ", "))
	}
	org := strings.ToUpper(pick.org)
	if !((org == "EPSG" && pick.code == 4326) || (org == "OGC" && pick.code == 84)) {
		return nil, fmt.Errorf("table %s is in srs_id %d (%s:%d), not WGS 84; %s", pick.name, pick.srs, pick.org, pick.code, reprojectHint)
	}
	q := fmt.Sprintf(`SELECT %s FROM %s ORDER BY rowid`, sqlQuote(pick.col), sqlQuote(pick.name))
	r, err := db.Query(q)
	if err != nil {
		return nil, fmt.Errorf("table %s: %w", pick.name, err)
	}
	defer r.Close()
	var out []orb.Geometry
	for n := 0; r.Next(); n++ {
		var blob []byte
		if err := r.Scan(&blob); err != nil {
			return nil, fmt.Errorf("table %s row %d: %w", pick.name, n, err)
		}
		g, err := decodeGPKGGeometry(blob)
		if err != nil {
			return nil, fmt.Errorf("table %s feature %d: %w", pick.name, n, err)
		}
		out = append(out, g)
	}
	return out, r.Err()
}

func sqlQuote(id string) string { return `"` + strings.ReplaceAll(id, `"`, `""`) + `"` }

// decodeGPKGGeometry decodes a GeoPackage binary geometry (OGC 12-128r18,
// 2.1.3): "GP", version, flags (bit 0 byte order of the header, bits 1-3
// envelope code: 0 none, 1 xy (32 bytes), 2 xyz, 3 xym (48), 4 xyzm (64),
// bit 4 empty, bit 5 extended), srs_id, envelope, then WKB.
func decodeGPKGGeometry(b []byte) (orb.Geometry, error) {
	if b == nil {
		return nil, nil
	}
	if len(b) < 8 || b[0] != 'G' || b[1] != 'P' {
		return nil, fmt.Errorf("not a GeoPackage geometry blob (no GP header)")
	}
	flags := b[3]
	if flags&(1<<5) != 0 {
		return nil, fmt.Errorf("extended GeoPackage geometry is not supported")
	}
	env := map[byte]int{0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags>>1)&7]
	if (flags>>1)&7 > 4 {
		return nil, fmt.Errorf("bad envelope code %d", (flags>>1)&7)
	}
	if len(b) < 8+env {
		return nil, fmt.Errorf("truncated geometry blob")
	}
	g, err := wkb.Unmarshal(b[8+env:])
	if err != nil {
		return nil, fmt.Errorf("WKB: %w", err)
	}
	return g, nil
}

// ScreeningLayer returns the layer read by Resolve under name.
func (r *Resolved) ScreeningLayer(name string) *ScreenLayer {
	for _, l := range r.Layers {
		if l.Name == name {
			return l
		}
	}
	return nil
}

// LoadScreeningSpec reads a spec for `swellgrid screen`: only its
// [screening] section counts (other sections are parsed, not used).
func LoadScreeningSpec(path string) (*Resolved, error) {
	s, err := LoadSpec(path)
	if err != nil {
		return nil, err
	}
	if s.Screening == nil {
		return nil, fault.Input(fmt.Errorf("spec %s: no [screening] section; add [[screening.scenario]] entries (see the README's screening section)", path))
	}
	if err := s.checkScreening(nil); err != nil {
		return nil, fault.Input(err)
	}
	layers, named, err := s.readScreenLayers()
	if err != nil {
		return nil, fault.Input(err)
	}
	return &Resolved{Spec: s, Named: named, Layers: layers}, nil
}

// DistanceLayers lists the layers of distance rules, in order of first use:
// the dist_<layer>_km columns of screening.parquet.
func (sc *ScreeningSpec) DistanceLayers() []string {
	var out []string
	seen := map[string]bool{}
	for _, c := range sc.Scenarios {
		for _, d := range c.Distance {
			if !seen[d.Layer] {
				seen[d.Layer] = true
				out = append(out, d.Layer)
			}
		}
	}
	return out
}

// CheckColumns refuses a criterion on a column the run does not write
// (names: the run's cells.parquet columns), before anything is computed.
func (sc *ScreeningSpec) CheckColumns(names map[string]string) error {
	if sc == nil {
		return nil
	}
	for i, c := range sc.Scenarios {
		for k, t := range c.Criteria {
			cr, err := ParseCriterion(t)
			if err != nil {
				return fmt.Errorf("spec: screening.scenario[%d].criteria[%d] = %q: %w", i, k, t, err)
			}
			if _, ok := names[cr.Column]; !ok {
				return fmt.Errorf("spec: screening.scenario[%d] (%s): criterion %q: %q is not a column of cells.parquet (see the README's column list)", i, c.Name, t, cr.Column)
			}
		}
	}
	return nil
}

// checkDelivery checks the scenario's delivered-energy and cost settings.
func (c ScenarioSpec) checkDelivery(key string, layers map[string]bool) error {
	set := c.ArrayFactor != 0 || c.Connection != "" || c.RouteFactor != 0 || c.Export != "" || c.LossFixed != nil || c.LossPerKm != nil
	cost := c.CapexPerMW != 0 || c.CablePerKm != 0 || c.OpexPerMWYr != 0 || c.DiscountRate != 0 || c.LifetimeY != 0
	if (set || cost) && c.Device == "" {
		return fmt.Errorf("spec: %s: delivered energy and cost settings need a device; name the [[device]] of the layout", key)
	}
	if c.ArrayFactor != 0 && !(c.ArrayFactor > 0 && c.ArrayFactor <= 2) {
		return fmt.Errorf("spec: %s.array_factor = %v: give the array interaction factor, > 0 and at most 2 (1: none)", key, c.ArrayFactor)
	}
	if c.Connection != "" && !layers[c.Connection] {
		return fmt.Errorf("spec: %s.connection = %q: no [[screening.layer]] of that name; give the layer of grid connection points or lines", key, c.Connection)
	}
	if c.RouteFactor != 0 && !(c.RouteFactor >= 1 && c.RouteFactor <= 5) {
		return fmt.Errorf("spec: %s.route_factor = %v: give the route length over the geodesic distance, 1 to 5", key, c.RouteFactor)
	}
	if c.Export != "" && c.Export != "ac" && c.Export != "dc" {
		return fmt.Errorf("spec: %s.export = %q: must be \"ac\" or \"dc\"", key, c.Export)
	}
	for _, v := range []struct {
		name string
		p    *float64
		max  float64
	}{{"loss_fixed", c.LossFixed, 1}, {"loss_per_km", c.LossPerKm, 0.01}} {
		if v.p != nil && !(*v.p >= 0 && *v.p < v.max) {
			return fmt.Errorf("spec: %s.%s = %v: give a share of the energy (0.01 is 1 %%), at least 0 and below %g", key, v.name, *v.p, v.max)
		}
	}
	if (set || cost) && c.Connection == "" {
		return fmt.Errorf("spec: %s: delivered energy needs connection, the layer of grid connection points or lines the export route runs to", key)
	}
	if cost {
		if !(c.CapexPerMW > 0) || !(c.CablePerKm >= 0) || !(c.OpexPerMWYr >= 0) || !(c.DiscountRate >= 0 && c.DiscountRate < 1) || c.LifetimeY < 1 || c.LifetimeY > 100 ||
			math.IsInf(c.CapexPerMW, 0) || math.IsInf(c.CablePerKm, 0) || math.IsInf(c.OpexPerMWYr, 0) {
			return fmt.Errorf("spec: %s: levelised cost: give capex_per_mw > 0, cable_per_km >= 0, opex_per_mw_yr >= 0, discount_rate in [0, 1) and lifetime_y 1 to 100 (got %v, %v, %v, %v, %d)",
				key, c.CapexPerMW, c.CablePerKm, c.OpexPerMWYr, c.DiscountRate, c.LifetimeY)
		}
	}
	return nil
}
