package climate

import "math"

// MaxHorizons is the most horizons a run asks bands for (the memory model,
// Config.CellMemory, counts this many per device).
const MaxHorizons = 8

// AEPBand is the uncertainty of one device's annual energy at one cell over
// one horizon: the central estimate, each component as a relative standard
// uncertainty (a fraction of P50), their combination and the energies
// exceeded with 90 % and 99 % probability. Components are kept apart so
// that a user can recombine them.
type AEPBand struct {
	Device   string
	HorizonY float64
	// YearsUsed: complete analysis years (coverage at least
	// Config.CoverageMin) whose energies give the inter-annual spread.
	YearsUsed int
	// P50MWh is the long-term mean annual energy (DeviceSummary.AEPMWh).
	P50MWh float64
	// InterannualFrac: sample standard deviation (ddof 1) of the complete
	// years' mean device power over their mean. RecordFrac = InterannualFrac
	// / sqrt(YearsUsed): uncertainty of the long-term mean from the record
	// length. FutureFrac = InterannualFrac / sqrt(HorizonY): variability of
	// the mean of HorizonY future years. ModelFrac: the model uncertainty
	// (Model.Frac). TotalFrac: their root-sum-square (RecordFrac,
	// FutureFrac, ModelFrac).
	InterannualFrac, RecordFrac, FutureFrac, ModelFrac, TotalFrac float64
	// Model is where ModelFrac comes from: a validation station's figures
	// for this device, or the spec's assumption.
	Model ModelError
	// P90MWh, P99MWh: P50 (1 - z u) with z the normal quantile (NaN when
	// z u >= 1).
	P90MWh, P99MWh float64
}

// InterannualPower returns the number of complete analysis years of rows
// (not Excluded, with a mean power) and the sample standard deviation
// (ddof 1) of their mean power in kW/m (NaN below two years).
func InterannualPower(rows []YearRow) (years int, stdKWm float64) {
	var x []float64
	for _, r := range rows {
		if !r.Excluded && !math.IsNaN(r.PowerMeanKWm) {
			x = append(x, r.PowerMeanKWm)
		}
	}
	_, sd := sampleStd(x)
	return len(x), sd
}

// ModelError is the model component of one device's band at one cell: the
// figures of the validation station assigned to the cell, or the spec's
// assumed uncertainty when no station applies.
type ModelError struct {
	// Station names the station whose pairs gave the figures ("" when none
	// applies: Frac is the spec's assumption and the rest NaN);
	// StationKm is the great-circle distance from the cell to it.
	Station   string
	StationKm float64
	// PowerBiasFrac and PowerBiasSEFrac: the relative bias of the
	// hindcast's mean wave power at the station (validate.RelativeBias)
	// and its block-bootstrap standard error; BiasFrac and BiasSEFrac the
	// same of the device's mean power through its matrix (its AEP).
	PowerBiasFrac, PowerBiasSEFrac, BiasFrac, BiasSEFrac float64
	// Frac is the model component of the band (ModelUncertainty of the
	// device's bias and standard error, or the spec's assumption).
	Frac float64
}

// AssumedModelError is the model component when no station applies: the
// spec's relative standard uncertainty frac, no station figures.
func AssumedModelError(frac float64) ModelError {
	nan := math.NaN()
	return ModelError{StationKm: nan, PowerBiasFrac: nan, PowerBiasSEFrac: nan, BiasFrac: nan, BiasSEFrac: nan, Frac: frac}
}

// AEPBands returns, for every device of devs (in order) and every horizon
// (years), the band of its annual energy, from the analysis years of rows
// (Annual) and the model component of each device, model[k] (Frac used). A
// year enters when it is complete (not Excluded) and the device has a
// valid step in it.
func AEPBands(rows []YearRow, devs []DeviceSummary, horizons []float64, model []ModelError) []AEPBand {
	var out []AEPBand
	for k, d := range devs {
		var x []float64
		for _, r := range rows {
			if r.Excluded || k >= len(r.DeviceEnergyMWh) || math.IsNaN(r.DeviceEnergyMWh[k]) {
				continue
			}
			x = append(x, r.DeviceEnergyMWh[k]/r.Hours) // the year's mean power (MW): leap days do not count as variability
		}
		m, sd := sampleStd(x)
		iav := coefficientOfVariation(sd, m)
		if m == 0 && sd == 0 {
			iav = 0 // a device that never yields varies by nothing
		}
		rec := meanUncertainty(iav, float64(len(x)))
		for _, h := range horizons {
			b := AEPBand{Device: d.Name, HorizonY: h, YearsUsed: len(x), P50MWh: d.AEPMWh,
				InterannualFrac: iav, RecordFrac: rec, FutureFrac: meanUncertainty(iav, h), ModelFrac: model[k].Frac, Model: model[k]}
			b.TotalFrac = combinedUncertainty(b.RecordFrac, b.FutureFrac, b.ModelFrac)
			b.P90MWh = exceedanceEnergy(b.P50MWh, b.TotalFrac, 0.90)
			b.P99MWh = exceedanceEnergy(b.P50MWh, b.TotalFrac, 0.99)
			out = append(out, b)
		}
	}
	return out
}
