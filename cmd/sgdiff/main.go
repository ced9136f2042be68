// Command sgdiff compares two run output directories file by file: byte
// equality, and for Parquet tables that differ, which columns differ, in how
// many rows and by how much (largest absolute and relative difference). The
// manifest is compared without its timings, dates and version strings. It
// serves `make bench` (tables before and after a change); exit status 1 when
// anything differs.
package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"swellgrid/export/contract"
	"swellgrid/internal/parquetread"
)

func main() {
	if len(os.Args) != 3 {
		fmt.Fprintln(os.Stderr, "usage: sgdiff DIR_BEFORE DIR_AFTER")
		os.Exit(2)
	}
	a, b := os.Args[1], os.Args[2]
	differ := false
	var names []string
	seen := map[string]bool{}
	for _, root := range []string{a, b} {
		filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
			if err == nil && !d.IsDir() {
				rel, _ := filepath.Rel(root, p)
				if !seen[rel] && !strings.HasPrefix(rel, ".") && !strings.Contains(rel, "checkpoint") {
					seen[rel] = true
					names = append(names, rel)
				}
			}
			return nil
		})
	}
	sort.Strings(names)
	for _, rel := range names {
		ba, ea := os.ReadFile(filepath.Join(a, rel))
		bb, eb := os.ReadFile(filepath.Join(b, rel))
		if ea != nil || eb != nil {
			fmt.Printf("%s: only in one directory\n", rel)
			differ = true
			continue
		}
		if bytes.Equal(ba, bb) {
			continue
		}
		if rel == "manifest.json" {
			if sameManifest(ba, bb) {
				continue
			}
			fmt.Printf("%s: differs (beyond timings, dates and version)\n", rel)
			differ = true
			continue
		}
		differ = true
		if strings.HasSuffix(rel, ".parquet") {
			describe(rel, filepath.Join(a, rel), filepath.Join(b, rel))
		} else {
			fmt.Printf("%s: bytes differ\n", rel)
		}
	}
	if differ {
		os.Exit(1)
	}
}

// volatile are the manifest keys that change from run to run by design.
var volatile = []string{"timings_s", "created", "created_utc", "version", "software_version", "started", "finished", "run_id", "host", "elapsed_s"}

func sameManifest(a, b []byte) bool {
	var ma, mb map[string]any
	if json.Unmarshal(a, &ma) != nil || json.Unmarshal(b, &mb) != nil {
		return false
	}
	for _, k := range volatile {
		delete(ma, k)
		delete(mb, k)
	}
	// the outputs' checksums follow the files, which are compared one by
	// one (and the report's summary page holds the run time)
	delete(ma, contract.ManifestChecksumsKey)
	delete(mb, contract.ManifestChecksumsKey)
	ja, _ := json.Marshal(ma)
	jb, _ := json.Marshal(mb)
	return bytes.Equal(ja, jb)
}

func describe(rel, pa, pb string) {
	ca, err1 := parquetread.Columns(pa)
	cb, err2 := parquetread.Columns(pb)
	if err1 != nil || err2 != nil {
		fmt.Printf("%s: bytes differ (unreadable: %v %v)\n", rel, err1, err2)
		return
	}
	var cols []string
	for k := range ca {
		cols = append(cols, k)
	}
	sort.Strings(cols)
	any := false
	for _, c := range cols {
		va, vb := ca[c], cb[c]
		if vb == nil || len(va) != len(vb) {
			fmt.Printf("%s: column %s: missing or length differs\n", rel, c)
			any = true
			continue
		}
		n, maxAbs, maxRel := 0, 0.0, 0.0
		for i := range va {
			fa, oka := va[i].(float64)
			fb, okb := vb[i].(float64)
			if oka && okb {
				if fa == fb || (math.IsNaN(fa) && math.IsNaN(fb)) {
					continue
				}
				n++
				d := math.Abs(fa - fb)
				maxAbs = math.Max(maxAbs, d)
				if fa != 0 {
					maxRel = math.Max(maxRel, d/math.Abs(fa))
				}
				continue
			}
			if fmt.Sprint(va[i]) != fmt.Sprint(vb[i]) {
				n++
			}
		}
		if n > 0 {
			any = true
			fmt.Printf("%s: column %s: %d of %d rows differ, max abs %.3g, max rel %.3g\n", rel, c, n, len(va), maxAbs, maxRel)
		}
	}
	if !any {
		fmt.Printf("%s: bytes differ, every value equal (metadata)\n", rel)
	}
}
