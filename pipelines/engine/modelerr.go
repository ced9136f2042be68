package engine

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/stats/climate"
	"swellgrid/stats/validate"
)

// stationError is one validation station's figures for the AEP bands: its
// place and, per device of the run (ccfg order), the model component.
type stationError struct {
	name     string
	lon, lat float64
	pairs    int
	devs     []climate.ModelError // Station, biases and Frac set; StationKm per cell
	fit      corrFit              // the linear bias correction from its pairs (biascorr.go)
}

// modelErrors is the model component of the bands: the validation's
// stations (none when uncertainty.validation is not set) and the spec's
// assumption for cells beyond uncertainty.reach_km of every station.
type modelErrors struct {
	dir      string // the validation's directory ("" for none)
	run      string // the run it validated (validation.json "run")
	stations []stationError
	reachKm  float64
	assumed  []climate.ModelError // one per device
}

// loadModelErrors reads the finished validation that uncertainty.validation
// names (validation.json and validation_pairs.parquet) and computes each
// station's relative bias of the mean wave power and of each device's mean
// power through its matrix, with their block-bootstrap standard errors
// (validate.BlockBootstrap with uncertainty.block_pairs,
// uncertainty.bootstrap_reps and uncertainty.seed). A named directory that
// holds no finished validation is refused (the caller's exit 2).
func (e *engine) loadModelErrors() error {
	u := e.spec.Uncertainty
	me := &modelErrors{dir: u.Validation, reachKm: u.ReachKm}
	for range e.ccfg.Devices {
		me.assumed = append(me.assumed, climate.AssumedModelError(u.ModelFrac))
	}
	e.model = me
	if u.Validation == "" {
		return nil
	}
	what := "uncertainty.validation = " + u.Validation
	doc := filepath.Join(u.Validation, "validation.json")
	b, err := os.ReadFile(doc)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("%s: no validation.json there, so no finished validation to take the model uncertainty from; run `swellgrid validate --run RUN_DIR --obs STATIONS` first and name its output directory, or remove uncertainty.validation", what)
		}
		return fmt.Errorf("%s: %w", what, err)
	}
	// proved before it is read: by the run's seal when the validation is
	// in a finished run, else by the validation's own seal
	pairsRel := contract.ParquetFile(contract.TableValidationPairs)
	var perr error
	if _, err := os.Lstat(filepath.Join(u.Validation, contract.ManifestFile)); err == nil {
		perr = rundir.ProveFiles(u.Validation, contract.ValidationFile, pairsRel)
	} else {
		perr = rundir.ProveSealed(u.Validation, contract.ValidationSeal, contract.ValidationFile, pairsRel)
	}
	if de, ok := perr.(*rundir.DamagedError); ok {
		de.Fix = "it is damaged, or was changed or copied from another validation; run `swellgrid validate` again into that folder"
	}
	if perr != nil {
		return fmt.Errorf("%s: %w", what, perr)
	}
	var sum contract.ValidationSummary
	if err := json.Unmarshal(b, &sum); err != nil || sum.Software != "swellgrid" || len(sum.Stations) == 0 {
		return fmt.Errorf("%s: %s is not the summary of a finished `swellgrid validate` (no stations); run validate again", what, doc)
	}
	me.run = sum.Run
	pairsPath := filepath.Join(u.Validation, "validation_pairs.parquet")
	tb, err := rundir.ReadTable(pairsPath)
	if err != nil {
		return fmt.Errorf("%s: validation_pairs.parquet: %w; run validate again", what, err)
	}
	need := []string{"station", "hm0_obs_m", "hm0_model_m", "te_obs_s", "te_model_s", "tp_obs_s", "tp_model_s", "power_obs_kw_m", "power_model_kw_m"}
	for _, c := range need {
		if tb.Col(c) == nil {
			return fmt.Errorf("%s: %s has no column %s; run validate again with this version", what, pairsPath, c)
		}
	}
	boot := validate.BlockBootstrap{Block: u.BlockPairs, Reps: u.BootstrapReps, Seed: u.Seed}
	alpha := e.spec.Physics.TeOverTp
	for _, st := range sum.Stations {
		rows := tb.RowsOfStr("station", st.Name)
		if len(rows) < 2 {
			return fmt.Errorf("%s: station %q of validation.json has %d pairs in validation_pairs.parquet (at least 2 needed); run validate again", what, st.Name, len(rows))
		}
		get := func(col string) []float64 {
			c, out := tb.Col(col), make([]float64, len(rows))
			for i, r := range rows {
				out[i] = c.Value(r)
			}
			return out
		}
		hObs, hMod := get("hm0_obs_m"), get("hm0_model_m")
		teObs, teMod, tpObs, tpMod := get("te_obs_s"), get("te_model_s"), get("tp_obs_s"), get("tp_model_s")
		for i := range teObs {
			if math.IsNaN(teObs[i]) && !math.IsNaN(tpObs[i]) {
				teObs[i] = alpha * tpObs[i] // as validate's power column: Te = te_over_tp Tp
			}
		}
		m, o := [][]float64{get("power_model_kw_m")}, [][]float64{get("power_obs_kw_m")}
		for _, d := range e.ccfg.Devices {
			dm, do := make([]float64, len(rows)), make([]float64, len(rows))
			for i := range rows {
				dm[i] = d.StepPowerKW(hMod[i], teMod[i], tpMod[i])
				do[i] = d.StepPowerKW(hObs[i], teObs[i], tpObs[i])
			}
			m, o = append(m, dm), append(o, do)
		}
		bias, se := boot.RelativeBiasSE(m, o)
		s := stationError{name: st.Name, lon: st.Lon, lat: st.Lat, pairs: len(rows), fit: fitCorrection(hMod, hObs, teMod, teObs)}
		for k := range e.ccfg.Devices {
			s.devs = append(s.devs, climate.ModelError{Station: st.Name, PowerBiasFrac: bias[0], PowerBiasSEFrac: se[0],
				BiasFrac: bias[k+1], BiasSEFrac: se[k+1], Frac: climate.ModelUncertainty(bias[k+1], se[k+1])})
		}
		me.stations = append(me.stations, s)
	}
	return nil
}

