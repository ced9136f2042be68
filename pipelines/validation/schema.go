package validation

import (
	"math"

	"swellgrid/export"
	"swellgrid/pipelines/tables"
	"swellgrid/stats/validate"
)

// The tables of `swellgrid validate`, declared like the run's (schema.go):
// validation.parquet (one row per station, variable and period),
// validation_qq.parquet (the Q-Q quantiles) and validation_pairs.parquet
// (the matched series). Schema() lists them after the run's tables.

// valRow is one statistics row: a station, a variable, a period.
type valRow struct {
	r        *stationResult
	variable string
	g        int // index into r.groups
}

func (x valRow) s() validate.Stats { return x.r.stats[x.variable][x.g] }

func (x valRow) unit() string {
	for _, v := range validationVars {
		if v.name == x.variable {
			return v.unit
		}
	}
	return ""
}

func (x valRow) linear(f func(validate.Stats) float64) float64 {
	if x.variable == "dir" {
		return math.NaN()
	}
	return f(x.s())
}

var validationSchema = []tables.Column[valRow]{
	tables.Str("station", "", "station name (cf_role timeseries_id, or the CSV's station column)", func(x valRow) string { return x.r.p.st.Name }),
	tables.F64("station_lon", "degrees_east", "longitude", "", "station longitude", func(x valRow) float64 { return x.r.p.st.Lon }),
	tables.F64("station_lat", "degrees_north", "latitude", "", "station latitude", func(x valRow) float64 { return x.r.p.st.Lat }),
	tables.I64("cell_id", "1", "", "", "nearest sea cell of the hindcast", func(x valRow) int64 { return int64(x.r.p.nearest) }),
	tables.F64("distance_km", "km", "", "", "great-circle distance from the station to the nearest sea cell", func(x valRow) float64 { return x.r.p.distKm }),
	tables.Str("location", "", "nearest (the nearest sea cell's values) or bilinear (the four cells around the station)", func(x valRow) string { return x.r.p.method }),
	tables.Str("variable", "", "hm0, te, tp, power (each side's from its own Hm0 and Te, bulk formula at the cell depth) or dir", func(x valRow) string { return x.variable }),
	tables.Str("unit", "", "unit of the row's means, bias and RMSE: m, s, kW/m or deg", func(x valRow) string { return x.unit() }),
	tables.Str("period", "", "all, month_01..month_12, DJF, MAM, JJA, SON, or storm_p<P> (measured Hm0 above its P-th percentile)", func(x valRow) string { return x.r.groups[x.g].Period }),
	tables.I64("n", "1", "", "", "matched times where both sides have a value", func(x valRow) int64 { return int64(x.s().N) }),
	tables.F64("obs_mean", "unit", "", "", "measured mean (dir: circular mean)", func(x valRow) float64 { return x.s().MeanObs }),
	tables.F64("model_mean", "unit", "", "", "hindcast mean (dir: circular mean)", func(x valRow) float64 { return x.s().MeanModel }),
	tables.F64("bias", "unit", "", "", "mean of hindcast - measured (dir: circular mean of the wrapped differences)", func(x valRow) float64 { return x.s().Bias }),
	tables.F64("rmse", "unit", "", "", "root-mean-square difference (dir: of the wrapped differences)", func(x valRow) float64 { return x.s().RMSE }),
	tables.F64("scatter_index", "1", "", "", "RMSE / measured mean (null for dir)", func(x valRow) float64 { return x.linear(func(s validate.Stats) float64 { return s.ScatterIndex }) }),
	tables.F64("r", "1", "", "", "Pearson correlation (null for dir)", func(x valRow) float64 { return x.linear(func(s validate.Stats) float64 { return s.R }) }),
	tables.F64("slope_origin", "1", "", "", "least-squares slope of hindcast = b measured through the origin (null for dir)", func(x valRow) float64 {
		return x.linear(func(s validate.Stats) float64 { return s.SlopeOrigin })
	}),
	tables.F64("slope_symmetric", "1", "", "", "symmetric slope sqrt(sum hindcast^2 / sum measured^2) (null for dir)", func(x valRow) float64 {
		return x.linear(func(s validate.Stats) float64 { return s.SlopeSymmetric })
	}),
}

// qqRow is one Q-Q quantile of one variable and period of a station.
type qqRow struct {
	station, variable, period string
	pct, obs, model           float64
}

var validationQQSchema = []tables.Column[qqRow]{
	tables.Str("station", "", "station name", func(x qqRow) string { return x.station }),
	tables.Str("variable", "", "hm0, te, tp or power", func(x qqRow) string { return x.variable }),
	tables.Str("period", "", "all or storm_p<P>", func(x qqRow) string { return x.period }),
	tables.F64("percentile", "%", "", "", "1 .. 99", func(x qqRow) float64 { return x.pct }),
	tables.F64("obs", "m, s or kW/m", "", "", "measured quantile (Hyndman-Fan 7, numpy's linear) over the times both sides have a value", func(x qqRow) float64 { return x.obs }),
	tables.F64("model", "m, s or kW/m", "", "", "hindcast quantile over the same times", func(x qqRow) float64 { return x.model }),
}

