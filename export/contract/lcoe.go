package contract

// The levelised cost of energy per cell and screening scenario (issue 32)
// outside screening.parquet: a variable of atlas.nc, a band layer in
// ContourDir (and so in atlas.gpkg) and a map in the report.

// LCOEPrefix begins the name of every per-scenario levelised-cost layer:
// the atlas.nc variable and the band layer in ContourDir (LCOELayer).
const LCOEPrefix = "lcoe_per_mwh_"

// LCOELayer is the levelised cost of scenario's layouts per cell as a
// layer: lcoe_per_mwh_<scenario> (atlas.nc's variable; in ContourDir its
// bands ContourBandsFile(LCOELayer(scenario)); in atlas.gpkg
// bands_lcoe_per_mwh_<scenario>).
func LCOELayer(scenario string) string { return LCOEPrefix + scenario }

// LCOEUnit is the unit of the levelised cost: the currency of the spec's
// cost inputs per MWh.
const LCOEUnit = "currency/MWh"

// LCOENote is said wherever a levelised cost is published (beside the
// caution, stats.Caution): it comes from the spec's assumptions.
const LCOENote = "Levelised costs are screening figures from stated assumptions (the spec's cost inputs, discount rate and lifetime; screening.json), not investment advice."