// forCell returns the model component of every device at cell id: the
// figures of the nearest validation station when its great-circle distance
// (rundir.Haversine) from the cell centre is at most uncertainty.reach_km
// (the first station listed wins a tie), else the spec's assumption.
func (me *modelErrors) forCell(lon, lat float64) []climate.ModelError {
	best, bd := me.nearest(lon, lat)
	if best < 0 {
		return me.assumed
	}
	out := make([]climate.ModelError, len(me.stations[best].devs))
	for k, d := range me.stations[best].devs {
		d.StationKm = bd
		out[k] = d
	}
	return out
}

// nearest returns the index of the validation station nearest to (lon,
// lat) by great-circle distance (rundir.Haversine; the first listed wins a
// tie) and that distance in km, or -1 when no station lies within
// uncertainty.reach_km.
func (me *modelErrors) nearest(lon, lat float64) (int, float64) {
	best, bd := -1, math.Inf(1)
	for i, s := range me.stations {
		if d := rundir.Haversine(lon, lat, s.lon, s.lat); d < bd {
			best, bd = i, d
		}
	}
	if best < 0 || !(bd <= me.reachKm) {
		return -1, bd
	}
	return best, bd
}

// assumption is the manifest's sentence on the bands' model component.
func (me *modelErrors) assumption(modelFrac float64, block, reps int, seed uint64) string {
	base := "AEP bands (aep_bands.parquet): the record-length and future-period uncertainties from the inter-annual spread and the model uncertainty are combined as independent errors (root-sum-square), normal quantiles for P90 and P99; "
	if me.dir == "" {
		return base + fmt.Sprintf("model uncertainty %g of the mean annual energy everywhere (uncertainty.model_frac; assumed, not from a validation: name a validation in uncertainty.validation to replace it)", modelFrac)
	}
	names := ""
	for i, s := range me.stations {
		if i > 0 {
			names += ", "
		}
		names += fmt.Sprintf("%q (%d pairs)", s.name, s.pairs)
	}
	return base + fmt.Sprintf("model uncertainty from the validation in %s (of the run %s; stations %s): within %g km of its nearest station a cell takes that station's relative bias of the device's mean power and its circular block-bootstrap standard error (blocks of %d pairs, %d resamples, seed %d), u_model = sqrt(bias^2 + se^2); beyond it the assumed %g (uncertainty.model_frac)",
		me.dir, me.run, names, me.reachKm, block, reps, seed, modelFrac)
}
