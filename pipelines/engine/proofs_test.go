package engine

import (
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"swellgrid/pipelines/tables"
	"testing"
)

// proof says which test proves a column's values against an outside
// reference (a published value, or an independent computation with a
// general-purpose library stored in testdata/ with its script).
type proof struct {
	e2e  bool   // compared in TestE2EColumnsAgainstNumpy with testdata/e2e/reference.json
	test string // otherwise: the test that proves it (a func TestX in some _test.go file)
	what string // what that test checks, and against what
}

// byE2E: the column is compared with testdata/e2e/reference.json by
// TestE2EColumnsAgainstNumpy (cells.parquet: every expansion of the pattern
// is in e2eCellTolerances; a long table: it is a key or a compared column of
// one of e2eTables).
var byE2E = proof{e2e: true}

// by names another test and what it proves about the column.
func by(test, what string) proof { return proof{test: test, what: what} }

// columnProofs: every column of every table of the schema (Schema()), keyed
// "file:name" with the name as the schema spells it (patterns unexpanded, e.g.
// "cells.parquet:hm0_rl<T>y_m"). TestEveryColumnProven fails for a schema
// column without an entry and for an entry without a column. A new column
// gets its computation in testdata/e2e/reference.py, a tolerance in
// e2e_columns_test.go and byE2E here, or, when another test with an outside
// reference proves it (another input layout, a flag, a spectral-only column),
// by("TestName", "what it checks against what").
var columnProofs = map[string]proof{
	// cells.parquet (byE2E: bulk input; te_mean_s, tp_mean_s, hm0_mean_m and
	// power_mean_kw_m from spectra, 2-D and 1-D, are also compared with numpy
	// by TestSpectralColumnsAgainstNumpy)
	"cells.parquet:cell_id":                             by("TestE2EColumnsAgainstNumpy", "equals the canonical row index of the fixture grid"),
	"cells.parquet:name":                                by("TestStationNamesInEveryTable", "station names of a python3-netcdf4 point set, in every table"),
	"cells.parquet:lon":                                 by("TestE2EColumnsAgainstNumpy", "the fixture's longitudes"),
	"cells.parquet:lat":                                 by("TestE2EColumnsAgainstNumpy", "the fixture's latitudes"),
	"cells.parquet:depth_m":                             byE2E,
	"cells.parquet:steps":                               by("TestE2EColumnsAgainstNumpy", "the number of steps in the fixture's files (reference.py counts them)"),
	"cells.parquet:coverage":                            byE2E,
	"cells.parquet:power_mean_kw_m":                     byE2E,
	"cells.parquet:power_std_kw_m":                      byE2E,
	"cells.parquet:power_cov":                           byE2E,
	"cells.parquet:power_max_kw_m":                      byE2E,
	"cells.parquet:power_p<P>_kw_m":                     byE2E,
	"cells.parquet:hm0_mean_m":                          byE2E,
	"cells.parquet:hm0_p<P>_m":                          byE2E,
	"cells.parquet:hm0_max_m":                           byE2E,
	"cells.parquet:te_mean_s":                           byE2E,
	"cells.parquet:tp_mean_s":                           byE2E,
	"cells.parquet:dir_mean_deg":                        byE2E,
	"cells.parquet:dir_max_power_deg":                   by("TestSpectralColumnsAgainstNumpy", "three python3-netcdf4 spectral files: power-weighted circular mean of numpy's maximum of J(theta) (grid search refined by scipy), within 1e-4 deg; 97.5 deg for a single-direction sea; null on 1-D (bulk: the mean direction, TestE2EColumnsAgainstNumpy)"),
	"cells.parquet:directionality":                      by("TestSpectralColumnsAgainstNumpy", "three python3-netcdf4 spectral files: power-weighted mean of numpy's J_theta,max / J within 1e-9; 1 for a single-direction sea; null on 1-D (and on bulk, TestE2EColumnsAgainstNumpy)"),
	"cells.parquet:width_mean":                          by("TestSpectralColumnsAgainstNumpy", "three python3-netcdf4 spectral files (2-D and 1-D, bad bins): mean of numpy's eps0 = sqrt(m0 m_-2 / m_-1^2 - 1) within 1e-10 (null on bulk, TestE2EColumnsAgainstNumpy)"),
	"cells.parquet:mvi":                                 byE2E,
	"cells.parquet:svi":                                 byE2E,
	"cells.parquet:interannual_cov":                     byE2E,
	"cells.parquet:interannual_std_kw_m":                byE2E,
	"cells.parquet:annual_years":                        byE2E,
	"cells.parquet:gev_loc_m":                           byE2E,
	"cells.parquet:gev_scale_m":                         byE2E,
	"cells.parquet:gev_shape":                           byE2E,
	"cells.parquet:gev_years":                           by("TestE2EColumnsAgainstNumpy", "the 12 complete years of the fixture"),
	"cells.parquet:hm0_rl<T>y_m":                        byE2E,
	"cells.parquet:hm0_rl<T>y_lo_m":                     byE2E,
	"cells.parquet:hm0_rl<T>y_hi_m":                     byE2E,
	"cells.parquet:te_rl<T>y_s":                         byE2E,
	"cells.parquet:gpd_threshold_m":                     byE2E,
	"cells.parquet:gpd_scale_m":                         byE2E,
	"cells.parquet:gpd_shape":                           byE2E,
	"cells.parquet:gpd_peaks_per_year":                  byE2E,
	"cells.parquet:hm0_pot_rl<T>y_m":                    byE2E,
	"cells.parquet:hm0_pot_rl<T>y_lo_m":                 byE2E,
	"cells.parquet:hm0_pot_rl<T>y_hi_m":                 byE2E,
	"cells.parquet:hm0_depth_limit_m":                   byE2E,
	"cells.parquet:design_hm0_<TD>y_m":                  byE2E,
	"cells.parquet:design_te_<TD>y_s":                   byE2E,
	"cells.parquet:aep_<device>_mwh":                    byE2E,
	"cells.parquet:cf_<device>":                         byE2E,
	"cells.parquet:above_rated_<device>":                byE2E,
	"cells.parquet:below_cutin_<device>":                byE2E,
	"cells.parquet:energy_outside_matrix_<device>_frac": byE2E,
	"cells.parquet:bad_bins":                            by("TestSpectralBadBinsAndMeanDirectionAgainstNumpy", "missing, NaN, +Inf and negative bins counted by numpy in python3-netcdf4 spectra"),
	"cells.parquet:invalid_values":                      by("TestInvalidValuesAgainstNumpy", "injected negative, infinite and >= 64 m/s values and an infinite direction in a python3-netcdf4 file, counted by numpy (testdata/qc/reference.py); the statistics and GEV fits they are left out of compared too"),
	"cells.parquet:rejected_steps":                      by("TestE2EColumnsAgainstNumpy", "0 on the fixture, as on any run: the times come from the catalog (calendar months, the record's nominal step), which the state never rejects; the counting itself is checked in stats/climate TestRejectedAndInvalid"),
	"cells.parquet:qc_flags":                            by("TestNoReturnLevelsFromDegenerateFits", "gev_no_convergence on a flat record, depth_limited at 0.6 x 8 m (and no no_data in TestE2EColumnsAgainstNumpy)"),

	// monthly.parquet: year-month rows and calendar-month and season rows
	"monthly.parquet:cell_id":         byE2E,
	"monthly.parquet:name":            by("TestStationNamesInEveryTable", "station names in every table"),
	"monthly.parquet:period":          byE2E,
	"monthly.parquet:year":            byE2E,
	"monthly.parquet:month":           byE2E,
	"monthly.parquet:power_mean_kw_m": byE2E,
	"monthly.parquet:hm0_mean_m":      byE2E,
	"monthly.parquet:valid_hours":     byE2E,
	"monthly.parquet:coverage":        byE2E,
	"monthly.parquet:excluded":        byE2E,

	"scatter.parquet:cell_id":         byE2E,
	"scatter.parquet:name":            by("TestStationNamesInEveryTable", "station names in every table"),
	"scatter.parquet:hm0_lo_m":        byE2E,
	"scatter.parquet:hm0_hi_m":        byE2E,
	"scatter.parquet:te_lo_s":         byE2E,
	"scatter.parquet:te_hi_s":         byE2E,
	"scatter.parquet:hours":           byE2E,
	"scatter.parquet:time_share":      byE2E,
	"scatter.parquet:power_mean_kw_m": byE2E,

	"exceedance.parquet:cell_id":        byE2E,
	"exceedance.parquet:name":           by("TestStationNamesInEveryTable", "station names in every table"),
	"exceedance.parquet:variable":       byE2E,
	"exceedance.parquet:value":          byE2E,
	"exceedance.parquet:share_exceeded": byE2E,

	"windows.parquet:cell_id":             byE2E,
	"windows.parquet:name":                by("TestStationNamesInEveryTable", "station names in every table"),
	"windows.parquet:hm0_limit_m":         byE2E,
	"windows.parquet:min_duration_h":      byE2E,
	"windows.parquet:month":               byE2E,
	"windows.parquet:window_hours":        byE2E,
	"windows.parquet:valid_hours":         byE2E,
	"windows.parquet:fraction_in_windows": byE2E,
	"windows.parquet:windows":             byE2E,
	"windows.parquet:windows_per_month":   byE2E,

	"extremes.parquet:cell_id":            byE2E,
	"extremes.parquet:name":               by("TestStationNamesInEveryTable", "station names in every table"),
	"extremes.parquet:method":             byE2E,
	"extremes.parquet:return_period_y":    byE2E,
	"extremes.parquet:hm0_m":              byE2E,
	"extremes.parquet:hm0_lo_m":           byE2E,
	"extremes.parquet:hm0_hi_m":           byE2E,
	"extremes.parquet:hm0_delta_lo_m":     byE2E,
	"extremes.parquet:hm0_delta_hi_m":     byE2E,
	"extremes.parquet:hm0_boot_lo_m":      by("TestE2EColumnsAgainstNumpy", "null when no bootstrap is asked; the bootstrap itself against scipy's parametric bootstrap of the Port Pirie GEV and the rainfall GPD (stats/extremes TestBootstrapAgainstScipy, within the Monte Carlo band); asked in a run, against scipy's bootstrap of a cell's GEV by TestBootstrapColumnsAgainstScipy (testdata/qc)"),
	"extremes.parquet:hm0_boot_hi_m":      by("TestE2EColumnsAgainstNumpy", "as hm0_boot_lo_m"),
	"extremes.parquet:te_s":               byE2E,
	"extremes.parquet:tp_s":               byE2E,
	"extremes.parquet:loc_or_threshold_m": byE2E,
	"extremes.parquet:scale_m":            byE2E,
	"extremes.parquet:shape":              byE2E,
	"extremes.parquet:n":                  byE2E,
	"extremes.parquet:qc_flags":           by("TestExtremesRowFlags", "each row's own flags on a python3-netcdf4 point set: period_outside_model exactly on the 1-year GEV rows (Coles 2001, eq. 3.4), depth_limited exactly where the row's level or upper end exceeds the cell's depth limit"),
	"extremes.parquet:fit_flags":          by("TestExtremesRowFlags", "the same on every row of a method, no level's flag in it, no_convergence of the flat station's GEV (python3-netcdf4 point set)"),

	"threshold_diagnostics.parquet:cell_id":             byE2E,
	"threshold_diagnostics.parquet:quantile":            byE2E,
	"threshold_diagnostics.parquet:threshold_m":         byE2E,
	"threshold_diagnostics.parquet:n_peaks":             byE2E,
	"threshold_diagnostics.parquet:mean_excess_m":       byE2E,
	"threshold_diagnostics.parquet:mean_excess_lo_m":    byE2E,
	"threshold_diagnostics.parquet:mean_excess_hi_m":    byE2E,
	"threshold_diagnostics.parquet:shape":               byE2E,
	"threshold_diagnostics.parquet:shape_lo":            byE2E,
	"threshold_diagnostics.parquet:shape_hi":            byE2E,
	"threshold_diagnostics.parquet:modified_scale_m":    byE2E,
	"threshold_diagnostics.parquet:modified_scale_lo_m": byE2E,
	"threshold_diagnostics.parquet:modified_scale_hi_m": byE2E,

	"design.parquet:cell_id":         byE2E,
	"design.parquet:return_period_y": byE2E,
	"design.parquet:point":           byE2E,
	"design.parquet:hm0_m":           byE2E,
	"design.parquet:te_s":            byE2E,

	// annual.parquet and aep_bands.parquet (year by year, P50/P90/P99)
	"monthly_yield.parquet:cell_id":       byE2E,
	"monthly_yield.parquet:name":          by("TestStationNamesInEveryTable", "station names in every table"),
	"monthly_yield.parquet:device":        byE2E,
	"monthly_yield.parquet:period":        byE2E,
	"monthly_yield.parquet:year":          byE2E,
	"monthly_yield.parquet:month":         byE2E,
	"monthly_yield.parquet:mean_power_kw": byE2E,
	"monthly_yield.parquet:energy_mwh":    byE2E,
	"monthly_yield.parquet:valid_hours":   byE2E,
	"monthly_yield.parquet:hours":         byE2E,
	"monthly_yield.parquet:coverage_frac": byE2E,
	"monthly_yield.parquet:years_used":    byE2E,
	"monthly_yield.parquet:excluded":      byE2E,
	"annual.parquet:cell_id":              byE2E,
	"annual.parquet:name":                 by("TestStationNamesInEveryTable", "station names in every table"),
	"annual.parquet:year":                 byE2E,
	"annual.parquet:device":               byE2E,
	"annual.parquet:power_mean_kw_m":      byE2E,
	"annual.parquet:energy_mwh":           byE2E,
	"annual.parquet:valid_hours":          byE2E,
	"annual.parquet:hours":                byE2E,
	"annual.parquet:coverage_frac":        byE2E,
	"annual.parquet:excluded":             byE2E,
	"aep_bands.parquet:cell_id":           byE2E,
	"aep_bands.parquet:name":              by("TestStationNamesInEveryTable", "station names in every table"),
	"aep_bands.parquet:device":            byE2E,
	"aep_bands.parquet:horizon_y":         byE2E,
	"aep_bands.parquet:years_used":        byE2E,
	"aep_bands.parquet:aep_p50_mwh":       byE2E,
	"aep_bands.parquet:interannual_frac":  byE2E,
	"aep_bands.parquet:u_record_frac":     byE2E,
	"aep_bands.parquet:u_future_frac":     byE2E,
	// the model component from a validation (uncertainty.validation)
	"aep_bands.parquet:model_station":      by("TestModelUncertaintyFromValidation", "the station within uncertainty.reach_km by numpy's great-circle distance, none beyond"),
	"aep_bands.parquet:model_station_km":   by("TestModelUncertaintyFromValidation", "numpy haversine distance cell to station (testdata/uncertainty/make_ref.py)"),
	"aep_bands.parquet:power_bias_frac":    by("TestModelUncertaintyFromValidation", "numpy's sum(model)/sum(obs) - 1 of the invented station's pairs"),
	"aep_bands.parquet:power_bias_se_frac": by("TestModelUncertaintyFromValidation", "inside numpy's Monte Carlo band of the circular block bootstrap (300 seeds)"),
	"aep_bands.parquet:aep_bias_frac":      by("TestModelUncertaintyFromValidation", "numpy's device power through the matrix, sum(model)/sum(obs) - 1"),
	"aep_bands.parquet:aep_bias_se_frac":   by("TestModelUncertaintyFromValidation", "inside numpy's Monte Carlo band of the circular block bootstrap (300 seeds)"),
	"aep_bands.parquet:u_model_frac":       byE2E,
	"aep_bands.parquet:u_total_frac":       byE2E,
	"aep_bands.parquet:aep_p90_mwh":        byE2E,
	"aep_bands.parquet:aep_p99_mwh":        byE2E,
	// the bias-corrected atlas (uncertainty.correct; null in the e2e run, which asks for none)
	"cells.parquet:corr_station":          by("TestBiasCorrectedAtlas", "the station within uncertainty.reach_km by numpy's great-circle distance (make_corr_ref.py), empty beyond"),
	"cells.parquet:corr_station_km":       by("TestBiasCorrectedAtlas", "numpy haversine distance cell to station"),
	"cells.parquet:corr_hm0_slope":        by("TestBiasCorrectedAtlas", "numpy's sum(m o)/sum(m m) over the invented station's Hm0 pairs"),
	"cells.parquet:corr_te_slope":         by("TestBiasCorrectedAtlas", "numpy's sum(m o)/sum(m m) over the invented station's Te pairs"),
	"cells.parquet:hm0_mean_corr_m":       by("TestBiasCorrectedAtlas", "numpy's mean of b_H Hm0 over every step of the python3-netcdf4 fixture"),
	"cells.parquet:te_mean_corr_s":        by("TestBiasCorrectedAtlas", "numpy's mean of b_T Te"),
	"cells.parquet:power_mean_corr_kw_m":  by("TestBiasCorrectedAtlas", "numpy's mean of rho g^2 (b_H Hm0)^2 (b_T Te) / (64 pi), each step corrected first"),
	"cells.parquet:power_p<P>_corr_kw_m":  by("TestBiasCorrectedAtlas", "numpy.percentile of the corrected J, within one histogram bin"),
	"cells.parquet:aep_<device>_corr_mwh": by("TestBiasCorrectedAtlas", "numpy's bin lookup of the matrix at the corrected (Hm0, Te) of every step, mean x 8766 h"),
	// annual_maxima.parquet (the GEV's input, issue 33)
	"annual_maxima.parquet:cell_id":               by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:name":                  by("TestStationNamesInEveryTable", "station names in every table"),
	"annual_maxima.parquet:year":                  by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:time":                  by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:hm0_m":                 by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:te_s":                  by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:tp_s":                  by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:valid_hours":           by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:full_year_hours":       by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:coverage_frac":         by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"annual_maxima.parquet:excluded":              by("TestAnnualMaximaAgainstNumpy", "numpy's annual maxima of the python3-netcdf4 fixture extremes_points.nc (make_annual_maxima_refs.py)"),
	"cells.parquet:access_wait_<device>_h":        by("TestAccessAgainstNumpy", "the numpy one-minute scan of testdata/access (exact), and a fixed-seed Monte Carlo in TestAccessWaitAgainstNumpy"),
	"cells.parquet:access_censored_<device>_frac": by("TestAccessAgainstNumpy", "the numpy scan's share of covered time after the last access window"),
	"screening.parquet:aep_mwh":                   by("TestScreeningDeliveredByHand", "cells.parquet's aep_wec_mwh of the hand-made run"),
	"screening.parquet:array_factor":              by("TestScreeningDeliveredByHand", "the spec's array_factor (0.9) and its default 1"),
	"screening.parquet:availability":              by("TestScreeningDeliveredByHand", "cells.parquet's availability_wec of the hand-made run"),
	"screening.parquet:route_km":                  by("TestScreeningDeliveredByHand", "dist_ports_km x route factor (1.2 given, 1.1 default)"),
	"screening.parquet:loss_frac":                 by("TestScreeningDeliveredByHand", "fixed + per_km x route_km with the DC defaults and given AC values"),
	"screening.parquet:delivered_mwh":             by("TestScreeningDeliveredByHand", "aep x array factor x availability x (1 - loss) written out"),
	"screening.parquet:cf_delivered":              by("TestScreeningDeliveredByHand", "delivered / (500 kW x 8766 h)"),
	"screening.parquet:lcoe_per_mwh":              by("TestScreeningDeliveredByHand", "(capex x CRF + opex) / energy with CRF(8 %, 20 y) written out and checked against 0.1018522088"),
	"cells.parquet:availability_<device>":         by("TestAccessAgainstNumpy", "the energy-weighted availability computed with numpy from the scan's monthly waits and the bin-lookup device energy by month"),
	"cells.parquet:energy_available_<device>_mwh": by("TestAccessAgainstNumpy", "numpy AEP x availability"),
	"access.parquet:cell_id":                      by("TestAccessAgainstNumpy", "the fixture's cells"),
	"access.parquet:name":                         by("TestStationNamesInEveryTable", "station names in every table"),
	"access.parquet:device":                       by("TestAccessAgainstNumpy", "the spec's devices with an access rule"),
	"access.parquet:month":                        by("TestAccessAgainstNumpy", "the months with data of the fixture (20 rows)"),
	"access.parquet:record_hours":                 by("TestAccessAgainstNumpy", "the numpy scan's covered minutes by month"),
	"access.parquet:access_wait_h":                by("TestAccessAgainstNumpy", "the numpy scan's mean wait by calendar month"),
	"access.parquet:availability":                 by("TestAccessAgainstNumpy", "1 - lambda (W_m + R) / 8766 h with numpy's W_m"),
	"access.parquet:energy_share":                 by("TestAccessAgainstNumpy", "numpy device energy by month over its total"),
	// directions.parquet (the rose developer's table)
	"directions.parquet:cell_id":           by("TestDirectionsAgainstNumpy", "every row against testdata/directions/reference.py (numpy) on the e2e bulk fixture and a python3-netcdf4 spectral fixture"),
	"directions.parquet:name":              by("TestStationNamesInEveryTable", "station names in every table"),
	"directions.parquet:sector":            by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:sector_centre_deg": by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:sector_from_deg":   by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:sector_to_deg":     by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:power_share":       by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:occurrence_share":  by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:power_mean_kw_m":   by("TestDirectionsAgainstNumpy", "as cell_id"),
	"directions.parquet:occurrence_hours":  by("TestDirectionsAgainstNumpy", "as cell_id: steps with the mean direction in the sector x the step length (numpy)"),

	// screening.parquet (the screen developer's table)
	"screening.parquet:cell_id":         by("TestScreeningSummaryByHand", "the cells of a small grid worked out by hand"),
	"screening.parquet:scenario":        by("TestScreeningSummaryByHand", "the scenario of the hand computation"),
	"screening.parquet:pass":            by("TestScreeningSummaryByHand", "pass per cell, worked out by hand"),
	"screening.parquet:reasons":         by("TestScreeningSummaryByHand", "reasons per cell, worked out by hand"),
	"screening.parquet:area_km2":        by("TestScreeningSummaryByHand", "cell areas against pyproj Geod.polygon_area_perimeter"),
	"screening.parquet:dist_<layer>_km": by("TestScreeningSummaryByHand", "port distances of two cells (0 km, about 142 km); geodesics against pyproj in grid"),

	// validation*.parquet (the validate developer's tables): every row and
	// column compared (compareValidationColumns) with
	// testdata/validate/make_columns.py (python3-netcdf4, numpy, scipy,
	// pyproj) by TestValidateSyntheticStation (nearest cell, SYN-A and SYN-B)
	// and TestValidateBilinearAndDistance (bilinear, SYN-MID); the script is
	// rerun by TestValidateColumnsReproduced.
	"validation.parquet:station":         by("TestValidateSyntheticStation", "the stations of the python3-netcdf4 observation files"),
	"validation.parquet:station_lon":     by("TestValidateSyntheticStation", "the CSV's longitude read by make_columns.py, within 1e-9 deg"),
	"validation.parquet:station_lat":     by("TestValidateSyntheticStation", "the CSV's latitude read by make_columns.py, within 1e-9 deg"),
	"validation.parquet:cell_id":         by("TestValidateSyntheticStation", "the cell the station was made from; make_columns.py's nearest sea cell by the WGS 84 geodesic"),
	"validation.parquet:distance_km":     by("TestValidateBilinearAndDistance", "pyproj Geod.inv (make_columns.py) on the 6371.0088 km sphere (1e-9) and on WGS 84 (0.3 %), at 0.8, 1.4 and 34 km; refusal beyond max_distance_km"),
	"validation.parquet:location":        by("TestValidateBilinearAndDistance", "nearest or bilinear"),
	"validation.parquet:variable":        by("TestValidateSyntheticStation", "rows looked up by variable; the same rows as make_columns.py"),
	"validation.parquet:unit":            by("TestValidateSyntheticStation", "make_columns.py's unit of each variable (m, s, kW/m, deg)"),
	"validation.parquet:period":          by("TestValidateSyntheticStation", "rows looked up by period; the same rows as make_columns.py (months, seasons, storm tail)"),
	"validation.parquet:n":               by("TestValidateSyntheticStation", "numpy's count of matched pairs, every row"),
	"validation.parquet:obs_mean":        by("TestValidateSyntheticStation", "numpy's mean (directions: circular mean) of make_columns.py's pairs, every row, 1e-10 relative"),
	"validation.parquet:model_mean":      by("TestValidateSyntheticStation", "as obs_mean, the hindcast side"),
	"validation.parquet:bias":            by("TestValidateSyntheticStation", "numpy's bias, every row, and the injected bias within its standard error"),
	"validation.parquet:rmse":            by("TestValidateSyntheticStation", "numpy's RMSE (directions: circular), every row"),
	"validation.parquet:scatter_index":   by("TestValidateSyntheticStation", "numpy's RMSE / mean(o), every row; null for directions"),
	"validation.parquet:r":               by("TestValidateSyntheticStation", "numpy.corrcoef, every row; null for directions"),
	"validation.parquet:slope_origin":    by("TestValidateSyntheticStation", "numpy's slope through the origin, every row, and the injected scale"),
	"validation.parquet:slope_symmetric": by("TestValidateSyntheticStation", "numpy's sqrt(sum m^2 / sum o^2), every row"),
	"validation_qq.parquet:station":      by("TestValidateSyntheticStation", "the same rows as make_columns.py (stations, variables, periods, percentiles)"),
	"validation_qq.parquet:variable":     by("TestValidateSyntheticStation", "as station"),
	"validation_qq.parquet:period":       by("TestValidateSyntheticStation", "as station: all and storm_p95"),
	"validation_qq.parquet:percentile":   by("TestValidateSyntheticStation", "as station: 1 .. 99"),
	"validation_qq.parquet:obs":          by("TestValidateSyntheticStation", "numpy.percentile(method=\"linear\") of the measured side, every row, 1e-10 relative"),
	"validation_qq.parquet:model":        by("TestValidateSyntheticStation", "as obs, the hindcast side"),
	"validation_pairs.parquet:station":   by("TestValidateSyntheticStation", "numpy's number of matched pairs per station"),
}

