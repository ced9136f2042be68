package runspec

// The spec's choices among named values, as types: a comparison with a
// constant below, never with a string literal.

// DepthSource is depth.source: where the water depth comes from.
type DepthSource string

// Depth sources.
const (
	depthFromFile   DepthSource = "file"       // a variable with standard_name sea_floor_depth_below_sea_surface
	DepthConstant   DepthSource = "constant"   // depth.constant_m everywhere
	DepthBathymetry DepthSource = "bathymetry" // a separate file (depth.bathymetry_file)
	DepthDeepWater  DepthSource = "deep-water" // the deep-water assumption
)

// ThresholdRule is extremes.threshold_rule: how the peaks-over-threshold
// threshold is chosen.
type ThresholdRule string

// Threshold rules.
const (
	thresholdByQuantile     ThresholdRule = "quantile"       // a quantile of the cell's Hm0
	thresholdByPeaksPerYear ThresholdRule = "peaks_per_year" // a target number of storm peaks a year
)

// Lookup is device.lookup: how a power matrix is read between its bins.
type Lookup string

// Power-matrix lookups ("" is lookupBin).
const (
	lookupBin      Lookup = "bin"
	lookupBilinear Lookup = "bilinear"
)

// MatrixPeriod is device.period: the period of a power matrix's columns.
type MatrixPeriod string

// Matrix periods ("" is periodTe).
const (
	periodTe MatrixPeriod = "te"
	periodTp MatrixPeriod = "tp"
)

// DuplicateSteps is input.duplicate_steps: which file's values a time held
// by two files takes.
type DuplicateSteps string

// Duplicate-step policies.
const (
	DuplicatesRefused DuplicateSteps = ""      // identical values used once, different values refused
	duplicatesFirst   DuplicateSteps = "first" // the earlier file's
	DuplicatesLast    DuplicateSteps = "last"  // the later file's
)

// StationPlace is validation.location: how a station finds its cells.
type StationPlace string

// Station places.
const (
	placeNearest  StationPlace = "nearest"  // the nearest sea cell
	PlaceBilinear StationPlace = "bilinear" // the four cells around the station (regular grids)
)

// TimeMatch is validation.time: how a measured time finds its steps.
type TimeMatch string

// Time matches.
const (
	timeNearest     TimeMatch = "nearest"     // the nearest step within max_time_diff_min
	TimeInterpolate TimeMatch = "interpolate" // linear between the two steps around it
)
