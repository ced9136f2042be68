package grid

import (
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// Invalid polygons as the OGC simple-features rules define them (GEOS
// IsValid would refuse each; common practice for what a layer must be).
func TestCheckPolygon(t *testing.T) {
	sq := orb.Ring{{0, 0}, {2, 0}, {2, 2}, {0, 2}, {0, 0}}
	for _, c := range []struct {
		name string
		p    orb.Polygon
		want string // "" = valid
	}{
		{"square", orb.Polygon{sq}, ""},
		{"with hole", orb.Polygon{sq, {{0.5, 0.5}, {0.5, 1}, {1, 1}, {0.5, 0.5}}}, ""},
		{"hole touching the shell", orb.Polygon{sq, {{0, 1}, {1, 1.5}, {1, 0.5}, {0, 1}}}, ""},
		{"bow tie", orb.Polygon{{{0, 0}, {2, 2}, {2, 0}, {0, 2}, {0, 0}}}, "crosses itself"},
		{"spike", orb.Polygon{{{0, 0}, {2, 0}, {3, 0}, {2, 0}, {2, 2}, {0, 0}}}, "crosses itself"},
		{"not closed", orb.Polygon{{{0, 0}, {2, 0}, {2, 2}, {0, 2}}}, "not closed"},
		{"too short", orb.Polygon{{{0, 0}, {2, 0}, {0, 0}}}, "at least 4"},
		{"hole outside", orb.Polygon{sq, {{3, 3}, {3, 4}, {4, 4}, {3, 3}}}, "outside the outer ring"},
		{"projected", orb.Polygon{{{500000, 6e6}, {510000, 6e6}, {510000, 6.01e6}, {500000, 6e6}}}, "reproject"},
		{"antimeridian", orb.Polygon{{{179, 0}, {-179, 0}, {-179, 1}, {179, 0}}}, "antimeridian"},
	} {
		err := CheckPolygon(c.p)
		switch {
		case c.want == "" && err != nil:
			t.Errorf("%s: refused: %v", c.name, err)
		case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
			t.Errorf("%s: want an error with %q, got %v", c.name, c.want, err)
		}
	}
}
