package layout

import (
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"swellgrid/export/contract"
	"swellgrid/pipelines/engine"
	"testing"
)

// productRoots are the directories (relative to the module root) of the
// product: every package under them ships in the swellgrid binary.
var productRoots = []string{"ingest", "grid", "stats", "export", "pipelines", "cmd/swellgrid"}

// tooling are the import paths a product package's non-test files must not
// import: the test and benchmark helpers, and every program under cmd/ other
// than swellgrid itself.
var tooling = []string{
	"swellgrid/internal/testtool",
	"swellgrid/internal/bench",
	"swellgrid/internal/corpus",
	"swellgrid/internal/parquetread",
	"swellgrid/internal/runcheck",
	"swellgrid/internal/layout",
}

// isTooling reports whether the import path is tooling (a package in
// tooling, or one below it, or a program under cmd/ other than swellgrid).
func isTooling(path string) bool {
	for _, t := range tooling {
		if path == t || strings.HasPrefix(path, t+"/") {
			return true
		}
	}
	if rest, ok := strings.CutPrefix(path, "swellgrid/cmd/"); ok {
		return rest != "swellgrid" && !strings.HasPrefix(rest, "swellgrid/")
	}
	return false
}

// productImports returns, for every non-test Go file under the product roots
// of the module at root (testdata directories skipped), its import paths.
func productImports(t *testing.T, root string) map[string][]string {
	t.Helper()
	out := map[string][]string{}
	fset := token.NewFileSet()
	for _, r := range productRoots {
		err := filepath.WalkDir(filepath.Join(root, r), func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if d.IsDir() {
				if d.Name() == "testdata" {
					return filepath.SkipDir
				}
				return nil
			}
			if !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
				return nil
			}
			f, err := parser.ParseFile(fset, p, nil, parser.ImportsOnly)
			if err != nil {
				return err
			}
			rel, _ := filepath.Rel(root, p)
			out[rel] = []string{}
			for _, im := range f.Imports {
				path, err := strconv.Unquote(im.Path.Value)
				if err != nil {
					return err
				}
				out[rel] = append(out[rel], path)
			}
			return nil
		})
		if err != nil {
			t.Fatalf("reading the product package %s: %v", r, err)
		}
	}
	return out
}

// No product package imports tooling outside its tests (DEVELOPERS.md,
// "Layout and import direction"; issue 28: no benchmark or corpus tooling
// in product packages).
func TestProductImportsNoTooling(t *testing.T) {
	files := productImports(t, filepath.Join("..", ".."))
	// The walk must have seen the product, or the check proves nothing.
	for _, f := range []string{"pipelines/engine/run.go", "ingest/reader.go", "cmd/swellgrid/main.go", "export/parquet.go"} {
		if _, ok := files[filepath.FromSlash(f)]; !ok {
			t.Fatalf("the walk did not see %s (%d files seen): is the module root ../..?", f, len(files))
		}
	}
	var bad []string
	for f, imps := range files {
		for _, im := range imps {
			if isTooling(im) {
				bad = append(bad, f+" imports "+im)
			}
		}
	}
	sort.Strings(bad)
	for _, b := range bad {
		t.Errorf("%s: tooling is imported only from _test.go files; move the use into a test, or the code out of the product", b)
	}
}

// The classification itself: tooling paths, and product paths that share a
// prefix with them.
func TestIsTooling(t *testing.T) {
	for path, want := range map[string]bool{
		"swellgrid/internal/bench":         true,
		"swellgrid/internal/corpus":        true,
		"swellgrid/internal/parquetread":   true,
		"swellgrid/internal/testtool":      true,
		"swellgrid/internal/runcheck":      true,
		"swellgrid/cmd/mkfixtures":         true,
		"swellgrid/cmd/sgdiff":             true,
		"swellgrid/cmd/mkcorpus":           true,
		"swellgrid/cmd/swellgrid":          false,
		"swellgrid/internal/benchmarkless": false,
		"swellgrid/pipelines/engine":       false,
		"swellgrid/pipelines/synth":        false,
		"swellgrid/export/rundir":          false,
		"github.com/fhs/go-netcdf/netcdf":  false,
	} {
		if got := isTooling(path); got != want {
			t.Errorf("isTooling(%q) = %v, want %v", path, got, want)
		}
	}
}

// Limits on a package made from pipelines (issue 28: a house a newcomer can
// live in): its non-test lines and its exported top-level names (types,
// functions, variables, constants; methods and fields not counted).
const (
	maxPackageLines    = 6000
	maxPackageExported = 50
)

