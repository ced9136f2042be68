package validate

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"testing"
)

// uncertaintyRef is testdata/uncertainty/reference.json, made by
// testdata/uncertainty/make_ref.py (Debian's numpy and python3-netcdf4) from
// the invented hindcast and station of make_fixture.py: the relative biases
// computed by numpy from the pairs, and Monte Carlo bands of the circular
// block bootstrap's standard error (numpy's generator, 300 seeds; [min,
// 0.5 %, 99.5 %, max] of the seeds' estimates).
type uncertaintyRef struct {
	Pairs    int     `json:"pairs"`
	Block    int     `json:"block_pairs"`
	Reps     int     `json:"bootstrap_reps"`
	ReachKm  float64 `json:"reach_km"`
	Injected struct {
		PowerBias float64 `json:"power_bias_frac"`
	} `json:"injected"`
	PowerBias    float64    `json:"power_bias_frac"`
	AEPBias      float64    `json:"aep_bias_frac"`
	PowerSE      [4]float64 `json:"power_se_band"`
	AEPSE        [4]float64 `json:"aep_se_band"`
	PowerSEIID   [4]float64 `json:"power_se_band_iid"`
	AEPSEIID     [4]float64 `json:"aep_se_band_iid"`
	PowerTrueSD  float64    `json:"power_bias_true_sd"`
	HorizonsY    []float64  `json:"horizons_y"`
	StationName  string     `json:"station"`
	Cells        []refCell  `json:"cells"`
	InjectedNote string     `json:"source"`
}

type refCell struct {
	ID        int64     `json:"cell_id"`
	StationKm float64   `json:"station_km"`
	InReach   bool      `json:"in_reach"`
	AEP       float64   `json:"aep_mwh"`
	IAV       float64   `json:"interannual_frac"`
	Record    float64   `json:"u_record_frac"`
	Future    []float64 `json:"u_future_frac"`
}

func loadUncertaintyRef(t *testing.T) (*uncertaintyRef, [4][]float64) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/uncertainty/reference.json")
	if err != nil {
		t.Fatalf("run testdata/uncertainty/make_ref.py: %v", err)
	}
	ref := &uncertaintyRef{}
	if err := json.Unmarshal(b, ref); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("../../testdata/uncertainty/pairs_ref.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var cols [4][]float64
	for _, rec := range recs[1:] {
		for k := range cols {
			v, err := strconv.ParseFloat(rec[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			cols[k] = append(cols[k], v)
		}
	}
	if len(cols[0]) != ref.Pairs {
		t.Fatalf("%d pairs, reference says %d", len(cols[0]), ref.Pairs)
	}
	return ref, cols
}

// The relative biases equal numpy's (make_ref.py: sum(model)/sum(obs) - 1);
// the circular block bootstrap's standard errors, with this package's
// generator and one seed, lie inside the Monte Carlo band of the same
// procedure run by numpy over 300 seeds; blocks of one pair (the iid
// bootstrap) fall inside numpy's iid band and below the block band (the
// injected errors are AR(1) with phi 0.9: ignoring the blocks understates
// the error); the injected relative power bias, (1.1^2)/(1 + 0.1^2) - 1,
// lies within the estimate +- 2.576 standard errors (a normal 99 %
// interval; common practice); and the result is the same for the same seed.
func TestBlockBootstrapAgainstNumpy(t *testing.T) {
	ref, c := loadUncertaintyRef(t)
	m, o := [][]float64{c[0], c[2]}, [][]float64{c[1], c[3]}
	bb := BlockBootstrap{Block: ref.Block, Reps: ref.Reps, Seed: 30}
	bias, se := bb.RelativeBiasSE(m, o)
	if math.Abs(bias[0]-ref.PowerBias) > 1e-12 || math.Abs(bias[1]-ref.AEPBias) > 1e-12 {
		t.Errorf("biases %.15g, %.15g; numpy %.15g, %.15g", bias[0], bias[1], ref.PowerBias, ref.AEPBias)
	}
	in := func(what string, x float64, band [4]float64) {
		t.Helper()
		if !(x >= band[0] && x <= band[3]) {
			t.Errorf("%s = %.5g outside numpy's Monte Carlo band [%.5g, %.5g]", what, x, band[0], band[3])
		}
	}
	in("power bias SE (blocks)", se[0], ref.PowerSE)
	in("AEP bias SE (blocks)", se[1], ref.AEPSE)
	t.Logf("power bias %.4f SE %.4f (numpy band %.4f..%.4f, true spread %.4f); AEP bias %.4f SE %.4f; injected power bias %.4f",
		bias[0], se[0], ref.PowerSE[0], ref.PowerSE[3], ref.PowerTrueSD, bias[1], se[1], ref.Injected.PowerBias)
	if d := math.Abs(bias[0] - ref.Injected.PowerBias); d > 2.576*se[0] {
		t.Errorf("injected power bias %.4f not within %.4f +- 2.576 x %.4f", ref.Injected.PowerBias, bias[0], se[0])
	}
	_, se1 := BlockBootstrap{Block: 1, Reps: ref.Reps, Seed: 30}.RelativeBiasSE(m, o)
	in("power bias SE (iid)", se1[0], ref.PowerSEIID)
	in("AEP bias SE (iid)", se1[1], ref.AEPSEIID)
	if !(se1[0] < ref.PowerSE[0]) {
		t.Errorf("iid SE %.4g not below the block band %.4g: blocks change nothing?", se1[0], ref.PowerSE[0])
	}
	_, again := bb.RelativeBiasSE(m, o)
	if again[0] != se[0] || again[1] != se[1] {
		t.Errorf("same seed, different SE: %v then %v", se, again)
	}
	if _, other := (BlockBootstrap{Block: ref.Block, Reps: ref.Reps, Seed: 31}).RelativeBiasSE(m, o); other[0] == se[0] {
		t.Errorf("another seed gave the same SE %v: the seed is not used", other[0])
	}
}

// RelativeBias by hand: model 2, 4; measured 1, 3 (and a pair with a NaN
// side left out): 6/4 - 1 = 0.5.
func TestRelativeBiasByHand(t *testing.T) {
	if b := RelativeBias([]float64{2, 4, 9}, []float64{1, 3, math.NaN()}); math.Abs(b-0.5) > 1e-15 {
		t.Errorf("relative bias %g, want 0.5", b)
	}
	if b := RelativeBias([]float64{1}, []float64{0}); !math.IsNaN(b) {
		t.Errorf("zero measured mean: %g, want NaN", b)
	}
}
