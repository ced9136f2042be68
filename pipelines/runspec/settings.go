package runspec

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
	"swellgrid/ingest"
	"swellgrid/stats/climate"
	"swellgrid/stats/extremes"
)

// IngestOptions maps the spec to the reader's options.
func (s *Spec) IngestOptions() ingest.Options {
	opt := ingest.Options{Vars: map[ingest.Role]string{}, Units: map[ingest.Role]string{}, AllowLongGaps: s.Input.AllowLongGaps,
		Duplicates: ingest.DuplicatePolicy(s.Input.DuplicateSteps)}
	for k, v := range s.Roles {
		opt.Vars[ingest.Role(k)] = v
	}
	opt.Encoding, opt.Basis = map[ingest.Role]ingest.Encoding{}, map[ingest.Role]ingest.DensityBasis{}
	for k, v := range s.Units {
		switch role, kind := unitsKey(k); kind {
		case "encoding":
			opt.Encoding[role], _ = ingest.ParseEncoding(v) // checked by CheckRoles
		case "basis":
			opt.Basis[role], _ = ingest.ParseDensityBasis(v)
		default:
			opt.Units[role] = v
		}
	}
	switch s.Depth.Source {
	case DepthDeepWater:
		opt.DeepWater = true
	case DepthConstant:
		opt.DepthConstant = s.Depth.ConstantM
	case DepthBathymetry:
		opt.BathymetryFile = s.Depth.BathymetryFile
	}
	opt.DirConvention, _ = ingest.ParseDirConvention(s.Input.DirectionConvention) // checked by Validate
	opt.DirForce = s.Input.DirectionConventionForce
	return opt
}

// unitsKey splits a key of the spec's [units] table into its role and
// kind: "" for the units of a role ("spectrum2d"), "encoding" or "basis"
// for a spectral density's statements ("spectrum2d_encoding",
// "spectrum2d_basis").
func unitsKey(k string) (ingest.Role, string) {
	for _, kind := range []string{"encoding", "basis"} {
		if r, ok := strings.CutSuffix(k, "_"+kind); ok && (ingest.Role(r) == ingest.Spectrum2D || ingest.Role(r) == ingest.Spectrum1D) {
			return ingest.Role(r), kind
		}
	}
	return ingest.Role(k), ""
}

func (s *Spec) CheckRoles() error {
	for k := range s.Roles {
		ok := false
		for _, r := range append(ingest.Roles, ingest.Mask) {
			if string(r) == k {
				ok = true
			}
		}
		if !ok {
			return fmt.Errorf("spec: roles.%s: unknown role; roles are %v", k, ingest.Roles)
		}
	}
	for _, k := range keys(s.Units) {
		role, kind := unitsKey(k)
		switch kind {
		case "encoding":
			if _, err := ingest.ParseEncoding(s.Units[k]); err != nil {
				return fmt.Errorf("spec: units.%s: %v", k, err)
			}
			continue
		case "basis":
			if _, err := ingest.ParseDensityBasis(s.Units[k]); err != nil {
				return fmt.Errorf("spec: units.%s: %v", k, err)
			}
			continue
		}
		if _, ok := s.Roles[k]; !ok {
			found := false
			for _, r := range ingest.Roles {
				found = found || r == role
			}
			if !found {
				return fmt.Errorf("spec: units.%s: unknown role; roles are %v, and spectrum2d_encoding, spectrum2d_basis (spectrum1d_...) state how a spectral density is stored", k, ingest.Roles)
			}
		}
	}
	return nil
}

