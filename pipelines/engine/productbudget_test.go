package engine

import (
	"strings"
	"testing"

	"swellgrid/pipelines/products"
)

// The end products' memory is in the plan: on the 200 x 200 grid where
// `report --atlas` was measured at 321 MB peak RSS (productBytesPerCell),
// 92 MiB (what one pass of a month needs) is refused naming run.memory_limit
// and the 235 MiB the products need (40000 x 6 KiB = 234.4 MiB, rounded up);
// 235 MiB is accepted, as is any limit when no product is built. The
// whole-run figure of BENCHMARKS.md (memory: 273 MiB peak at 256 MiB on
// that grid, within the limit plus ProcessOverhead) agrees.
func TestProductBudget(t *testing.T) {
	all := products.Products{Report: true, NetCDF: true, GeoPackage: true}
	err := checkProductBudget(92<<20, "92MiB", 40000, all)
	if err == nil || !strings.Contains(err.Error(), "run.memory_limit 92MiB is too small for the end products") || !strings.Contains(err.Error(), "235 MiB or more") {
		t.Fatalf("92 MiB for 40000 cells: %v, want a refusal naming 235 MiB", err)
	}
	if err := checkProductBudget(235<<20, "235MiB", 40000, all); err != nil {
		t.Fatalf("235 MiB for 40000 cells: %v", err)
	}
	for _, p := range []products.Products{{Report: true}, {NetCDF: true}, {GeoPackage: true}} {
		if checkProductBudget(92<<20, "92MiB", 40000, p) == nil {
			t.Errorf("%+v alone at 92 MiB: accepted", p)
		}
	}
	if err := checkProductBudget(1<<20, "1MiB", 40000, products.Products{}); err != nil {
		t.Fatalf("no products: %v", err)
	}
}