// Every package under pipelines/ stays within maxPackageLines non-test lines
// and maxPackageExported exported names: a package that grows past them does
// more than one job and is split by job (DEVELOPERS.md, "Layout and import
// direction").
func TestPipelinesPackageSize(t *testing.T) {
	root := filepath.Join("..", "..", "pipelines")
	lines, exported := map[string]int{}, map[string]int{}
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && d.Name() == "testdata" {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
			return nil
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		dir, _ := filepath.Rel(root, filepath.Dir(p))
		lines[dir] += strings.Count(string(b), "\n")
		f, err := parser.ParseFile(fset, p, b, 0)
		if err != nil {
			return err
		}
		for _, n := range topNames(f) {
			if ast.IsExported(n) {
				exported[dir]++
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(lines) < 5 || lines["engine"] == 0 {
		t.Fatalf("the walk saw %d packages under %s (%v): is the module root ../..?", len(lines), root, lines)
	}
	for dir, n := range lines {
		if n > maxPackageLines {
			t.Errorf("pipelines/%s: %d non-test lines, more than %d: split it by job", dir, n, maxPackageLines)
		}
		if e := exported[dir]; e > maxPackageExported {
			t.Errorf("pipelines/%s: %d exported names, more than %d: split it by job or unexport what only it uses", dir, e, maxPackageExported)
		}
	}
}

// topNames lists the top-level declared names of f (no methods).
func topNames(f *ast.File) []string {
	var out []string
	for _, d := range f.Decls {
		switch d := d.(type) {
		case *ast.FuncDecl:
			if d.Recv == nil {
				out = append(out, d.Name.Name)
			}
		case *ast.GenDecl:
			for _, s := range d.Specs {
				switch s := s.(type) {
				case *ast.TypeSpec:
					out = append(out, s.Name.Name)
				case *ast.ValueSpec:
					for _, n := range s.Names {
						out = append(out, n.Name)
					}
				}
			}
		}
	}
	return out
}

// genericColumnWords are cells.parquet column names that are also ordinary
// keys elsewhere (a GeoJSON member, a log key, a progress label): their
// literals are not counted.
var genericColumnWords = map[string]bool{"name": true, "steps": true}

// A result column of cells.parquet (cell_id, lon and lat aside) is spelled as
// a string literal in at most two non-test files: the run's schema and the
// output contract (export/contract); everything else takes the contract's
// constants and builders (issue 28). A pattern ("aep_<device>_mwh") counts
// by its fixed prefix as a whole literal ("aep_"). Struct tags are not
// literals here.
func TestColumnNamesNotRepeated(t *testing.T) {
	root := filepath.Join("..", "..")
	lits := map[string]map[string]bool{} // literal -> files
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (d.Name() == "testdata" || strings.HasPrefix(d.Name(), ".") && p != root) {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, p, nil, 0)
		if err != nil {
			return err
		}
		tags := map[*ast.BasicLit]bool{}
		ast.Inspect(f, func(n ast.Node) bool {
			if fl, ok := n.(*ast.Field); ok && fl.Tag != nil {
				tags[fl.Tag] = true
			}
			return true
		})
		rel, _ := filepath.Rel(root, p)
		ast.Inspect(f, func(n ast.Node) bool {
			if bl, ok := n.(*ast.BasicLit); ok && bl.Kind == token.STRING && !tags[bl] {
				if v, err := strconv.Unquote(bl.Value); err == nil {
					if lits[v] == nil {
						lits[v] = map[string]bool{}
					}
					lits[v][rel] = true
				}
			}
			return true
		})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for _, c := range engine.Schema() {
		if c.File != contract.CellsFile || c.Name == contract.ColCellID || c.Name == contract.ColLon || c.Name == contract.ColLat || genericColumnWords[c.Name] {
			continue
		}
		lit := c.Name
		if i := strings.IndexByte(lit, '<'); i >= 0 {
			lit = lit[:i]
		}
		checked++
		if files := lits[lit]; len(files) > 2 {
			var fs []string
			for f := range files {
				fs = append(fs, f)
			}
			sort.Strings(fs)
			t.Errorf("cells.parquet column %s: the literal %q is in %d non-test files %v; take the constant or builder of export/contract", c.Name, lit, len(fs), fs)
		}
	}
	if checked < 30 {
		t.Fatalf("only %d cells.parquet columns checked: is the schema read?", checked)
	}
}
