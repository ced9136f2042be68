package climate

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Lookup selects how a device's power is read from its matrix.
type Lookup int

const (
	// BinLookup takes the power of the bin containing the sea state; bin
	// edges lie half-way between neighbouring centres and the outer bins are
	// as wide as their neighbour spacing. This is how a power matrix and a
	// joint occurrence table are combined by the device-performance
	// specification IEC TS 62600-100.
	BinLookup Lookup = iota
	// Bilinear interpolates linearly in Hm0 and in the period between the
	// four surrounding bin centres. Edges: between an outer centre and the
	// outer bin edge (half a bin spacing beyond it) the value on the outer
	// centre line is held, not extrapolated; beyond the outer edges the
	// result is that of BinLookup outside the matrix (zero power: below
	// cut-in under the lowest Hm0 edge, outside the matrix elsewhere); zero
	// entries take part in the interpolation like any other, so the power
	// ramps up from a zero bin to its non-zero neighbour. See bilinear.
	Bilinear
)

// Period says which period a power matrix's columns are given over.
type Period int

const (
	// PeriodTe: columns by energy period Te = m_-1/m0 (IEC TS 62600-100).
	PeriodTe Period = iota
	// PeriodTp: columns by peak period Tp, as many data sheets publish them.
	PeriodTp
)

func (p Period) String() string {
	switch p {
	case PeriodTe:
		return "te"
	case PeriodTp:
		return "tp"
	}
	return fmt.Sprintf("Period(%d)", int(p))
}

// ParsePeriod reads "te" or "tp" (any case; "" is Te).
func ParsePeriod(s string) (Period, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "te":
		return PeriodTe, nil
	case "tp":
		return PeriodTp, nil
	}
	return 0, fmt.Errorf("period %q: use \"te\" (energy period) or \"tp\" (peak period)", s)
}

func (l Lookup) String() string {
	switch l {
	case BinLookup:
		return "bin"
	case Bilinear:
		return "bilinear"
	}
	return fmt.Sprintf("Lookup(%d)", int(l))
}

// Device is a wave energy converter described by its power matrix: mean
// electrical power (kW) per sea state, rows by Hm0 bin centre (m) and
// columns by period bin centre (s): Te, or Tp when Period is PeriodTp.
// Outside the matrix (beyond the outer bin edges) the device produces
// nothing.
type Device struct {
	Name    string
	Hm0M    []float64 // row centres, strictly increasing, at least 2
	TeS     []float64 // column centres (s) of the matrix's period (Te or Tp), strictly increasing, at least 2
	PowerKW []float64 // len(Hm0M)*len(TeS), row-major: PowerKW[i*len(TeS)+j]
	Lookup  Lookup
	// Period is the period of the columns. A Tp matrix takes each step's Tp
	// (Step.Tp) when TeOverTp is 0, and Tp = Te / TeOverTp otherwise (a
	// record without Tp: the run's Te/Tp assumption).
	Period   Period
	TeOverTp float64
	// Rated is the device's rated power (kW) from its data sheet; 0 means
	// the largest entry of the matrix. It may not lie below that entry.
	Rated float64
	// HeaderPeriod is the period named by the corner label of the CSV
	// header ("te", "tp"), "" when the label names none (ReadPowerMatrixCSV).
	HeaderPeriod string

	// set by prepare
	rows, cols axis
	ratedKW    float64
}

// RatedKW returns the rated power: Rated when given, else the largest entry
// of the matrix (valid after Config.Validate).
func (d *Device) RatedKW() float64 { return d.ratedKW }

// axis is one side of a matrix: centres and bin edges, with a fast path for
// evenly spaced centres.
type axis struct {
	c       []float64 // centres
	e       []float64 // len(c)+1 edges
	uniform bool
	e0, inv float64 // first edge and 1/width when uniform
}

func newAxis(c []float64) axis {
	n := len(c)
	a := axis{c: c, e: make([]float64, n+1)}
	a.e[0] = c[0] - (c[1]-c[0])/2
	for i := 1; i < n; i++ {
		a.e[i] = (c[i-1] + c[i]) / 2
	}
	a.e[n] = c[n-1] + (c[n-1]-c[n-2])/2
	w := c[1] - c[0]
	a.uniform = true
	for i := 2; i < n; i++ {
		if math.Abs((c[i]-c[i-1])-w) > 1e-9*math.Max(1, math.Abs(w)) {
			a.uniform = false
			break
		}
	}
	a.e0, a.inv = a.e[0], 1/w
	return a
}

