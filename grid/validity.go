package grid

// Validity of constraint geometries in lon/lat (WGS 84).

import (
	"fmt"
	"math"

	"github.com/paulmach/orb"
)

// CheckPosition refuses a position that is not a WGS 84 longitude/latitude
// (not finite, |lat| > 90 or lon outside [-180, 360]): usually a layer in a
// projected CRS.
func CheckPosition(p orb.Point) error {
	if math.IsNaN(p[0]) || math.IsNaN(p[1]) || math.IsInf(p[0], 0) || math.IsInf(p[1], 0) {
		return fmt.Errorf("position (%v, %v) is not finite", p[0], p[1])
	}
	if p[1] < -90 || p[1] > 90 || p[0] < -180 || p[0] > 360 {
		return fmt.Errorf("position (%v, %v) is not a longitude/latitude in degrees (a projected CRS?); reproject the layer to WGS 84 (EPSG:4326), e.g. ogr2ogr -t_srs EPSG:4326", p[0], p[1])
	}
	return nil
}

// CheckLine refuses a line of fewer than 2 positions, a bad position, or an
// edge longer than 180 degrees of longitude (crossing the antimeridian,
// which these layers cannot express; split the feature there).
func CheckLine(ls []orb.Point) error {
	if len(ls) < 2 {
		return fmt.Errorf("line of %d positions; a line needs at least 2", len(ls))
	}
	for i, p := range ls {
		if err := CheckPosition(p); err != nil {
			return err
		}
		if i > 0 && math.Abs(p[0]-ls[i-1][0]) > 180 {
			return fmt.Errorf("edge from (%v, %v) to (%v, %v) spans more than 180 degrees of longitude (crosses the antimeridian?); split the feature at 180 degrees", ls[i-1][0], ls[i-1][1], p[0], p[1])
		}
	}
	return nil
}

// CheckPolygon refuses an invalid polygon under the OGC simple-features
// rules, as GEOS's IsValid decides (polygonInvalidity): a ring that crosses
// or touches itself, a hole outside its shell, holes that cross each other
// or the shell, a hole that cuts the interior in two, and so on; the message
// gives GEOS's reason and the location it names. Before GEOS, the checks
// that GEOS cannot express or would refuse to build: a ring not closed or of
// fewer than 4 positions, and a bad position or antimeridian edge
// (CheckLine).
func CheckPolygon(p orb.Polygon) error {
	if len(p) == 0 {
		return fmt.Errorf("polygon without rings")
	}
	for k, r := range p {
		what := "outer ring"
		if k > 0 {
			what = fmt.Sprintf("hole %d", k)
		}
		if len(r) < 4 {
			return fmt.Errorf("%s has %d positions; a ring needs at least 4 (closed)", what, len(r))
		}
		if r[0] != r[len(r)-1] {
			return fmt.Errorf("%s is not closed (first position (%v, %v), last (%v, %v))", what, r[0][0], r[0][1], r[len(r)-1][0], r[len(r)-1][1])
		}
		if err := CheckLine(r); err != nil {
			return fmt.Errorf("%s: %w", what, err)
		}
	}
	inv, err := polygonInvalidity(p)
	if err != nil {
		return err
	}
	if inv == nil {
		return nil
	}
	where := ""
	if inv.HasPoint {
		where = fmt.Sprintf(" at (%v, %v)", inv.Location[0], inv.Location[1])
	}
	what := "is not a valid polygon"
	switch inv.Reason {
	case "Self-intersection", "Ring Self-intersection":
		what = "crosses itself"
	case "Hole lies outside shell":
		what = "has a hole outside the outer ring"
	case "Holes are nested":
		what = "has a hole inside another hole"
	case "Interior is disconnected":
		what = "has holes that cut its interior in two"
	}
	return fmt.Errorf("polygon %s%s (GEOS: %s); repair it (e.g. ogr2ogr -makevalid, or shapely make_valid)", what, where, inv.Reason)
}
