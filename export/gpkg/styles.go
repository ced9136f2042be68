package gpkg

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/color"
	"math"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export/contract"
	"swellgrid/export/report"
	"swellgrid/export/rundir"
)

// StylesTable is the table of default layer styles in atlas.gpkg. Its name
// and columns are those QGIS reads a GeoPackage layer's default style from
// (and writes with "Save as default"): styleQML is QGIS's own style format,
// styleSLD the same style in OGC Symbology Encoding 1.1 (OGC 05-077r4) inside
// a Styled Layer Descriptor 1.1 (OGC 05-078r4), for other clients. The table
// is listed in gpkg_contents as an attributes table (OGC 12-128r18, 2.4), as
// QGIS lists it.
const StylesTable = "layer_styles"

// style is one layer's default style.
type style struct {
	layer, qml, sld string
}

// fill is one class of a filled layer: a filter, its label and colour.
type fill struct {
	qgisFilter string // QGIS expression
	sldFilter  string // OGC Filter Encoding 1.1 fragment
	label      string
	c          color.NRGBA
}

// styles builds the default style of the bands and isolines of every
// contoured column, of the cells' footprints (coloured by the main column,
// contract.ColPowerMean, in the classes of its bands) and of the screening
// outlines. The colours are the report's (report.Viridis over the column's
// range on the sea cells, as the report's maps take it), a band coloured at
// its middle (an open band at its finite bound).
func styles(r *rundir.Run, layers []*Layer) []style {
	var out []style
	bandEdges := map[string][]float64{}
	for _, l := range layers {
		switch {
		case strings.HasPrefix(l.Name, "bands_"):
			col := strings.TrimPrefix(l.Name, "bands_")
			cm, ok := colScale(r, col)
			if !ok {
				continue
			}
			lo, hi := cm.Min(), cm.Max()
			unit := unitSuffix(l.Columns)
			lower, upper := colOf(l, "lower"), colOf(l, "upper")
			if lower == nil || upper == nil {
				continue
			}
			var fills []fill
			var keys [][2]float64
			seen := map[[2]float64]bool{}
			var edges []float64
			for i := range lower.Float {
				a, b := lower.Float[i], upper.Float[i]
				key := [2]float64{a, b}
				if seen[key] {
					continue
				}
				seen[key] = true
				keys = append(keys, key)
				mid := (a + b) / 2
				switch {
				case math.IsNaN(a) && math.IsNaN(b):
					mid = (lo + hi) / 2
				case math.IsNaN(a):
					mid = b
				case math.IsNaN(b):
					mid = a
				}
				fills = append(fills, fill{
					qgisFilter: nullOrEqual("lower", a),
					sldFilter:  sldNullOrEqual("lower", a),
					label:      bandLabel(a, b, unit),
					c:          colourAt(cm, mid, lo, hi),
				})
				for _, x := range []float64{a, b} {
					if !math.IsNaN(x) {
						edges = append(edges, x)
					}
				}
			}
			// classes from the lowest band up (the open lower band first)
			order := make([]int, len(fills))
			for i := range order {
				order[i] = i
			}
			sort.SliceStable(order, func(i, j int) bool { return below(keys[order[i]], keys[order[j]]) })
			sorted := make([]fill, len(fills))
			for i, k := range order {
				sorted[i] = fills[k]
			}
			fills = sorted
			bandEdges[col] = uniqueSorted(edges)
			out = append(out, style{l.Name, qmlFills(fills, "fill", false), sldFills(l.Name, fills, "Polygon")})
		case strings.HasPrefix(l.Name, "isolines_"):
			unit := unitSuffix(l.Columns)
			out = append(out, style{l.Name, qmlIsolines(unit), sldIsolines(l.Name, unit)})
		case strings.HasPrefix(l.Name, contract.ScreeningOutlinePrefix):
			f := fill{qgisFilter: "TRUE", label: "passing area", c: color.NRGBA{214, 39, 40, 90}}
			out = append(out, style{l.Name, qmlFills([]fill{f}, "fill", true), sldFills(l.Name, []fill{f}, "Polygon")})
		}
	}
	for _, l := range layers {
		if l.Name != FootprintLayer {
			continue
		}
		col := contract.ColPowerMean
		cm, ok := colScale(r, col)
		if !ok {
			continue
		}
		lo, hi := cm.Min(), cm.Max()
		edges := bandEdges[col]
		if len(edges) == 0 { // no bands of the column: six equal classes
			for k := 1; k < 6; k++ {
				edges = append(edges, lo+(hi-lo)*float64(k)/6)
			}
		}
		unit := ""
		if c := r.Cells.Col(col); c != nil {
			unit = unitText(c.Unit)
		}
		// classes [e_k, e_k+1) with open ends, as the bands
		bounds := append(append([]float64{math.NaN()}, edges...), math.NaN())
		var fills []fill
		for k := 0; k+1 < len(bounds); k++ {
			a, b := bounds[k], bounds[k+1]
			mid := (a + b) / 2
			if math.IsNaN(a) {
				mid = b
			} else if math.IsNaN(b) {
				mid = a
			}
			fills = append(fills, fill{
				qgisFilter: rangeFilter(col, a, b),
				sldFilter:  sldRange(col, a, b),
				label:      bandLabel(a, b, unit),
				c:          colourAt(cm, mid, lo, hi),
			})
		}
		out = append(out, style{l.Name, qmlFills(fills, "fill", false), sldFills(l.Name, fills, "Polygon")})
	}
	return out
}