// bin returns the index of the bin holding x, -1 below the first edge and
// len(c) at or above the last edge; NaN counts as outside (len(c)).
func (a *axis) bin(x float64) int {
	n := len(a.c)
	if x != x {
		return n // found by fuzzing: NaN passed both edge tests and indexed at MinInt
	}
	if x < a.e[0] {
		return -1
	}
	if x >= a.e[n] {
		return n
	}
	if a.uniform {
		i := int((x - a.e0) * a.inv)
		// guard against rounding at the edges
		if i >= n {
			i = n - 1
		}
		if x < a.e[i] && i > 0 {
			i--
		} else if i+1 < n && x >= a.e[i+1] {
			i++
		}
		return i
	}
	// first inner edge above x is the bin index
	lo, hi := 0, n-1 // search inner edges e[1..n-1]
	for lo < hi {
		m := int(uint(lo+hi) >> 1)
		if a.e[m+1] > x {
			hi = m
		} else {
			lo = m + 1
		}
	}
	return lo
}

// interp returns the lower centre index k and weight t in [0,1] with
// x ~ c[k] + t (c[k+1]-c[k]); inside the outer half-bins t is clamped.
// Callers must have checked that x lies within the outer edges.
func (a *axis) interp(x float64) (int, float64) {
	n := len(a.c)
	if x <= a.c[0] {
		return 0, 0
	}
	if x >= a.c[n-1] {
		return n - 2, 1
	}
	k := sort.SearchFloat64s(a.c, x) - 1 // c[k] < x <= c[k+1]
	if k < 0 {
		k = 0
	}
	return k, (x - a.c[k]) / (a.c[k+1] - a.c[k])
}

func (d *Device) prepare() error {
	if strings.TrimSpace(d.Name) == "" {
		return errors.New("device has no name: give it one (it names its output columns)")
	}
	where := fmt.Sprintf("device %q", d.Name)
	if len(d.Hm0M) < 2 || len(d.TeS) < 2 {
		return fmt.Errorf("%s: power matrix needs at least 2 Hm0 rows and 2 Te columns (has %d x %d)", where, len(d.Hm0M), len(d.TeS))
	}
	if err := increasing(d.Hm0M, where, "Hm0 row centre"); err != nil {
		return err
	}
	if err := increasing(d.TeS, where, "Te column centre"); err != nil {
		return err
	}
	if len(d.PowerKW) != len(d.Hm0M)*len(d.TeS) {
		return fmt.Errorf("%s: %d power values for %d x %d bins", where, len(d.PowerKW), len(d.Hm0M), len(d.TeS))
	}
	if d.Lookup != BinLookup && d.Lookup != Bilinear {
		return fmt.Errorf("%s: unknown lookup %d (use BinLookup or Bilinear)", where, int(d.Lookup))
	}
	d.ratedKW = 0
	for k, p := range d.PowerKW {
		if !(p >= 0) || p > maxDevicePowerKW {
			return fmt.Errorf("%s: power at Hm0 row %d, Te column %d is %g kW: must be finite, >= 0 and below %g",
				where, k/len(d.TeS)+1, k%len(d.TeS)+1, p, float64(maxDevicePowerKW))
		}
		d.ratedKW = math.Max(d.ratedKW, p)
	}
	if d.ratedKW == 0 {
		return fmt.Errorf("%s: every power in the matrix is zero", where)
	}
	if d.Rated != 0 {
		if !(d.Rated >= d.ratedKW) || d.Rated > maxDevicePowerKW {
			return fmt.Errorf("%s: rated power %g kW is below the largest entry of the power matrix (%g kW) or not a finite number: give the data sheet's rated power, at least the matrix maximum",
				where, d.Rated, d.ratedKW)
		}
		d.ratedKW = d.Rated
	}
	if d.Period != PeriodTe && d.Period != PeriodTp {
		return fmt.Errorf("%s: unknown period %d (use PeriodTe or PeriodTp)", where, int(d.Period))
	}
	if d.TeOverTp != 0 && !(d.TeOverTp > 0 && d.TeOverTp <= 1) {
		return fmt.Errorf("%s: Te/Tp ratio %g must lie in (0, 1]", where, d.TeOverTp)
	}
	d.rows, d.cols = newAxis(d.Hm0M), newAxis(d.TeS)
	return nil
}

