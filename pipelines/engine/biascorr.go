package engine

import (
	"fmt"
	"math"

	"swellgrid/stats/climate"
	"swellgrid/stats/seastate"
	"swellgrid/stats/validate"
)

// The bias-corrected atlas (uncertainty.correct = "linear"): at the cells
// within uncertainty.reach_km of a station of the validation that
// uncertainty.validation names, every sea state is corrected as it streams,
//
//	Hm0' = b_H Hm0,  Te' = b_T Te,  Tp' = b_T Tp,
//
// with the station's slopes (fitCorrection), and the corrected power J'
// (the bulk formula at the cell's depth, seastate.BulkStep) feeds a second,
// smaller climate state beside the raw one (corrConfig): its mean power,
// power percentiles, Hm0 and Te means and each device's energy are the
// corrected columns of cells.parquet, written beside the raw ones, which
// they never replace. Power and the device matrices are nonlinear in Hm0
// and Te, so the correction is applied per sea state, never to a finished
// mean.

// corrFit is one station's linear bias correction: the slopes of Hm0 and
// of the periods, and the pairs each came from. A slope that its pairs
// cannot give (fewer than 2 pairs) is 1: that parameter is not corrected.
type corrFit struct {
	slopeH, slopeT float64
	nH, nT         int
}

// fitCorrection fits a station's correction from its pairs
// (validate.OriginSlope of measured on modelled Hm0, and of measured on
// modelled Te).
//
// Linear scaling rather than empirical quantile mapping, because the
// correction must hold beyond the pairs: a station's record is short
// (a few years) and its largest sea states are few, so a mapping of
// empirical quantiles is undefined above the largest paired value, where
// most of the energy of a storm lies, and noisy in its tail; one slope per
// parameter is stable with a few hundred pairs, extrapolates linearly,
// keeps Hm0 and Te positive (no intercept) and matches the multiplicative
// error of a wave model that common practice expects. The price: the
// corrected series is the expected measurement given the model, so a
// scatter the model lacks is not added back.
func fitCorrection(hMod, hObs, teMod, teObs []float64) corrFit {
	f := corrFit{slopeH: 1, slopeT: 1}
	if b, n := validate.OriginSlope(hMod, hObs); n >= 2 && !math.IsNaN(b) {
		f.slopeH, f.nH = b, n
	}
	if b, n := validate.OriginSlope(teMod, teObs); n >= 2 && !math.IsNaN(b) {
		f.slopeT, f.nT = b, n
	}
	return f
}

// cellCorr is what a cell within reach carries for its correction.
type cellCorr struct {
	st    *climate.CellState // fed with the corrected sea states
	fit   *corrFit
	name  string  // the station
	km    float64 // the cell centre's great-circle distance to it
	depth seastate.BulkDepth
}

// corrConfig is the configuration of the corrected state: the run's
// calendar, histograms, percentiles, coverage and devices (so its
// percentiles and energies are read exactly as the raw ones), without
// weather windows, access rules and with a single scatter bin and the
// fewest direction sectors, none of which it publishes.
func corrConfig(c *climate.Config) (*climate.Config, error) {
	k := *c
	k.WindowLimitsM, k.WindowDurationsH, k.AccessRules = nil, nil, nil
	k.ScatterHm0StepM, k.ScatterHm0MaxM, k.ScatterTeStepS, k.ScatterTeMaxS = 100, 100, 100, 100
	k.DirectionSectors = climate.MinDirectionSectors
	if err := k.Validate(); err != nil {
		return nil, fmt.Errorf("bias-corrected state: %w", err)
	}
	return &k, nil
}

// setupCorrection prepares the bias correction when the spec asks for it
// (after loadModelErrors, which read the validation's pairs).
func (e *engine) setupCorrection() error {
	if e.spec.Uncertainty.Correct == "" {
		return nil
	}
	if e.spectral {
		return fmt.Errorf("uncertainty.correct = %q: the bias-corrected atlas is computed for runs on bulk parameters only (this run reads spectra); remove uncertainty.correct", e.spec.Uncertainty.Correct)
	}
	cfg, err := corrConfig(e.ccfg)
	if err != nil {
		return err
	}
	e.corrCfg = cfg
	return nil
}

