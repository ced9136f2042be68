package validate

import (
	"fmt"
	"math"

	"swellgrid/stats/seastate"
)

// Group is a subset of the matched times, by index into the series.
type Group struct {
	// Period names the subset: "all", "month_01" .. "month_12", "DJF",
	// "MAM", "JJA", "SON", or "storm_p<P>" (measured Hm0 above its P-th
	// percentile).
	Period string
	Index  []int
}

// Seasons are the meteorological seasons of the northern-hemisphere
// convention (common practice): December-February, March-May, June-August,
// September-November; the same months as stats/climate's seasons.
var Seasons = []struct {
	Name   string
	Months [3]int
}{{"DJF", [3]int{12, 1, 2}}, {"MAM", [3]int{3, 4, 5}}, {"JJA", [3]int{6, 7, 8}}, {"SON", [3]int{9, 10, 11}}}

// Groups returns the subsets of matched times that validation reports: the
// whole record, each calendar month (months[i] is 1..12), each season, and
// the storm tail, the times whose measured Hm0 is above the tailPct-th
// percentile (Quantile, Hyndman-Fan 7) of the finite measured Hm0 values.
// It returns the tail threshold too (NaN without measured Hm0). Empty
// subsets are kept (their statistics have N = 0).
func Groups(months []int, obsHm0 []float64, tailPct float64) ([]Group, float64) {
	n := len(months)
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	gs := []Group{{Period: "all", Index: all}}
	byMonth := make([][]int, 13)
	for i, m := range months {
		if m >= 1 && m <= 12 {
			byMonth[m] = append(byMonth[m], i)
		}
	}
	for m := 1; m <= 12; m++ {
		gs = append(gs, Group{Period: fmt.Sprintf("month_%02d", m), Index: byMonth[m]})
	}
	for _, s := range Seasons {
		var idx []int
		for i, m := range months {
			if m == s.Months[0] || m == s.Months[1] || m == s.Months[2] {
				idx = append(idx, i)
			}
		}
		gs = append(gs, Group{Period: s.Name, Index: idx})
	}
	thr := math.NaN()
	if obsHm0 != nil {
		thr = Quantile(obsHm0, tailPct/100)
		var idx []int
		for i, h := range obsHm0 {
			if h > thr {
				idx = append(idx, i)
			}
		}
		gs = append(gs, Group{Period: "storm_p" + pctTag(tailPct), Index: idx})
	}
	return gs, thr
}

// pctTag writes a percentile for a name: 95 -> "95", 97.5 -> "97p5".
func pctTag(p float64) string {
	s := fmt.Sprintf("%g", p)
	out := []byte(s)
	for i, c := range out {
		if c == '.' {
			out[i] = 'p'
		}
	}
	return string(out)
}

// Pick returns x at the indices idx.
func Pick(x []float64, idx []int) []float64 {
	out := make([]float64, len(idx))
	for k, i := range idx {
		out[k] = x[i]
	}
	return out
}

// PowerKW returns the wave power (kW/m) of each step from its own Hm0 (m)
// and Te (s) at depth h (m; NaN, +Inf or <= 0 deep water), by
// seastate.BulkPowerFinite (J = rho g Hm0^2 cg(1/Te, h) / 16, IEC TS
// 62600-101 bulk approximation), NaN where Hm0 < 0 or either is missing.
// Validation applies it to the model and the measured side alike, so the
// two powers differ only by their Hm0 and Te.
func PowerKW(hm0, te []float64, h float64, c seastate.Consts) []float64 {
	out := make([]float64, len(hm0))
	for i := range hm0 {
		out[i] = math.NaN()
		if i < len(te) && hm0[i] >= 0 && te[i] > 0 {
			out[i] = seastate.BulkPowerFinite(hm0[i], te[i], h, c) / 1000
		}
	}
	return out
}
