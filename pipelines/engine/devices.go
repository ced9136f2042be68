package engine

import (
	"fmt"

	"swellgrid/stats/climate"
)

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