// newCorr returns the correction state of cell id, nil when the run has no
// correction or no station lies within reach of the cell.
func (e *engine) newCorr(id int) *cellCorr {
	if e.corrCfg == nil {
		return nil
	}
	i, km := e.model.nearest(e.cat.Grid.Lon[id], e.cat.Grid.Lat[id])
	if i < 0 {
		return nil
	}
	s := &e.model.stations[i]
	return &cellCorr{st: climate.NewCellState(e.corrCfg), fit: &s.fit, name: s.name, km: km,
		depth: seastate.NewBulkDepth(e.cat.Depth[id], e.consts.G)}
}

// addCorrected feeds the corrected sea state of one step to the cell's
// corrected state: Hm0, Te and Tp as the raw state screened them (j, hm0,
// te, tp), scaled by the station's slopes, and the power of the corrected
// Hm0 and Te at the step's depth (seastate.BulkStep with bd; NaN when the
// raw power is NaN: a dry or unusable step stays one).
func (e *engine) addCorrected(k *cellCorr, t *climate.StepTime, bd seastate.BulkDepth, j, hm0, te, tp float64) {
	h, T, P := k.fit.slopeH*hm0, k.fit.slopeT*te, k.fit.slopeT*tp
	jc := math.NaN()
	if j == j {
		_, jc = seastate.BulkStep(bd, h, T, P, true, e.spec.Physics.TeOverTp, e.consts)
	}
	k.st.AddAt(t, jc, h, T, P, math.NaN())
}

// corrStateBytes is the memory model of one cell's corrected state (the
// configuration's StateBytes with Go's size-class rounding, as
// climate.Config.CellMemory counts the raw one), 0 without a correction.
// The plan counts it for every cell of a pass (an upper bound: only the
// cells within reach carry one).
func (e *engine) corrStateBytes() float64 {
	if e.corrCfg == nil {
		return 0
	}
	return float64(e.corrCfg.StateBytes(max(e.recordYears(), 1))*9/8 + 16*10 + 64)
}

// corrAssumption is the manifest's sentence on the bias-corrected atlas.
func (e *engine) corrAssumption() string {
	if e.corrCfg == nil {
		return ""
	}
	s := fmt.Sprintf("bias-corrected atlas (uncertainty.correct = %q; the *_corr_* columns of cells.parquet, flagged bias_corrected in qc_flags, beside the raw columns, which they do not replace): within %g km of its nearest station of the validation in %s a cell's every sea state is corrected as Hm0' = b_H Hm0, Te' = b_T Te, Tp' = b_T Tp before its power (bulk formula at the cell's depth) and each device's power are taken; b is the least-squares slope through the origin of measured on modelled over the station's pairs (linear scaling, not quantile mapping: it holds beyond the largest paired sea state); stations:",
		e.spec.Uncertainty.Correct, e.model.reachKm, e.model.dir)
	for i, st := range e.model.stations {
		if i > 0 {
			s += ";"
		}
		s += fmt.Sprintf(" %q b_H %.6g (%d pairs), b_T %.6g (%d pairs)", st.name, st.fit.slopeH, st.fit.nH, st.fit.slopeT, st.fit.nT)
	}
	return s + "; a slope without at least 2 pairs is 1 (not corrected)"
}

// bulkDepthAt is the depth of step i of a block for cell k (its fixed
// depth, or the step's when the depth varies in time).
func bulkDepthAt(fixed seastate.BulkDepth, depths []float64, i int, g float64) seastate.BulkDepth {
	if depths != nil {
		return seastate.NewBulkDepthAt(depths[i], g)
	}
	return fixed
}
