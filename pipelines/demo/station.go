package demo

import (
	"bufio"
	"context"
	"fmt"
	"math"
	"math/rand"
	"os"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/validation"
)

// Run station: an invented measured record made from the demo hindcast's
// own values at one place, with injected errors, so that the demo shows
// `swellgrid validate` and its report page. The injected values are written
// into the file's comment lines.
const (
	demoStationName  = "NULLPORT-BUOY-X (invented)"
	demoStationBias  = 0.15 // hindcast - measured Hm0, m
	demoStationScale = 1.05 // hindcast / measured Hm0
	demoStationNoise = 0.12 // m
	demoStationYears = 3    // the record covers the hindcast's last years
)

// writeDemoStation writes path, a station CSV (ingest.CSVColumns) at
// (lon, lat) from the hindcast of the finished run runDir: the last
// demoStationYears of the record, 10 minutes after each step, with
// measured Hm0 = (hindcast - bias) / scale + noise, Te with -0.2 s and
// noise, direction with noise (seeded, deterministic).
func writeDemoStation(ctx context.Context, runDir, path string, lon, lat float64) error {
	s, err := validation.SeriesAt(ctx, runDir, demoStationName, path, lon, lat)
	if err != nil {
		return err
	}
	cat := s.Catalog
	times := cat.Times()
	first := len(times) - int(float64(demoStationYears)*365.25*86400/float64(max(cat.StepSeconds, 1)))
	first = max(first, 0)
	f, err := os.Create(path)
	if err != nil {
		return fault.Output(fmt.Errorf("demo: %w", err))
	}
	defer f.Close()
	w := bufio.NewWriter(f)
	fmt.Fprintf(w, "# comment: invented synthetic station record, not a measurement: made by swellgrid demo from the demo hindcast at cell %d with injected errors (hindcast - measured Hm0 bias %.2f m, scale %.2f, noise %.2f m; Te -0.2 s; direction noise 8 deg; times 10 min after the steps)\n",
		s.Cell, demoStationBias, demoStationScale, demoStationNoise)
	fmt.Fprintln(w, "# source: swellgrid demo (pipelines/demo/station.go); synthetic, no real place, buoy or organisation")
	fmt.Fprintln(w, "time,station,lon,lat,hm0_m,te_s,dir_deg")
	rng := rand.New(rand.NewSource(18))
	for i := first; i < len(times); i++ {
		d := ingest.DateOf(cat.Calendar, times[i]+600)
		h := (s.Hm0[i]-demoStationBias)/demoStationScale + demoStationNoise*rng.NormFloat64()
		te := s.Te[i] + 0.2 + 0.3*rng.NormFloat64()
		dir := math.Mod(s.Dir[i]+8*rng.NormFloat64()+360, 360)
		field := func(x float64, lo float64) string {
			if math.IsNaN(x) {
				return ""
			}
			return fmt.Sprintf("%.3f", math.Max(x, lo))
		}
		fmt.Fprintf(w, "%04d-%02d-%02dT%02d:%02d:%02dZ,%s,%.4f,%.4f,%s,%s,%s\n", d.Year, d.Month, d.Day, d.Hour, d.Minute, d.Second,
			demoStationName, lon, lat, field(h, 0.05), field(te, 1), field(dir, 0))
	}
	if err := w.Flush(); err != nil {
		return fault.Output(fmt.Errorf("demo: %s: %w", path, err))
	}
	return nil
}
