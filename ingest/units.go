package ingest

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Quantity is what a role's values measure; each has one SI unit that ingest
// converts to.
type Quantity int

const (
	Length    Quantity = iota // m
	Period                    // s
	Angle                     // degree (directions are reported in degrees)
	Frequency                 // Hz
	Density2D                 // m2 Hz-1 rad-1 (= "m2 s rad-1")
	Density1D                 // m2 Hz-1 (= "m2 s")
)

func (q Quantity) target() string {
	return [...]string{"m", "s", "degree", "Hz", "m2 s rad-1 (per Hz per radian)", "m2 s (per Hz)"}[q]
}

// dims is a parsed unit: a factor and integer powers of metre, second and
// plane angle (in radians).
type dims struct {
	factor   float64
	m, s, rd int
}

// unitAtoms are the unit symbols ingest understands (UDUNITS-2 spellings).
var unitAtoms = map[string]dims{
	"m": {1, 1, 0, 0}, "meter": {1, 1, 0, 0}, "meters": {1, 1, 0, 0}, "metre": {1, 1, 0, 0}, "metres": {1, 1, 0, 0},
	"cm": {0.01, 1, 0, 0}, "mm": {0.001, 1, 0, 0},
	"s": {1, 0, 1, 0}, "sec": {1, 0, 1, 0}, "second": {1, 0, 1, 0}, "seconds": {1, 0, 1, 0},
	"hz":  {1, 0, -1, 0},
	"rad": {1, 0, 0, 1}, "radian": {1, 0, 0, 1}, "radians": {1, 0, 0, 1},
	"degree": {math.Pi / 180, 0, 0, 1}, "degrees": {math.Pi / 180, 0, 0, 1}, "deg": {math.Pi / 180, 0, 0, 1},
	"degree_true": {math.Pi / 180, 0, 0, 1}, "degrees_true": {math.Pi / 180, 0, 0, 1},
	"1": {1, 0, 0, 0},
}

// parseUnits parses a product of unit symbols with optional integer powers,
// in the spellings "m2 s rad-1", "m^2 s/rad", "m**2/Hz/deg", "m2.s.rad-1".
func parseUnits(u string) (dims, error) {
	d := dims{factor: 1}
	s := strings.ToLower(strings.TrimSpace(u))
	if s == "" {
		return d, fmt.Errorf("no units")
	}
	s = strings.NewReplacer("**", "", "^", "", "·", " ", "*", " ", ".", " ").Replace(s)
	// Split on '/': every factor after a '/' is in the denominator.
	for k, part := range strings.Split(s, "/") {
		sign := 1
		if k > 0 {
			sign = -1
		}
		for _, tok := range strings.Fields(part) {
			i := strings.IndexAny(tok, "-0123456789")
			name, pow := tok, 1
			if i > 0 {
				name = tok[:i]
				p, err := strconv.Atoi(tok[i:])
				if err != nil {
					return d, fmt.Errorf("unit %q not understood", tok)
				}
				pow = p
			} else if i == 0 && tok != "1" {
				return d, fmt.Errorf("unit %q not understood", tok)
			}
			a, ok := unitAtoms[name]
			if !ok {
				return d, fmt.Errorf("unit %q not known", name)
			}
			pow *= sign
			d.factor *= math.Pow(a.factor, float64(pow))
			d.m += a.m * pow
			d.s += a.s * pow
			d.rd += a.rd * pow
		}
	}
	return d, nil
}

// ConversionFactor returns the factor that converts values in units u to the
// SI unit of quantity q (value_SI = factor * value).
//
// Spectral densities are the delicate case: "m2 s rad-1" is read as per hertz
// per radian for a directional spectrum (the usual hindcast convention), and
// as per radian-per-second for a frequency spectrum (there it can mean nothing
// else). A density per angular frequency converts to per hertz by
// S(f) = 2 pi S(omega), since omega = 2 pi f (common practice; e.g. DNV-RP-C205
// section 3.5). A density per degree converts to per radian by 180/pi.
func ConversionFactor(u string, q Quantity) (float64, error) {
	d, err := parseUnits(u)
	if err != nil {
		return 0, fmt.Errorf("units %q are not convertible to %s (%v)", u, q.target(), err)
	}
	bad := fmt.Errorf("units %q are not convertible to %s", u, q.target())
	switch q {
	case Length:
		if d.m == 1 && d.s == 0 && d.rd == 0 {
			return d.factor, nil
		}
	case Period:
		if d.m == 0 && d.s == 1 && d.rd == 0 {
			return d.factor, nil
		}
	case Angle:
		if d.m == 0 && d.s == 0 && d.rd == 1 {
			return d.factor * 180 / math.Pi, nil
		}
	case Frequency:
		if d.m == 0 && d.s == -1 && d.rd == 0 {
			return d.factor, nil
		}
		if d.m == 0 && d.s == -1 && d.rd == 1 { // rad/s -> Hz
			return d.factor / (2 * math.Pi), nil
		}
	case Density2D:
		// m2 s rad-1: per Hz per angle; m2 s rad-2: per (rad/s) per angle.
		if d.m == 2 && d.s == 1 && d.rd == -1 {
			return d.factor, nil
		}
		if d.m == 2 && d.s == 1 && d.rd == -2 {
			// One rad-1 belongs to the angular frequency, in radians by
			// definition; undo a degree factor only on the direction.
			return d.factor * 2 * math.Pi, nil
		}
	case Density1D:
		if d.m == 2 && d.s == 1 && d.rd == 0 {
			return d.factor, nil
		}
		if d.m == 2 && d.s == 1 && d.rd == -1 {
			return d.factor * 2 * math.Pi, nil
		}
	}
	return 0, bad
}
