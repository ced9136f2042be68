package engine

import (
	"swellgrid/pipelines/tables"
	"swellgrid/stats/climate"
)

// yieldRow is one device's energy in one month of a cell
// (climate.CellState.MonthlyYieldIn) with the run's device names.
type yieldRow struct {
	y   *climate.MonthYieldRow
	sum *climate.Summary
}

type yRow = longRow[yieldRow]

// monthlyYieldSchema: monthly_yield.parquet, each device's energy by
// calendar month (the climatology a planner reads first: the seasonal
// profile of the yield) and by month of the record (its year-to-year
// spread, and the months left out of the climatology).
var monthlyYieldSchema = []tables.Column[yRow]{
	cellID[yieldRow](),
	cellName[yieldRow](),
	tables.Str("device", "", "the device whose energy the row gives",
		func(x yRow) string { return x.v.sum.Devices[x.v.y.Device].Name }),
	tables.Str("period", "", "calendar_month (climatology over the included year-months) or year_month",
		func(x yRow) string {
			if x.v.y.Year == 0 {
				return "calendar_month"
			}
			return "year_month"
		}),
	tables.I64("year", "1", "", "", "year (0 for climatology rows)",
		func(x yRow) int64 { return int64(x.v.y.Year) }),
	tables.I64("month", "1", "", "", "month 1..12",
		func(x yRow) int64 { return int64(x.v.y.Month) }),
	tables.F64("mean_power_kw", "kW", "", "time: mean", "duration-weighted mean device power over the steps with a valid Hm0 and matrix period (climatology: pooled over the included year-months)",
		func(x yRow) float64 { return x.v.y.MeanPowerKW }),
	tables.F64("energy_mwh", "MWh", "", "", "the device's energy in the month: mean_power_kw x hours / 1000 (time the record does not cover taken at the month's mean)",
		func(x yRow) float64 { return x.v.y.EnergyMWh }),
	tables.F64("valid_hours", "h", "", "", "time with a valid Hm0 and matrix period",
		func(x yRow) float64 { return x.v.y.ValidHours }),
	tables.F64("hours", "h", "", "", "length of the month in the data's calendar (climatology: mean length of the included year-months)",
		func(x yRow) float64 { return x.v.y.Hours }),
	tables.F64("coverage_frac", "1", "", "", "year-month: valid_hours / hours; climatology: share of the year-months with the device's data that are included",
		func(x yRow) float64 { return x.v.y.CoverageFrac }),
	tables.I64("years_used", "1", "", "", "climatology: year-months pooled (0 on year-month rows)",
		func(x yRow) int64 { return int64(x.v.y.YearsUsed) }),
	tables.Bool("excluded", "", "year-month whose coverage_frac is below statistics.coverage_min (or without data): left out of the climatology",
		func(x yRow) bool { return x.v.y.Excluded }),
}

func monthlyYieldRows(r *cellResult) []yieldRow {
	out := make([]yieldRow, len(r.yield))
	for i := range r.yield {
		out[i] = yieldRow{y: &r.yield[i], sum: &r.sum}
	}
	return out
}
