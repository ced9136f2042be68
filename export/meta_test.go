package export

import (
	"encoding/json"
	"path/filepath"
	"testing"

	"github.com/apache/arrow/go/v17/parquet/file"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"
)

// TestCallerCautionAndCFMetadata: a caution given by the caller reaches the
// file unchanged (it used to be overwritten), and the CF standard_name and
// cell_methods of a column reach both the Arrow field metadata and the
// swellgrid:columns list (CF Conventions 1.11, sections 3.3 and 7.3).
func TestCallerCautionAndCFMetadata(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.parquet")
	c := Float64Column("hm0_mean_m", "m", "mean Hm0", []float64{1.5, 2})
	c.StandardName, c.CellMethods = "sea_surface_wave_significant_height", "time: mean"
	plain := Int64Column("n", "1", "count", []int64{1, 2}, nil)
	err := WriteParquet(path, &Table{Columns: []Column{c, plain}, Meta: map[string]string{MetaCaution: "the caller's caution"}})
	if err != nil {
		t.Fatal(err)
	}
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer rdr.Close()
	kv := rdr.MetaData().KeyValueMetadata()
	if v := kv.FindValue(MetaCaution); v == nil || *v != "the caller's caution" {
		t.Errorf("caution %v, want the caller's", v)
	}
	var docs []colDoc
	if err := json.Unmarshal([]byte(*kv.FindValue(MetaColumns)), &docs); err != nil {
		t.Fatal(err)
	}
	if len(docs) != 2 || docs[0].StandardName != c.StandardName || docs[0].CellMethods != c.CellMethods || docs[1].StandardName != "" {
		t.Errorf("swellgrid:columns %+v", docs)
	}
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	sc, err := fr.Schema()
	if err != nil {
		t.Fatal(err)
	}
	md := sc.Field(0).Metadata
	if i := md.FindKey("standard_name"); i < 0 || md.Values()[i] != c.StandardName {
		t.Errorf("field metadata %v lacks standard_name", md)
	}
	if i := md.FindKey("cell_methods"); i < 0 || md.Values()[i] != c.CellMethods {
		t.Errorf("field metadata %v lacks cell_methods", md)
	}
	if md := sc.Field(1).Metadata; md.FindKey("standard_name") >= 0 || md.FindKey("unit") < 0 {
		t.Errorf("field metadata of a plain column %v", md)
	}
}
