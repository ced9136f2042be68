// Package testtool is for tests only. It finds the outside programs and
// Python modules that tests use as references (ncgen, ncdump, GDAL, Slurm,
// node, Debian's python3 with numpy/scipy/netcdf4, ...) and decides what a
// test does when one is missing: outside CI it skips, saying what to install;
// under CI (environment CI=true, set by .ci/run) it fails, naming the tool, so
// that CI cannot pass having run no outside check. `make test` installs every
// tool named here (TEST_DEBS and the npm DuckDB package in the Makefile).
//
// It imports no package of swellgrid and knows nothing of what is tested.
package testtool

import (
	"fmt"
	"os"
	"os/exec"
	"strings"
	"testing"
)

// CI reports whether the tests run under CI (CI=true or CI=1).
func CI() bool {
	v := strings.ToLower(os.Getenv("CI"))
	return v == "true" || v == "1"
}

// Unavailable stops the test because the machine lacks something it needs:
// a skip, or under CI a failure. The message names what is missing.
func Unavailable(t testing.TB, format string, args ...any) {
	t.Helper()
	msg := fmt.Sprintf(format, args...)
	if CI() {
		t.Fatalf("CI=true: %s (a missing outside tool is a failure under CI; `make test-deps` installs it)", msg)
	}
	t.Skip(msg + " (skipped outside CI)")
}

// Need returns the path of the program prog, or stops the test (see
// Unavailable) naming prog and the Debian package pkg that provides it.
func Need(t testing.TB, prog, pkg string) string {
	t.Helper()
	p, err := exec.LookPath(prog)
	if err != nil {
		Unavailable(t, "%s not found (Debian package %s)", prog, pkg)
	}
	return p
}

// Have reports whether prog is installed; under CI it is always true, so a
// test that checks more when a tool is there cannot quietly check less: the
// following Need then fails naming the tool.
func Have(prog string) bool {
	if CI() {
		return true
	}
	_, err := exec.LookPath(prog)
	return err == nil
}

// Python is Debian's interpreter; the python3 first on PATH (a pyenv shim, a
// virtualenv) may lack the Debian modules.
const Python = "/usr/bin/python3"

// debOf names the Debian package of a Python module.
var debOf = map[string]string{
	"numpy": "python3-numpy", "scipy": "python3-scipy", "netCDF4": "python3-netcdf4",
	"xarray": "python3-xarray", "cftime": "python3-cftime", "osgeo": "python3-gdal",
	"qgis.core": "python3-qgis", "matplotlib": "python3-matplotlib",
}

// NeedPython returns Debian's python3 if it imports every module, or stops
// the test (see Unavailable) naming the modules and their Debian packages.
func NeedPython(t testing.TB, modules ...string) string {
	t.Helper()
	if _, err := os.Stat(Python); err != nil {
		Unavailable(t, "%s not found (Debian package python3)", Python)
	}
	var missing []string
	for _, m := range modules {
		if err := exec.Command(Python, "-c", "import "+m).Run(); err != nil {
			pkg := debOf[m]
			if pkg == "" {
				pkg = "python3-" + strings.ToLower(m)
			}
			missing = append(missing, m+" ("+pkg+")")
		}
	}
	if len(missing) > 0 {
		Unavailable(t, "%s cannot import %s", Python, strings.Join(missing, ", "))
	}
	return Python
}
