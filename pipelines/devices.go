package pipelines

import (
	"fmt"

	"swellgrid/ingest"
	"swellgrid/stats/climate"
)

// tpInData reports whether the record gives a peak period per step: a Tp
// variable, or spectra (Tp from the spectral peak).
func tpInData(cat *ingest.Catalog) bool {
	return cat.Vars[ingest.Tp] != nil ||
		cat.Spectral != nil && (cat.Vars[ingest.Spectrum2D] != nil || cat.Vars[ingest.Spectrum1D] != nil)
}

// devicePeriod sets the period of a device's matrix from the spec and the
// CSV header (which must agree when both say it) and, for a matrix over Tp
// on a record without Tp, the run's Te/Tp assumption.
func (s *Spec) devicePeriod(dev *climate.Device, d DeviceSpec, cat *ingest.Catalog) error {
	if d.Period != "" && dev.HeaderPeriod != "" && d.Period != dev.HeaderPeriod {
		return fmt.Errorf("device %s: the spec says period = %q, the header of its power matrix %s says %q: make them agree", d.Name, d.Period, d.PowerMatrix, dev.HeaderPeriod)
	}
	p := d.Period
	if p == "" {
		p = dev.HeaderPeriod
	}
	per, err := climate.ParsePeriod(p)
	if err != nil {
		return fmt.Errorf("device %s: %w", d.Name, err)
	}
	dev.Period, dev.TeOverTp = per, 0
	if per == climate.PeriodTp && !tpInData(cat) {
		dev.TeOverTp = s.Physics.TeOverTp
	}
	return nil
}

// deviceAssumptions says, for the manifest, how each device's matrix was read.
func (e *engine) deviceAssumptions() []string {
	var out []string
	for _, d := range e.ccfg.Devices {
		var per string
		switch {
		case d.Period == climate.PeriodTe:
			per = "power matrix over Te"
		case d.TeOverTp > 0:
			per = fmt.Sprintf("power matrix over Tp, with Tp = Te / %g (the run's Te/Tp assumption, physics.te_over_tp: the files give no Tp)", d.TeOverTp)
		default:
			per = "power matrix over Tp, with each step's Tp from the files"
		}
		rated := fmt.Sprintf("rated power %g kW (the largest matrix entry)", d.RatedKW())
		if d.Rated > 0 {
			rated = fmt.Sprintf("rated power %g kW (rated_kw)", d.RatedKW())
		}
		out = append(out, fmt.Sprintf("device %s: %s, %s lookup, %s; capacity factor on the rated power", d.Name, per, d.Lookup, rated))
	}
	return out
}