func increasing(v []float64, where, what string) error {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) || x < 0 {
			return fmt.Errorf("%s: %s %d is %g: must be finite and >= 0", where, what, i+1, x)
		}
		if i > 0 && !(x > v[i-1]) {
			return fmt.Errorf("%s: %s %d (%g) is not greater than the one before (%g): centres must increase", where, what, i+1, x, v[i-1])
		}
	}
	return nil
}

// device operating classes of one sea state
const (
	devInside = iota
	devBelowCutIn
	devOutside
)

// period returns the value of the matrix's period for a step with energy
// period te (teOK: valid) and peak period tp, and whether it is valid.
func (d *Device) period(te float64, teOK bool, tp float64) (float64, bool) {
	switch {
	case d.Period == PeriodTe:
		return te, teOK
	case d.TeOverTp > 0:
		return te / d.TeOverTp, teOK
	}
	return tp, tp >= 0 && tp < maxT
}

// StepPowerKW returns the device's power (kW) in one sea state as a run's
// state counts it (CellState.Add): the matrix's period from te or tp (Te,
// Tp, or Te / TeOverTp), the matrix's lookup, zero below cut-in and beyond
// the matrix's edges; NaN when hm0 or that period is missing. The device
// must have been checked (Config.Validate).
func (d *Device) StepPowerKW(hm0, te, tp float64) float64 {
	if hm0 != hm0 {
		return math.NaN()
	}
	x, ok := d.period(te, te == te, tp)
	if !ok {
		return math.NaN()
	}
	p, _ := d.power(hm0, x)
	return p
}

// power returns the device power (kW) in sea state (hm0, te) and its class;
// te is the matrix's period (Te or Tp, see period).
// Below the lowest Hm0 edge the device is below cut-in; beyond the other
// edges it is outside its matrix (shut down, e.g. survival mode): zero power.
func (d *Device) power(hm0, te float64) (float64, int) {
	i := d.rows.bin(hm0)
	if i < 0 {
		return 0, devBelowCutIn
	}
	j := d.cols.bin(te)
	if i >= len(d.Hm0M) || j < 0 || j >= len(d.TeS) {
		return 0, devOutside
	}
	nc := len(d.TeS)
	var p float64
	if d.Lookup == BinLookup {
		p = d.PowerKW[i*nc+j]
	} else {
		p = bilinear(d, hm0, te)
	}
	if p == 0 {
		return 0, devBelowCutIn
	}
	return p, devInside
}

// bilinear interpolates the power matrix at (hm0, te):
//
//	P = (1-u)(1-t) P[k][l] + (1-u) t P[k][l+1] + u (1-t) P[k+1][l] + u t P[k+1][l+1]
//
// with u, t the fractional positions between the surrounding Hm0 and period
// centres (textbook bilinear interpolation; common practice for power
// matrices, which IEC TS 62600-100 defines by bins only). Edges: u and t are
// clamped to [0, 1], so between an outer centre and the outer bin edge the
// value on the outer centre line is held (no extrapolation); the caller
// (power) has already sent every sea state beyond the outer edges to zero
// power, so a sea state there is never interpolated.
func bilinear(d *Device, hm0, te float64) float64 {
	k, u := d.rows.interp(hm0)
	l, t := d.cols.interp(te)
	nc := len(d.TeS)
	p00, p01 := d.PowerKW[k*nc+l], d.PowerKW[k*nc+l+1]
	p10, p11 := d.PowerKW[(k+1)*nc+l], d.PowerKW[(k+1)*nc+l+1]
	return (1-u)*((1-t)*p00+t*p01) + u*((1-t)*p10+t*p11)
}

// maxDevicePowerKW bounds matrix entries so that the fixed-point energy sums
// cannot overflow.
const maxDevicePowerKW = 1 << 30

