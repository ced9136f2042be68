// Package stats is the root of the computing packages; it holds nothing but this
// comment. Its sub-packages compute from plain arrays and never see NetCDF,
// files or tables:
//
//   - stats/seastate: dispersion, group velocity, spectral moments and sea-state
//     parameters, wave power from spectra or bulk fields;
//   - stats/climate: the mergeable per-cell state fed one step at a time
//     (means, histograms, monthly and seasonal means, joint occurrence, weather
//     windows, device yield);
//   - stats/extremes: annual maxima and storm peaks, GEV and GPD fits, return
//     levels with confidence intervals and quality flags;
//   - stats/validate: error statistics of a modelled series against a
//     measured one (bias, RMSE, scatter index, r, slopes, quantiles,
//     circular statistics), by month, season and storm tail.
package stats
