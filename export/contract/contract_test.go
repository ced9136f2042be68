package contract

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"swellgrid/grid"
)

// encode writes v as export.WriteManifest does (two-space indent, no HTML
// escaping, a final newline).
func encode(t *testing.T, v any) []byte {
	t.Helper()
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// ScreeningSummary is the writer's document: a screening.json written by
// the run engine before the type moved here (testdata/contract/README.md)
// reads into it and writes back to the same bytes.
func TestScreeningSummaryShape(t *testing.T) {
	path := filepath.Join("..", "..", "testdata", "contract", "screening.json")
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	dec := json.NewDecoder(bytes.NewReader(want))
	dec.DisallowUnknownFields()
	var s ScreeningSummary
	if err := dec.Decode(&s); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if got := encode(t, &s); !bytes.Equal(got, want) {
		t.Errorf("%s written again differs:\n%s\nwant\n%s", path, got, want)
	}
	sc := s.Scenarios[0]
	if len(sc.Distance) != 1 || sc.Distance[0] != (DistanceRule{Layer: "ports", MaxKm: 150}) || sc.Device != "demo_wec" || sc.AreaKm2 == nil {
		t.Errorf("scenario read as %+v", sc)
	}
}

// The manifest's grid kind is read as a grid.Kind from the strings the run
// engine writes (Kind.String(), pipelines/outputs.go at 21d33b4); a kind
// that is none of them is refused with the file named.
func TestManifestGridKind(t *testing.T) {
	for name, want := range map[string]grid.Kind{"regular": grid.Regular, "curvilinear": grid.Curvilinear, "points": grid.Points, "mesh": grid.MeshKind} {
		m, err := DecodeManifest([]byte(`{"grid": {"kind": "` + name + `", "shape_ny_nx": [1, 3]}}`))
		if err != nil || m.Grid.Kind != want || m.Grid.Shape != [2]int{1, 3} {
			t.Errorf("kind %q: %+v, %v", name, m, err)
		}
	}
	if _, err := DecodeManifest([]byte(`{"grid": {"kind": "hexagonal"}}`)); err == nil || !bytes.Contains([]byte(err.Error()), []byte(ManifestFile)) {
		t.Errorf("unknown kind: error %v, want one naming %s", err, ManifestFile)
	}
}

// Column names built from a run parameter, against the names the run engine
// writes (README's column tables: hm0_p<P>_m, hm0_rl<T>y_m with 2.5 -> 2p5,
// aep_<device>_mwh, cf_<device>).
func TestColumnNames(t *testing.T) {
	for got, want := range map[string]string{
		Hm0PercentileColumn(90):     "hm0_p90_m",
		Hm0PercentileColumn(99.5):   "hm0_p99p5_m",
		Hm0ReturnLevelColumn(100):   "hm0_rl100y_m",
		Hm0ReturnLevelColumn(2.5):   "hm0_rl2p5y_m",
		AEPColumn("demo_wec"):       "aep_demo_wec_mwh",
		CapacityFactorColumn("a_b"): "cf_a_b",
		ScreeningOutlineFile("x1"):  "screening_x1.geojson",
		ContourBandsFile(ColMVI):    "mvi.bands.geojson",
		ContourLinesFile(ColMVI):    "mvi.geojson",
		ParquetFile(TableMonthly):   "monthly.parquet",
	} {
		if got != want {
			t.Errorf("got %q, want %q", got, want)
		}
	}
}
