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
// plane angle (in radians); hz and deg are the powers of the symbols Hz and
// degree among them (a density "m2 Hz-1" is per hertz by its own words,
// "m2 s" only by reading s as 1/Hz).
type dims struct {
	factor   float64
	m, s, rd int
	hz, deg  int
}

// atom is one unit symbol: its factor and powers of metre, second and
// radian.
type atom struct {
	factor   float64
	m, s, rd int
}

// unitAtoms are the unit symbols ingest understands (UDUNITS-2 spellings).
var unitAtoms = map[string]atom{
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
			switch {
			case name == "hz":
				d.hz += pow
			case a.rd != 0 && a.factor != 1:
				d.deg += pow
			}
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

// DensityBasis is the frequency basis of a spectral density: per hertz or
// per radian per second.
type DensityBasis string

// The density bases.
const (
	PerHz   DensityBasis = "per_hz"
	PerRadS DensityBasis = "per_rad_s"
)

// ParseDensityBasis reads a spec's density basis.
func ParseDensityBasis(s string) (DensityBasis, error) {
	switch b := DensityBasis(strings.ToLower(strings.TrimSpace(s))); b {
	case PerHz, PerRadS:
		return b, nil
	}
	return "", fmt.Errorf("%q is not a density basis: give \"per_hz\" (the density is per hertz) or \"per_rad_s\" (per radian per second)", s)
}

func (b DensityBasis) words() string {
	if b == PerRadS {
		return "per rad/s"
	}
	return "per Hz"
}

// densityUnits is how a spectral density's units were read against the
// units of its axes.
type densityUnits struct {
	factor    float64      // to m2 Hz-1 rad-1 (2-D) or m2 Hz-1 (1-D)
	basis     DensityBasis // the frequency basis chosen
	text      string       // the reading, for a person
	ambiguous bool         // the units admit another reading
	other     string       // that reading
	stated    bool         // the spec stated the basis
}

// readDensityUnits reads the units u (without a logarithm wrapper) of a
// spectral density of quantity q (Density2D or Density1D) whose frequency
// coordinate is in rad/s (axisRadS) or in Hz, and whose direction
// coordinate (2-D) is in radians (dirRad) or degrees; stated is the spec's
// units.<role>_basis ("" none), key its name.
//
// A density per rad/s converts to per Hz by S(f) = 2 pi S(omega), omega =
// 2 pi f, and per degree to per radian by 180/pi (common practice; e.g.
// DNV-RP-C205 section 3.5). The frequency basis is explicit in "Hz-1"
// (per Hz) and in a second radian (2-D "m2 s rad-2", 1-D "m2 s rad-1": per
// rad/s). The units are ambiguous where "s" must stand for the frequency
// and the axis says otherwise: "m2 s rad-1" (2-D) and "m2 s" (1-D) on an
// axis in rad/s are per Hz as written, but per rad/s if the writer left out
// the radian of rad/s; a 1-D "m2 s rad-1" on an axis in Hz is per rad/s as
// written, but per Hz if the rad-1 was copied from a directional
// spectrum's units. An ambiguous reading is kept as written unless the
// spec states the basis; the caller records it, and a run stops on it.
func readDensityUnits(u string, q Quantity, axisRadS, dirRad bool, stated DensityBasis, key string) (densityUnits, error) {
	d, err := parseUnits(u)
	if err != nil {
		return densityUnits{}, fmt.Errorf("units %q are not convertible to %s (%v)", u, q.target(), err)
	}
	axis := "Hz"
	if axisRadS {
		axis = "rad s-1"
	}
	bad := fmt.Errorf("units %q are not convertible to %s", u, q.target())
	var r densityUnits
	var written DensityBasis // as the units are written
	explicit := false        // the units say the basis in their own words
	perAngle := ""
	switch q {
	case Density2D:
		if d.m != 2 || d.s != 1 || (d.rd != -1 && d.rd != -2) {
			return r, bad
		}
		written, explicit = PerHz, d.hz == -1
		if d.rd == -2 {
			written, explicit = PerRadS, true
		}
		perAngle = " per radian"
		if d.deg < 0 {
			perAngle = " per degree (x 180/pi to per radian)"
			if dirRad {
				perAngle += "; the direction coordinate is in radians"
			}
		}
	case Density1D:
		if d.m != 2 || d.s != 1 || (d.rd != 0 && d.rd != -1) || d.rd == -1 && d.hz == -1 {
			return r, bad
		}
		written, explicit = PerHz, d.hz == -1
		if d.rd == -1 {
			written, explicit = PerRadS, false
		}
	default:
		return r, bad
	}
	// factor of the units as written (rad/s densities already x 2 pi)
	f := d.factor
	if written == PerRadS {
		f *= 2 * math.Pi
	}
	other := PerRadS
	if written == PerRadS {
		other = PerHz
	}
	// the factor of the other reading
	fOther := d.factor * 2 * math.Pi
	if other == PerHz {
		fOther = d.factor
	}
	otherText := ""
	switch {
	case q == Density2D && other == PerRadS:
		otherText = "per rad/s" + perAngle + " (the radian of rad/s left out of the units), x 2 pi to per Hz"
	case q == Density2D:
		otherText = "per Hz" + perAngle
	case other == PerRadS:
		otherText = "per rad/s (the radian of rad/s left out of the units), x 2 pi to per Hz"
	default:
		otherText = "per Hz (the rad-1 copied from a directional spectrum's units)"
	}
	writtenText := written.words() + perAngle
	if written == PerRadS {
		writtenText += ", x 2 pi to per Hz"
	}
	r = densityUnits{factor: f, basis: written, text: fmt.Sprintf("units %q read %s; the frequency coordinate is in %s", u, writtenText, axis)}
	ambiguous := !explicit && (written == PerHz && axisRadS || written == PerRadS && !axisRadS && q == Density1D)
	switch {
	case stated != "" && stated != written && explicit:
		return r, fmt.Errorf("units %q are %s by their own words, but the spec's %s = %q says %s: remove the key, or correct the units with units.%s", u, written.words(), key, stated, stated.words(), strings.TrimSuffix(strings.TrimPrefix(key, "units."), "_basis"))
	case stated != "" && stated != written:
		r.factor, r.basis, r.stated = fOther, other, true
		r.text = fmt.Sprintf("units %q read %s, as the spec's %s = %q says; the frequency coordinate is in %s", u, otherText, key, stated, axis)
		r.ambiguous, r.other = ambiguous, writtenText+" (as written)"
	case stated != "":
		r.stated = true
		r.text += fmt.Sprintf(", as the spec's %s = %q says", key, stated)
		r.ambiguous = ambiguous
		if ambiguous {
			r.other = otherText
		}
	case ambiguous:
		r.ambiguous, r.other = true, otherText
	case written == PerRadS && !axisRadS:
		r.text += " (a density per rad/s on a frequency coordinate in Hz: converted by 2 pi)"
	}
	return r, nil
}