// ClimateConfig maps the spec to the per-cell state's configuration.
func (r *Resolved) ClimateConfig(cat *ingest.Catalog) (*climate.Config, error) {
	s := r.Spec
	cal := cat.Calendar
	c := climate.DefaultConfig()
	c.Calendar = string(cal)
	c.Hm0HistResM = s.Statistics.Hm0BinM
	c.Percentiles = append([]float64(nil), s.Statistics.Percentiles...)
	// The POT threshold rule (extremes.POTThreshold) and the
	// threshold-diagnostics ladder need those percentiles of Hm0 (not
	// written as columns unless asked).
	var need []float64
	for _, q := range s.AnalysisConfig().Hm0Quantiles() {
		need = append(need, 100*q)
	}
	for _, q := range extremes.LadderQuantiles {
		need = append(need, 100*q)
	}
	for _, q := range need {
		q = math.Round(q*1e9) / 1e9 // 100 * 0.995 is not exactly 99.5 in binary
		if !slices.Contains(c.Percentiles, q) {
			c.Percentiles = append(c.Percentiles, q)
		}
	}
	sort.Float64s(c.Percentiles)
	c.ScatterHm0StepM, c.ScatterTeStepS = s.Statistics.ScatterHm0BinM, s.Statistics.ScatterTeBinS
	c.WindowLimitsM = append([]float64(nil), s.Statistics.WindowLimitsM...)
	c.WindowDurationsH = append([]float64(nil), s.Statistics.WindowDurationsH...)
	c.CoverageMin = s.Statistics.CoverageMin
	c.DirectionSectors = s.Statistics.DirectionSectors
	for i, d := range s.Devices {
		// The bytes Validate read (bounded) and fingerprinted.
		b, ok := r.namedData(fmt.Sprintf("device[%d].power_matrix", i))
		if !ok {
			return nil, fmt.Errorf("device %s: power matrix %s: not read; validate the spec first", d.Name, d.PowerMatrix)
		}
		dev, err := climate.ReadPowerMatrixCSV(bytes.NewReader(b), d.Name)
		if err != nil {
			return nil, fmt.Errorf("device %s: power matrix %s: %w", d.Name, d.PowerMatrix, err)
		}
		if d.Lookup == lookupBilinear {
			dev.Lookup = climate.Bilinear
		}
		if err := s.devicePeriod(dev, d, cat); err != nil {
			return nil, err
		}
		dev.Rated = d.RatedKW
		c.Devices = append(c.Devices, dev)
		if d.HasAccess() {
			c.AccessRules = append(c.AccessRules, d.AccessRule())
		}
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	return c, nil
}

// AnalysisConfig maps the spec's extremes section to extremes.AnalysisConfig;
// the threshold rule itself is extremes.POTThreshold (a cell's Hm0 quantile
// is supplied per cell in engine.finish).
func (s *Spec) AnalysisConfig() extremes.AnalysisConfig {
	rule := extremes.ThresholdPeaksPerYear
	if s.Extremes.ThresholdRule == thresholdByQuantile {
		rule = extremes.ThresholdQuantile
	}
	a := extremes.AnalysisConfig{ReturnPeriods: s.Extremes.ReturnPeriodsY, MinYears: s.Extremes.MinYears,
		Threshold: rule, TargetPeaksPerYear: s.Extremes.PeaksPerYear, ThresholdQuantile: s.Extremes.ThresholdQuantile,
		MinPeaks: s.Extremes.MinPeaks, ShapeMin: s.Extremes.ShapeRange[0], ShapeMax: s.Extremes.ShapeRange[1],
		MaxExtrapolation: s.Extremes.MaxExtrapolation, BreakingRatio: s.Extremes.BreakingRatio}
	if s.Extremes.Bootstrap > 0 {
		a.Bootstrap = extremes.Bootstrap{N: s.Extremes.Bootstrap, Seed: uint64(s.Extremes.Seed)}
	}
	return a
}

// AnalysisConfigFor is AnalysisConfig with the lengths of the analysis
// years in the catalog's calendar (a full year for the GEV's complete years
// and the peak rate's record length).
func (s *Spec) AnalysisConfigFor(cat *ingest.Catalog) extremes.AnalysisConfig {
	a := s.AnalysisConfig()
	a.YearHours = yearHours(cat.Calendar, s.Extremes.YearStartMonth)
	return a
}

// yearHours gives the hours of the analysis year y, from the first of month
// m0 of y to the first of month m0 of y+1, in calendar cal.
func yearHours(cal ingest.Calendar, m0 int) func(int) float64 {
	if m0 < 1 || m0 > 12 {
		m0 = 1
	}
	return func(y int) float64 {
		a := ingest.StampOf(cal, ingest.Date{Year: y, Month: m0, Day: 1})
		b := ingest.StampOf(cal, ingest.Date{Year: y + 1, Month: m0, Day: 1})
		return float64(b-a) / 3600
	}
}

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
	if d.Period != "" && dev.HeaderPeriod != "" && d.Period != MatrixPeriod(dev.HeaderPeriod) {
		return fmt.Errorf("device %s: the spec says period = %q, the header of its power matrix %s says %q: make them agree", d.Name, d.Period, d.PowerMatrix, dev.HeaderPeriod)
	}
	p := string(d.Period)
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

// AccessRule is the device's repair-access rule (HasAccess must hold).
func (d DeviceSpec) AccessRule() climate.AccessRule {
	return climate.AccessRule{Hm0M: d.AccessHm0M, TeS: d.AccessTeS, RepairH: d.RepairH}
}

// AccessIndex returns, for each device of the spec, the index of its rule
// in the climate config's AccessRules, or -1 when it has none.
func (s *Spec) AccessIndex() []int {
	out := make([]int, len(s.Devices))
	n := 0
	for i, d := range s.Devices {
		out[i] = -1
		if d.HasAccess() {
			out[i] = n
			n++
		}
	}
	return out
}
