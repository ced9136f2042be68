package contract

// The screening summary: screening.json, and the manifest's "screening",
// as swellgrid screen writes it. Field order and tags are the document's:
// encoding/json writes fields in declaration order.

// ScreeningSummary is screening.json, and the manifest's "screening".
type ScreeningSummary struct {
	Caution   string            `json:"caution"`
	Note      string            `json:"note"`
	Method    string            `json:"method"`
	Layers    []ScreeningLayer  `json:"layers"`
	Scenarios []ScenarioSummary `json:"scenarios"`
}

// ScreeningLayer is a constraint file as used: path, table, checksum, size.
type ScreeningLayer struct {
	Name     string `json:"name"`
	Path     string `json:"path"`
	Table    string `json:"table,omitempty"`
	SHA256   string `json:"sha256"`
	Features int    `json:"features"`
}

// ScenarioSummary is one scenario's result in screening.json and the manifest.
type ScenarioSummary struct {
	Name     string         `json:"name"`
	Criteria []string       `json:"criteria"`
	Exclude  []string       `json:"exclude,omitempty"`
	Within   []string       `json:"within,omitempty"`
	Distance []DistanceRule `json:"distance,omitempty"`
	Cells    int            `json:"cells_passing"`
	// AreaKm2 is the passing cells' area (null: a point set).
	AreaKm2 *float64 `json:"area_km2"`
	// Area-weighted mean, least and largest power_mean_kw_m of the passing
	// cells (null: none passes).
	PowerMeanKWm *float64 `json:"power_mean_kw_m"`
	PowerMinKWm  *float64 `json:"power_min_kw_m"`
	PowerMaxKWm  *float64 `json:"power_max_kw_m"`
	// ResourceMWhPerMYr is the mean incident wave energy per metre of crest
	// and year: PowerMeanKWm x 8766 h / 1000 (8766 h = 365.25 days).
	ResourceMWhPerMYr *float64 `json:"resource_mwh_per_m_yr"`
	// Layout: Device at DevicesPerKm2 over the passing area; Devices is
	// sum(area_km2) x density, AnnualEnergyGWh sum(area_km2 x density x
	// aep_<device>_mwh) / 1000 over passing cells with an AEP (those without
	// are counted in CellsWithoutAEP and add nothing).
	Device          string   `json:"device,omitempty"`
	DevicesPerKm2   float64  `json:"devices_per_km2,omitempty"`
	Devices         *float64 `json:"devices,omitempty"`
	AnnualEnergyGWh *float64 `json:"annual_energy_gwh,omitempty"`
	CellsWithoutAEP int      `json:"cells_without_aep,omitempty"`
	// Delivered energy (issue 32): the layout's energy at the grid
	// connection, sum(area_km2 x density x delivered_mwh) / 1000 over the
	// passing cells with one, and the factors' assumptions: the array
	// factor, the route factor, the loss model (fixed share and share per
	// km) and the route length at which AC and DC export lose the same
	// (stats/delivery defaults, common practice).
	DeliveredEnergyGWh *float64 `json:"delivered_energy_gwh,omitempty"`
	ArrayFactor        float64  `json:"array_factor,omitempty"`
	Connection         string   `json:"connection,omitempty"`
	RouteFactor        float64  `json:"route_factor,omitempty"`
	LossFixed          float64  `json:"loss_fixed,omitempty"`
	LossPerKm          float64  `json:"loss_per_km,omitempty"`
	LossCrossoverKm    *float64 `json:"ac_dc_loss_crossover_km,omitempty"`
	// LCOE is the layout's levelised cost (currency per MWh delivered):
	// (capital x CRF + operating) / delivered energy, summed over the
	// passing cells; LCOERank its rank among the scenarios with one (1:
	// cheapest). Screening figures from stated assumptions, not advice.
	LCOE     *float64 `json:"lcoe_per_mwh,omitempty"`
	LCOERank int      `json:"lcoe_rank,omitempty"`
	// Polygons is ContourDir/ScreeningOutlineFile(Name) (structured grids).
	Polygons string `json:"polygons,omitempty"`
	// LCOEBands is ContourDir/ContourBandsFile(LCOELayer(Name)), the bands
	// of the per-cell levelised cost (structured grids with costs).
	LCOEBands string `json:"lcoe_bands,omitempty"`
}

// DistanceRule bounds the geodesic distance from a cell's centre to the
// nearest feature of a layer: at least MinKm, at most MaxKm (0: no bound).
// It is read from the spec's [[screening.scenario.distance]] (toml tags) and
// written in the summary (json tags).
type DistanceRule struct {
	Layer string  `toml:"layer" json:"layer"`
	MinKm float64 `toml:"min_km" json:"min_km,omitempty"`
	MaxKm float64 `toml:"max_km" json:"max_km,omitempty"`
}
