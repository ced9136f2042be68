package demo

import (
	"bytes"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"swellgrid/pipelines/examples"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats/climate"
)

// The demo's device is invented and says so: its matrix is the formula its
// comment states (recomputed here entry by entry), its largest entry is the
// rating the comment gives, and pipelines/examples/bulk.toml, which uses
// it, gives that rating as rated_kw. (issue 33: the demo device had the
// rating, 750 kW, and the matrix shape of a widely published real device.)
func TestDemoDeviceInvented(t *testing.T) {
	csv := string(examples.DemoDeviceCSV)
	if !strings.Contains(csv, "Invented") || !strings.Contains(csv, "no real device") {
		t.Errorf("demo_device.csv does not say it is invented")
	}
	m := regexp.MustCompile(`Rated (\d+) kW`).FindStringSubmatch(csv)
	if m == nil {
		t.Fatalf("demo_device.csv's comment gives no rating (\"Rated N kW\")")
	}
	rated, _ := strconv.ParseFloat(m[1], 64)
	dev, err := climate.ReadPowerMatrixCSV(bytes.NewReader(examples.DemoDeviceCSV), "demo_wec")
	if err != nil {
		t.Fatal(err)
	}
	// The comment's formula: min(rated, 5.2 Hm0^2 Te exp(-((Te - 9.5)/3.6)^2))
	// rounded to the kW, zero below 0.6 m.
	if !strings.Contains(csv, "5.2 Hm0^2 Te exp(-((Te - 9.5)/3.6)^2)") {
		t.Fatalf("demo_device.csv's comment does not state the formula this test recomputes")
	}
	most := 0.0
	for i, h := range dev.Hm0M {
		for j, te := range dev.TeS {
			want := 0.0
			if h >= 0.6 {
				want = math.Min(rated, math.Round(5.2*h*h*te*math.Exp(-math.Pow((te-9.5)/3.6, 2))))
			}
			if got := dev.PowerKW[i*len(dev.TeS)+j]; got != want {
				t.Errorf("Hm0 %g m, Te %g s: %g kW, the comment's formula gives %g", h, te, got, want)
			}
			most = math.Max(most, dev.PowerKW[i*len(dev.TeS)+j])
		}
	}
	if most != rated {
		t.Errorf("largest entry %g kW, the comment's rating %g kW", most, rated)
	}
	s, err := runspec.LoadSpec("../examples/bulk.toml")
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Devices) != 1 || !strings.HasSuffix(s.Devices[0].PowerMatrix, "demo_device.csv") || s.Devices[0].RatedKW != rated {
		t.Errorf("bulk.toml's device %+v, want demo_device.csv with rated_kw = %g", s.Devices, rated)
	}
}