// pairRow is one matched time of a station.
type pairRow struct {
	r *stationResult
	k int
}

func (x pairRow) get(side map[string][]float64, v string) float64 {
	if s := side[v]; s != nil {
		return s[x.k]
	}
	return math.NaN()
}

var validationPairsSchema = []tables.Column[pairRow]{
	tables.Str("station", "", "station name", func(x pairRow) string { return x.r.p.st.Name }),
	tables.Str("time", "", "measured time in the hindcast's calendar, YYYY-MM-DD hh:mm:ss (UTC for CSV input)", func(x pairRow) string { return x.r.matches[x.k].timeText }),
	tables.F64("time_diff_min", "min", "", "", "measured time minus the nearest hindcast step", func(x pairRow) float64 { return x.r.matches[x.k].diffMin }),
	tables.F64("hm0_obs_m", "m", tables.CFHm0, "", "measured Hm0", func(x pairRow) float64 { return x.get(x.r.obs, "hm0") }),
	tables.F64("hm0_model_m", "m", tables.CFHm0, "", "hindcast Hm0 at the station", func(x pairRow) float64 { return x.get(x.r.mod, "hm0") }),
	tables.F64("te_obs_s", "s", tables.CFTe, "", "measured Te", func(x pairRow) float64 { return x.get(x.r.obs, "te") }),
	tables.F64("te_model_s", "s", tables.CFTe, "", "hindcast Te", func(x pairRow) float64 { return x.get(x.r.mod, "te") }),
	tables.F64("tp_obs_s", "s", tables.CFTp, "", "measured Tp", func(x pairRow) float64 { return x.get(x.r.obs, "tp") }),
	tables.F64("tp_model_s", "s", tables.CFTp, "", "hindcast Tp", func(x pairRow) float64 { return x.get(x.r.mod, "tp") }),
	tables.F64("power_obs_kw_m", "kW/m", "", "", "wave power from the measured Hm0 and Te (bulk formula at the cell depth)", func(x pairRow) float64 { return x.get(x.r.obs, "power") }),
	tables.F64("power_model_kw_m", "kW/m", "", "", "wave power from the hindcast Hm0 and Te, the same formula", func(x pairRow) float64 { return x.get(x.r.mod, "power") }),
	tables.F64("dir_obs_deg", "deg", tables.CFDir, "", "measured direction (from, nautical)", func(x pairRow) float64 { return x.get(x.r.obs, "dir") }),
	tables.F64("dir_model_deg", "deg", tables.CFDir, "", "hindcast direction (from, nautical)", func(x pairRow) float64 { return x.get(x.r.mod, "dir") }),
}

// Specs lists the columns of validate's tables (for the README, the
// README and validation.json).
func Specs() []tables.ColumnSpec {
	out := tables.SpecsOf("validation.parquet", validationSchema)
	out = append(out, tables.SpecsOf("validation_qq.parquet", validationQQSchema)...)
	return append(out, tables.SpecsOf("validation_pairs.parquet", validationPairsSchema)...)
}

func validationColumns() map[string][]tables.ColumnSpec {
	out := map[string][]tables.ColumnSpec{}
	for _, c := range Specs() {
		out[c.File] = append(out[c.File], c)
	}
	return out
}

// validationTables builds the three tables, stations in input order.
func validationTables(rs []*stationResult) map[string]*export.Table {
	var vr []valRow
	var qr []qqRow
	var pr []pairRow
	for _, r := range rs {
		for _, v := range r.vars {
			for g := range r.groups {
				vr = append(vr, valRow{r, v, g})
			}
			if v == "dir" {
				continue
			}
			for g, grp := range r.groups {
				if grp.Period != "all" && g != len(r.groups)-1 {
					continue
				}
				if g == len(r.groups)-1 && r.obs["hm0"] == nil {
					continue // no storm tail without measured Hm0
				}
				qm, qo := validate.QQ(validate.Pick(r.mod[v], grp.Index), validate.Pick(r.obs[v], grp.Index))
				for k, p := range validate.QQPercentiles() {
					qr = append(qr, qqRow{r.p.st.Name, v, grp.Period, p, qo[k], qm[k]})
				}
			}
		}
		for k := range r.matches {
			pr = append(pr, pairRow{r, k})
		}
	}
	return map[string]*export.Table{
		"validation.parquet":       tables.Build(validationSchema, vr),
		"validation_qq.parquet":    tables.Build(validationQQSchema, qr),
		"validation_pairs.parquet": tables.Build(validationPairsSchema, pr),
	}
}
