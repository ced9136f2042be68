package screening

import (
	"fmt"
	"math"
	"testing"

	"github.com/paulmach/orb"

	"swellgrid/grid"
)

// benchLayer is an invented screening layer (synthetic, no real place): one
// star-shaped polygon of n vertices around (10 E, 50 N), about 5 degrees of
// latitude in radius, its outline wiggling like a coast at every scale down
// to about 8 vertices (each octave's amplitude proportional to its
// wavelength, summing to less than the radius, so the radius stays
// positive: a star-shaped ring is simple and the polygon valid).
func benchLayer(n int) orb.Polygon {
	r := make(orb.Ring, n+1)
	for k := 0; k < n; k++ {
		th := 2 * math.Pi * float64(k) / float64(n)
		w := 0.0
		for f := 9.0; f <= float64(n)/8; f *= 4 {
			w += 1.5 / f * math.Sin(f*th+f)
		}
		rad := 5 * (1 + w)
		r[k] = orb.Point{10 + rad*math.Cos(th)/math.Cos(50*math.Pi/180), 50 + rad*math.Sin(th)}
	}
	r[n] = r[0]
	return orb.Polygon{r}
}

// benchGrid is a regular 200 x 200 grid of 0.1 degree over 0..20 E,
// 40..60 N (synthetic).
func benchGrid(b *testing.B) *grid.Grid {
	lon, lat := make([]float64, 200), make([]float64, 200)
	for i := range lon {
		lon[i] = 0.05 + 0.1*float64(i)
		lat[i] = 40.05 + 0.1*float64(i)
	}
	g, err := grid.NewRegular(lon, lat)
	if err != nil {
		b.Fatal(err)
	}
	return g
}

// BenchmarkScreenLayer is one polygon layer of 10^5 and 10^6 vertices
// screened against a 200 x 200 grid as a run's [screening] does it: the
// layer's validity (grid.CheckPolygon, GEOS), every cell in or out of it
// (layerCovers) and every cell's geodesic distance to it
// (layerDistancesKm). Issue 35's target: under 5 s for 10^6 vertices on 2
// cores.
func BenchmarkScreenLayer(b *testing.B) {
	g := benchGrid(b)
	fr := g.Frame()
	for _, n := range []int{100_000, 1_000_000} {
		p := benchLayer(n)
		geoms := []orb.Geometry{p}
		b.Run(fmt.Sprintf("vertices=%d/grid=200x200", n), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if err := grid.CheckPolygon(p); err != nil {
					b.Fatal(err)
				}
				in, err := layerCovers(g, geoms, fr)
				if err != nil {
					b.Fatal(err)
				}
				d, err := layerDistancesKm(g, geoms, fr)
				if err != nil {
					b.Fatal(err)
				}
				if in[0] || d[0] <= 0 || math.IsNaN(d[0]) {
					b.Fatalf("cell 0 (0.05 E, 40.05 N) should lie outside the layer: in %v, %v km", in[0], d[0])
				}
			}
		})
	}
}
