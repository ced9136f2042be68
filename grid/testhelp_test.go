package grid

import (
	"fmt"
	"strings"
)

func splitLines(s string) []string {
	var out []string
	for _, l := range strings.Split(strings.TrimSpace(s), "\n") {
		if l != "" {
			out = append(out, l)
		}
	}
	return out
}

// fmtSscan reads "n name valid why... diff area": the validity explanation
// may hold spaces, so the numbers are taken from the end.
func fmtSscan(l string, n *int, name, valid, why *string, diff, area *float64) (int, error) {
	f := strings.Fields(l)
	if len(f) < 6 {
		return 0, fmt.Errorf("too few fields")
	}
	if _, err := fmt.Sscan(f[0], n); err != nil {
		return 0, err
	}
	*name, *valid = f[1], f[2]
	*why = strings.Join(f[3:len(f)-2], " ")
	if _, err := fmt.Sscan(f[len(f)-2], diff); err != nil {
		return 0, err
	}
	if _, err := fmt.Sscan(f[len(f)-1], area); err != nil {
		return 0, err
	}
	return 6, nil
}
