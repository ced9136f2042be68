package runspec

import (
	"fmt"
	"strconv"
	"swellgrid/ingest"
)

// ValidationSpec is the [validation] section of a run spec: how `swellgrid
// validate` places the stations on the grid and matches their times.
type ValidationSpec struct {
	// Observations are the station files (files, directories, globs); the
	// --obs flag replaces them.
	Observations []string `toml:"observations" json:"observations,omitempty"`
	// MaxDistanceKm: a station farther than this from its nearest sea cell
	// (great-circle distance) is refused.
	MaxDistanceKm float64 `toml:"max_distance_km" json:"max_distance_km"`
	// Location: "nearest" (the nearest sea cell) or "bilinear" (the four
	// cells around the station, regular grids).
	Location StationPlace `toml:"location" json:"location"`
	// MaxTimeDiffMin: a measured time is matched to the nearest hindcast
	// step at most this many minutes away.
	MaxTimeDiffMin float64 `toml:"max_time_diff_min" json:"max_time_diff_min"`
	// Time: "nearest" (the nearest step within MaxTimeDiffMin) or
	// "interpolate" (linear in time between the two steps around the
	// measured time, which must be consecutive steps of the record).
	Time TimeMatch `toml:"time" json:"time"`
	// StormPercentile: the storm tail is the measured Hm0 above this
	// percentile of the station's matched measured Hm0.
	StormPercentile float64 `toml:"storm_percentile" json:"storm_percentile"`
	// PlotStart and PlotDays choose the period of the report's time-series
	// overlay ("" = the station's first matched time; 0 days = 30).
	PlotStart string  `toml:"plot_start" json:"plot_start,omitempty"`
	PlotDays  float64 `toml:"plot_days" json:"plot_days,omitempty"`
}

// DefaultValidation is the [validation] section of the common case.
func DefaultValidation() ValidationSpec {
	return ValidationSpec{MaxDistanceKm: 25, Location: placeNearest, MaxTimeDiffMin: 30, Time: timeNearest, StormPercentile: 95, PlotDays: 30}
}

// WithDefaults fills the keys a spec leaves out.
func (v *ValidationSpec) WithDefaults() ValidationSpec {
	d := DefaultValidation()
	if v == nil {
		return d
	}
	o := *v
	if o.MaxDistanceKm == 0 {
		o.MaxDistanceKm = d.MaxDistanceKm
	}
	if o.Location == "" {
		o.Location = d.Location
	}
	if o.MaxTimeDiffMin == 0 {
		o.MaxTimeDiffMin = d.MaxTimeDiffMin
	}
	if o.Time == "" {
		o.Time = d.Time
	}
	if o.StormPercentile == 0 {
		o.StormPercentile = d.StormPercentile
	}
	if o.PlotDays == 0 {
		o.PlotDays = d.PlotDays
	}
	return o
}

// Check refuses a [validation] section that makes no sense, naming the key.
func (v *ValidationSpec) Check() error {
	if v == nil {
		return nil
	}
	o := v.WithDefaults()
	bad := func(key, why string, x any) error {
		return fmt.Errorf("spec: validation.%s = %v: %s", key, x, why)
	}
	if err := withinLimit("validation.observations", len(v.Observations)); err != nil {
		return err
	}
	switch {
	case !(o.MaxDistanceKm > 0 && o.MaxDistanceKm <= 500):
		return bad("max_distance_km", "must be a distance in km, 0 < d <= 500", o.MaxDistanceKm)
	case o.Location != placeNearest && o.Location != PlaceBilinear:
		return bad("location", `must be "nearest" or "bilinear"`, strconv.Quote(string(o.Location)))
	case !(o.MaxTimeDiffMin > 0 && o.MaxTimeDiffMin <= 1440):
		return bad("max_time_diff_min", "must be minutes, 0 < m <= 1440", o.MaxTimeDiffMin)
	case o.Time != timeNearest && o.Time != TimeInterpolate:
		return bad("time", `must be "nearest" or "interpolate"`, strconv.Quote(string(o.Time)))
	case !(o.StormPercentile >= 50 && o.StormPercentile < 100):
		return bad("storm_percentile", "must be a percentile, 50 <= p < 100", o.StormPercentile)
	case !(o.PlotDays > 0 && o.PlotDays <= 3660):
		return bad("plot_days", "must be days, 0 < d <= 3660", o.PlotDays)
	}
	if o.PlotStart != "" {
		if _, err := ParsePlotStart(o.PlotStart); err != nil {
			return bad("plot_start", err.Error(), strconv.Quote(o.PlotStart))
		}
	}
	return nil
}

func ParsePlotStart(s string) (ingest.Date, error) {
	var d ingest.Date
	if _, err := fmt.Sscanf(s, "%d-%d-%d", &d.Year, &d.Month, &d.Day); err != nil || d.Month < 1 || d.Month > 12 || d.Day < 1 || d.Day > 31 {
		return d, fmt.Errorf("must be a date YYYY-MM-DD")
	}
	return d, nil
}