// writeStyles creates the styles table and its rows.
func writeStyles(exec func(string, ...any) error, lastChange string, ss []style) error {
	if len(ss) == 0 {
		return nil
	}
	if err := exec(`CREATE TABLE "layer_styles" ("id" INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, "f_table_catalog" TEXT(256),
		"f_table_schema" TEXT(256), "f_table_name" TEXT(256), "f_geometry_column" TEXT(256), "styleName" TEXT(30), "styleQML" TEXT,
		"styleSLD" TEXT, "useAsDefault" BOOLEAN, "description" TEXT, "owner" TEXT(30), "ui" TEXT(30), "update_time" DATETIME)`); err != nil {
		return err
	}
	for _, s := range ss {
		if err := exec(`INSERT INTO layer_styles (f_table_catalog, f_table_schema, f_table_name, f_geometry_column, styleName, styleQML, styleSLD,
			useAsDefault, description, owner, ui, update_time) VALUES ('', '', ?, 'geom', ?, ?, ?, 1, ?, '', NULL, ?)`,
			s.layer, "swellgrid "+s.layer, s.qml, s.sld, "default style written by swellgrid (the report's colours)", lastChange); err != nil {
			return err
		}
	}
	return exec(`INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change) VALUES (?, 'attributes', ?, ?, ?)`,
		StylesTable, StylesTable, "default layer styles (QGIS styleQML, OGC SLD 1.1 styleSLD)", lastChange)
}

