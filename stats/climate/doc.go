// Package climate keeps the resource climate of one grid cell as a bounded,
// exactly mergeable state fed one sea state at a time: mean, standard
// deviation, coefficient of variation, extremes and histogram percentiles of
// wave power J and Hm0; means of Te and Tp and the circular mean direction;
// monthly, seasonal and annual means with the monthly and seasonal
// variability indices and the inter-annual coefficient of variation, with
// years and months below a coverage threshold excluded and flagged; the joint
// occurrence of Hm0 and Te with mean power per bin; the directional
// distribution of power and occurrence by sector; exceedance curves; weather
// windows per Hm0 limit, minimum duration and calendar month; the yield
// of wave energy devices from their power matrices; and, year by year
// (Annual), the mean power and each device's energy, with the P50/P90/P99
// bands of the annual energy and their uncertainty components (AEPBands).
//
// It knows nothing of files, NetCDF, grids or output tables: the caller
// feeds Step values (already unpacked, in physical units, with the data's
// own calendar fields and a continuous time axis) and reads plain Go values
// back. It does not compute J from spectra (stats/seastate does).
//
// Exactness. Every sum is an integer of fixed-point quanta (see fixed.go):
// merging the states of two parts of a record gives, bit for bit, the state
// of the whole record; MarshalBinary then gives the same bytes. Weather
// windows are exact across block boundaries and merges: a state carries the
// calm run open at each end of its record and Merge joins them.
//
// Size. A state with the default Config takes about 11 KB per cell plus 296
// bytes per cell per year with data (the year-month sums and the year; a
// year without data takes nothing, so a long gap costs no room); each device adds
// 80 bytes and 288 bytes per year with data (its month sums for the
// year-by-year energy), each window limit x duration 96 bytes and each limit 65 bytes and each direction sector 16 bytes. It
// does not grow with the number of time steps. Config.StateBytes gives the
// figure for any Config, Config.CellMemory the model a run plans with; the histograms (3.5 KB) and the scatter table
// (5.3 KB) dominate and shrink with coarser settings.
//
// Results for design. The figures are screening estimates from a model
// hindcast. They do not replace site measurements, the applicable design
// standards, local codes or review by qualified engineers.
package climate

import "swellgrid/stats"

// Caution is the statement that goes with every figure of this package into
// outputs, manifests and documentation.
const Caution = stats.Caution // the one caution text; see stats.Caution