// ReadPowerMatrixCSV reads a power matrix in swellgrid's CSV layout:
//
//	# comment lines start with '#'
//	hm0_m\te_s, 5.5, 6.5, 7.5      <- first cell is a label; then period centres (s)
//	0.75,        0,  12,  20       <- Hm0 centre (m), then power (kW) per column
//	1.25,       18,  40,  55
//
// The corner label may say the period of the columns after a backslash or
// slash: "hm0_m\te_s" (Te) or "hm0_m\tp_s" (Tp) set HeaderPeriod and
// Period; a label that names another period (Tz, Tm02, T01, ...) is refused,
// since the matrix cannot be used with Te or Tp; any other label is free and
// leaves the period to the caller (Te by default).
//
// Every row must have as many cells as the header; centres must increase;
// powers must be numbers >= 0 (write 0 where the device does not run). The
// returned device uses BinLookup; set Lookup to Bilinear for interpolation.
// name names the device (and is used in error messages).
func ReadPowerMatrixCSV(r io.Reader, name string) (*Device, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	recs, err := cr.ReadAll()
	if err != nil {
		return nil, fmt.Errorf("power matrix %q: %w", name, err)
	}
	if len(recs) < 3 {
		return nil, fmt.Errorf("power matrix %q: need a header row and at least 2 Hm0 rows (found %d rows)", name, len(recs))
	}
	hdr := recs[0]
	if len(hdr) < 3 {
		return nil, fmt.Errorf("power matrix %q: header row has %d cells: need a label and at least 2 Te centres", name, len(hdr))
	}
	num := func(s string, row, col int, what string) (float64, error) {
		v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("power matrix %q: row %d, column %d (%s): %q is not a finite number", name, row, col, what, s)
		}
		return v, nil
	}
	d := &Device{Name: name}
	hp, err := labelPeriod(hdr[0])
	if err != nil {
		return nil, fmt.Errorf("power matrix %q: row 1, column 1: %w", name, err)
	}
	d.HeaderPeriod = hp
	if hp == "tp" {
		d.Period = PeriodTp
	}
	for j := 1; j < len(hdr); j++ {
		v, err := num(hdr[j], 1, j+1, "Te centre")
		if err != nil {
			return nil, err
		}
		d.TeS = append(d.TeS, v)
	}
	for i, rec := range recs[1:] {
		row := i + 2
		if len(rec) != len(hdr) {
			return nil, fmt.Errorf("power matrix %q: row %d has %d cells, the header has %d: every row needs an Hm0 centre and one power per Te column",
				name, row, len(rec), len(hdr))
		}
		h, err := num(rec[0], row, 1, "Hm0 centre")
		if err != nil {
			return nil, err
		}
		d.Hm0M = append(d.Hm0M, h)
		for j := 1; j < len(rec); j++ {
			p, err := num(rec[j], row, j+1, fmt.Sprintf("power at Te %g s", d.TeS[j-1]))
			if err != nil {
				return nil, err
			}
			d.PowerKW = append(d.PowerKW, p)
		}
	}
	if err := d.prepare(); err != nil {
		return nil, fmt.Errorf("power matrix %q: %w", name, err)
	}
	return d, nil
}

// labelPeriod reads the period named by a matrix's corner label
// ("hm0_m\tp_s" -> "tp"): the part after the last backslash, slash or
// '|', up to '_', ' ', '(' or '[', in lower case. Te and its symbol Tm-1,0
// give "te", Tp "tp", other period symbols an error, anything else "".
func labelPeriod(label string) (string, error) {
	l := strings.ToLower(strings.TrimSpace(label))
	k := strings.LastIndexAny(l, `\/|`)
	if k < 0 {
		return "", nil
	}
	tok := strings.TrimSpace(l[k+1:])
	if e := strings.IndexAny(tok, "_ ([,"); e >= 0 {
		tok = tok[:e]
	}
	switch tok {
	case "te", "tm-10", "tm-1", "t-10", "tm10":
		return "te", nil
	case "tp", "tpeak":
		return "tp", nil
	case "tz", "t02", "tm02", "tm2", "t01", "tm01", "tm", "tmean", "tm1", "ts":
		return "", fmt.Errorf("label %q gives the columns over %s: swellgrid uses power matrices over Te or Tp only; convert the matrix", label, tok)
	}
	return "", nil
}