// colScale is the colour scale of col as the report's map of it takes it
// (report.MapColours over the range of its finite values on sea cells);
// ok is false when col has none.
func colScale(r *rundir.Run, col string) (*report.Viridis, bool) {
	c := r.Cells.Col(col)
	if c == nil && strings.HasPrefix(col, contract.LCOEPrefix) {
		c, _ = r.LCOEColumn(col) // a screening scenario's levelised cost; an unreadable one has no style
	}
	if c == nil || !c.Numeric() {
		return nil, false
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 0; i < r.Cells.Rows; i++ {
		if r.Land != nil && r.Land[i] {
			continue
		}
		v := c.Value(i)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if lo > hi {
		return nil, false
	}
	return report.MapColours(lo, hi), true
}

func colourAt(cm *report.Viridis, v, lo, hi float64) color.NRGBA {
	c, err := cm.At(math.Max(lo, math.Min(hi, v)))
	if err != nil {
		return color.NRGBA{160, 160, 160, 255}
	}
	return color.NRGBAModel.Convert(c).(color.NRGBA)
}

func colOf(l *Layer, name string) *rundir.Column {
	for _, c := range l.Columns {
		if c.Name == name {
			return c
		}
	}
	return nil
}

// unitSuffix is the unit of a layer's numeric fields for labels ("" when
// dimensionless).
func unitSuffix(cols []*rundir.Column) string {
	for _, c := range cols {
		if c.Kind == rundir.Float && c.Unit != "" {
			return unitText(c.Unit)
		}
	}
	return ""
}

// unitText is a unit for a label: none for a dimensionless "1".
func unitText(u string) string {
	if u == "1" {
		return ""
	}
	return u
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func bandLabel(a, b float64, unit string) string {
	sfx := ""
	if unit != "" {
		sfx = " " + unit
	}
	switch {
	case math.IsNaN(a) && math.IsNaN(b):
		return "all values" + sfx
	case math.IsNaN(a):
		return "below " + num(b) + sfx
	case math.IsNaN(b):
		return num(a) + sfx + " and above"
	}
	return num(a) + " to " + num(b) + sfx
}

// below orders bands [a, b) by their lower bound, an open (NaN) one first.
func below(x, y [2]float64) bool {
	if math.IsNaN(x[0]) != math.IsNaN(y[0]) {
		return math.IsNaN(x[0])
	}
	if x[0] != y[0] {
		return x[0] < y[0]
	}
	return x[1] < y[1]
}

func uniqueSorted(x []float64) []float64 {
	sort.Float64s(x)
	out := x[:0]
	for i, v := range x {
		if i == 0 || v != x[i-1] {
			out = append(out, v)
		}
	}
	return out
}

func qfield(name string) string { return `"` + strings.ReplaceAll(name, `"`, `""`) + `"` }

func nullOrEqual(field string, v float64) string {
	if math.IsNaN(v) {
		return qfield(field) + " IS NULL"
	}
	return qfield(field) + " = " + num(v)
}

func rangeFilter(field string, a, b float64) string {
	var parts []string
	if !math.IsNaN(a) {
		parts = append(parts, qfield(field)+" >= "+num(a))
	}
	if !math.IsNaN(b) {
		parts = append(parts, qfield(field)+" < "+num(b))
	}
	if len(parts) == 0 {
		return qfield(field) + " IS NOT NULL"
	}
	return strings.Join(parts, " AND ")
}

func esc(s string) string {
	var b bytes.Buffer
	xml.EscapeText(&b, []byte(s))
	return b.String()
}

func rgba(c color.NRGBA) string { return fmt.Sprintf("%d,%d,%d,%d", c.R, c.G, c.B, c.A) }
func hex(c color.NRGBA) string  { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

const qmlHead = `<!DOCTYPE qgis PUBLIC 'http://mrcc.com/qgis.dtd' 'SYSTEM'>
<qgis version="3.22.16" styleCategories="Symbology|Labeling" labelsEnabled="%d">
`

// qmlFills is a QGIS rule-based renderer of filled classes.
func qmlFills(fills []fill, kind string, outline bool) string {
	var b strings.Builder
	fmt.Fprintf(&b, qmlHead, 0)
	b.WriteString(" <renderer-v2 type=\"RuleRenderer\" symbollevels=\"0\" forceraster=\"0\" enableorderby=\"0\">\n  <rules key=\"root\">\n")
	for k, f := range fills {
		fmt.Fprintf(&b, "   <rule key=\"r%d\" filter=\"%s\" label=\"%s\" symbol=\"%d\"/>\n", k, esc(f.qgisFilter), esc(f.label), k)
	}
	b.WriteString("  </rules>\n  <symbols>\n")
	for k, f := range fills {
		stroke := "no"
		if outline {
			stroke = "solid"
		}
		fmt.Fprintf(&b, `   <symbol type="%s" name="%d" alpha="1" clip_to_extent="1" force_rhr="0">
    <layer class="SimpleFill" pass="0" enabled="1" locked="0">
     <Option type="Map">
      <Option type="QString" name="color" value="%s"/>
      <Option type="QString" name="style" value="solid"/>
      <Option type="QString" name="outline_style" value="%s"/>
      <Option type="QString" name="outline_color" value="%d,%d,%d,255"/>
      <Option type="QString" name="outline_width" value="0.4"/>
      <Option type="QString" name="outline_width_unit" value="MM"/>
     </Option>
    </layer>
   </symbol>
`, kind, k, rgba(f.c), stroke, f.c.R, f.c.G, f.c.B)
	}
	b.WriteString("  </symbols>\n </renderer-v2>\n</qgis>\n")
	return b.String()
}

// isolineLabel is the QGIS expression of an isoline's label: its level and
// the layer's unit.
func isolineLabel(unit string) string {
	if unit == "" {
		return `to_string("level")`
	}
	return `to_string("level") || ' ` + strings.ReplaceAll(unit, "'", "''") + `'`
}

// qmlIsolines is a dark line labelled along itself with its level and unit.
func qmlIsolines(unit string) string {
	var b strings.Builder
	fmt.Fprintf(&b, qmlHead, 1)
	fmt.Fprintf(&b, ` <renderer-v2 type="singleSymbol" symbollevels="0" forceraster="0" enableorderby="0">
  <symbols>
   <symbol type="line" name="0" alpha="1" clip_to_extent="1" force_rhr="0">
    <layer class="SimpleLine" pass="0" enabled="1" locked="0">
     <Option type="Map">
      <Option type="QString" name="line_color" value="40,40,40,255"/>
      <Option type="QString" name="line_style" value="solid"/>
      <Option type="QString" name="line_width" value="0.35"/>
      <Option type="QString" name="line_width_unit" value="MM"/>
     </Option>
    </layer>
   </symbol>
  </symbols>
 </renderer-v2>
 <labeling type="simple">
  <settings calloutType="simple">
   <text-style fieldName="%s" isExpression="1" fontSize="8" fontSizeUnit="Point" textColor="20,20,20,255" textOpacity="1">
    <text-buffer bufferDraw="1" bufferSize="0.8" bufferSizeUnits="MM" bufferColor="255,255,255,255" bufferOpacity="0.8"/>
   </text-style>
   <placement placement="2" placementFlags="10" repeatDistance="60" repeatDistanceUnits="MM"/>
   <rendering drawLabels="1" obstacle="1" mergeLines="0"/>
  </settings>
 </labeling>
</qgis>
`, esc(isolineLabel(unit)))
	return b.String()
}

const sldHead = `<?xml version="1.0" encoding="UTF-8"?>
<StyledLayerDescriptor xmlns="http://www.opengis.net/sld" xmlns:se="http://www.opengis.net/se" xmlns:ogc="http://www.opengis.net/ogc" xmlns:xlink="http://www.w3.org/1999/xlink" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" version="1.1.0" xsi:schemaLocation="http://www.opengis.net/sld http://schemas.opengis.net/sld/1.1.0/StyledLayerDescriptor.xsd">
 <NamedLayer>
  <se:Name>%s</se:Name>
  <UserStyle>
   <se:Name>%s</se:Name>
   <se:FeatureTypeStyle>
`

const sldTail = `   </se:FeatureTypeStyle>
  </UserStyle>
 </NamedLayer>
</StyledLayerDescriptor>
`

func sldNullOrEqual(field string, v float64) string {
	if math.IsNaN(v) {
		return "<ogc:PropertyIsNull><ogc:PropertyName>" + esc(field) + "</ogc:PropertyName></ogc:PropertyIsNull>"
	}
	return "<ogc:PropertyIsEqualTo><ogc:PropertyName>" + esc(field) + "</ogc:PropertyName><ogc:Literal>" + num(v) + "</ogc:Literal></ogc:PropertyIsEqualTo>"
}

func sldRange(field string, a, b float64) string {
	var parts []string
	if !math.IsNaN(a) {
		parts = append(parts, "<ogc:PropertyIsGreaterThanOrEqualTo><ogc:PropertyName>"+esc(field)+"</ogc:PropertyName><ogc:Literal>"+num(a)+"</ogc:Literal></ogc:PropertyIsGreaterThanOrEqualTo>")
	}
	if !math.IsNaN(b) {
		parts = append(parts, "<ogc:PropertyIsLessThan><ogc:PropertyName>"+esc(field)+"</ogc:PropertyName><ogc:Literal>"+num(b)+"</ogc:Literal></ogc:PropertyIsLessThan>")
	}
	switch len(parts) {
	case 0:
		return "<ogc:Not><ogc:PropertyIsNull><ogc:PropertyName>" + esc(field) + "</ogc:PropertyName></ogc:PropertyIsNull></ogc:Not>"
	case 1:
		return parts[0]
	}
	return "<ogc:And>" + strings.Join(parts, "") + "</ogc:And>"
}

// sldFills is the SLD 1.1 of filled classes, a rule each.
func sldFills(name string, fills []fill, _ string) string {
	var b strings.Builder
	fmt.Fprintf(&b, sldHead, esc(name), esc(name))
	for _, f := range fills {
		fmt.Fprintf(&b, "    <se:Rule>\n     <se:Name>%s</se:Name>\n", esc(f.label))
		if f.sldFilter != "" {
			fmt.Fprintf(&b, "     <ogc:Filter>%s</ogc:Filter>\n", f.sldFilter)
		}
		fmt.Fprintf(&b, `     <se:PolygonSymbolizer>
      <se:Fill><se:SvgParameter name="fill">%s</se:SvgParameter><se:SvgParameter name="fill-opacity">%s</se:SvgParameter></se:Fill>
     </se:PolygonSymbolizer>
    </se:Rule>
`, hex(f.c), num(math.Round(float64(f.c.A)/255*1000)/1000))
	}
	b.WriteString(sldTail)
	return b.String()
}

// sldIsolines is the SLD 1.1 of the isolines: a dark line and a label of the
// level and unit along it.
func sldIsolines(name, unit string) string {
	var b strings.Builder
	fmt.Fprintf(&b, sldHead, esc(name), esc(name))
	sfx := ""
	if unit != "" {
		sfx = " " + esc(unit)
	}
	fmt.Fprintf(&b, `    <se:Rule>
     <se:Name>isolines</se:Name>
     <se:LineSymbolizer>
      <se:Stroke><se:SvgParameter name="stroke">#282828</se:SvgParameter><se:SvgParameter name="stroke-width">1</se:SvgParameter></se:Stroke>
     </se:LineSymbolizer>
     <se:TextSymbolizer>
      <se:Label><ogc:PropertyName>level</ogc:PropertyName>%s</se:Label>
      <se:Font><se:SvgParameter name="font-size">10</se:SvgParameter></se:Font>
      <se:LabelPlacement><se:LinePlacement/></se:LabelPlacement>
      <se:Halo><se:Radius>1</se:Radius><se:Fill><se:SvgParameter name="fill">#ffffff</se:SvgParameter></se:Fill></se:Halo>
      <se:Fill><se:SvgParameter name="fill">#141414</se:SvgParameter></se:Fill>
     </se:TextSymbolizer>
    </se:Rule>
`, sfx)
	b.WriteString(sldTail)
	return b.String()
}
