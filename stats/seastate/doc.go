// Package seastate computes sea-state parameters and wave power for one grid
// cell from plain arrays: the linear dispersion relation and group velocity,
// spectral moments with true bin widths, Hm0, Te, Tm01, Tm02, Tp, spectral
// width, omnidirectional and directionally resolved wave power, and the bulk
// power formulas used when only Hm0 and a period are available. It also builds
// textbook JONSWAP spectra and cos-2s spreading functions for tests and for the
// synthetic demo data.
//
// It must not know about NetCDF, files, grids, time axes, tables or the run
// spec: callers convert units (densities per Hz and per radian, directions in
// degrees, nautical "from") and pass rho, g and every assumption explicitly, and
// record them in the manifest themselves.
//
// The figures it computes are screening estimates from model spectra. They are
// not design values: design loads, survival sea states and site decisions
// follow the applicable design standards, local codes, site measurements and
// review by qualified engineers.
package seastate