func init() {
	// validation_pairs.parquet: every value of every pair, in order, against
	// make_columns.py (nearest: SYN-A, SYN-B; bilinear: SYN-MID; power by
	// scipy's dispersion root; nulls where a side has no value).
	for _, c := range []string{"time", "time_diff_min", "hm0_obs_m", "hm0_model_m", "te_obs_s", "te_model_s", "tp_obs_s", "tp_model_s",
		"power_obs_kw_m", "power_model_kw_m", "dir_obs_deg", "dir_model_deg"} {
		columnProofs["validation_pairs.parquet:"+c] = by("TestValidateSyntheticStation", "every pair against make_columns.py (python3-netcdf4, numpy, scipy); bilinear pairs by TestValidateBilinearAndDistance")
	}
}

// e2eParams are the parameter values of testdata/e2e/spec.toml.
var e2eParams = map[tables.Param][]string{
	tables.ParamPercentile: {"10", "50", "90", "99"},
	tables.ParamPeriod:     {"2", "5", "10"},
	tables.ParamDevice:     {"wec_a", "wec_b"},
	tables.ParamDesign:     {"1", "10", "50", "100"},
}

// TestEveryColumnProven: every column of every table of the schema has an
// entry in columnProofs, every entry names a schema column, an e2e entry is
// really compared by TestE2EColumnsAgainstNumpy, and a named test exists.
func TestEveryColumnProven(t *testing.T) {
	tests := testFuncs(t)
	inSchema := map[string]bool{}
	for _, c := range allSchema() {
		key := c.File + ":" + c.Name
		inSchema[key] = true
		p, ok := columnProofs[key]
		if !ok {
			t.Errorf("%s has no proof: compare it end to end (testdata/e2e/reference.py and a tolerance in e2e_columns_test.go, "+
				"then %q: byE2E in columnProofs, pipelines/engine/proofs_test.go) or name the test that proves it against an outside reference "+
				"(%q: by(\"TestX\", \"what it checks against what\")); see DEVELOPERS.md", key, key, key)
			continue
		}
		switch {
		case p.e2e && c.File == "cells.parquet":
			names := []string{c.Name}
			if c.Param != tables.NoParam {
				names = nil
				for _, v := range e2eParams[c.Param] {
					names = append(names, strings.ReplaceAll(c.Name, "<"+string(c.Param)+">", v))
				}
			}
			for _, n := range names {
				if _, ok := e2eCellTolerances[n]; !ok {
					t.Errorf("%s is marked byE2E but cells.parquet column %s has no tolerance in e2eCellTolerances (and so is not compared)", key, n)
				}
			}
		case p.e2e:
			if !e2eTableCompares(c.File, c.Name) {
				t.Errorf("%s is marked byE2E but no entry of e2eTables compares or keys %s of %s", key, c.Name, c.File)
			}
		case p.test == "" || p.what == "":
			t.Errorf("%s: a proof names its test and what it checks", key)
		case !tests[p.test]:
			t.Errorf("%s: proven by %s, but no test of that name exists", key, p.test)
		}
	}
	var stale []string
	for k := range columnProofs {
		if !inSchema[k] {
			stale = append(stale, k)
		}
	}
	sort.Strings(stale)
	for _, k := range stale {
		t.Errorf("columnProofs has %s, which is not a column of the schema: rename or remove the entry", k)
	}
}

func e2eTableCompares(file, col string) bool {
	for _, tb := range e2eTables {
		if tb.file != file {
			continue
		}
		if _, ok := tb.tols[col]; ok {
			return true
		}
		for _, k := range tb.keys {
			if k == col {
				return true
			}
		}
		if col == "period" && file == "monthly.parquet" || col == "method" && file == "extremes.parquet" || col == "variable" && file == "exceedance.parquet" {
			return true // the rows are selected (where) and matched by it
		}
	}
	return false
}

// testFuncs lists the Test functions of every _test.go file of the module.
func testFuncs(t *testing.T) map[string]bool {
	re := regexp.MustCompile(`(?m)^func (Test\w+)\(`)
	out := map[string]bool{}
	err := filepath.WalkDir("../..", func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (d.Name() == "testdata" || strings.HasPrefix(d.Name(), ".")) && p != "../.." {
			return filepath.SkipDir
		}
		if !d.IsDir() && strings.HasSuffix(p, "_test.go") {
			b, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			for _, m := range re.FindAllSubmatch(b, -1) {
				out[string(m[1])] = true
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}
