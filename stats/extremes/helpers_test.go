package extremes

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// readColumn reads column col (0-based) of a CSV file under testdata/extremes,
// skipping '#' comment lines and the header line.
func readColumn(t testing.TB, name string, col int) []float64 {
	t.Helper()
	f, err := os.Open("../../testdata/extremes/" + name)
	if err != nil {
		t.Fatalf("open testdata: %v", err)
	}
	defer f.Close()
	var out []float64
	sc := bufio.NewScanner(f)
	header := true
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		if header {
			header = false
			continue
		}
		fields := strings.Split(line, ",")
		v, err := strconv.ParseFloat(fields[col], 64)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		out = append(out, v)
	}
	return out
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6g, want %.6g +- %.3g", what, got, want, tol)
	}
}

func sprintf(format string, a ...any) string { return fmt.Sprintf(format, a...) }
