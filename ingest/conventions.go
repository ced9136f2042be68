package ingest

import (
	"fmt"
	"math"
	"regexp"
	"sort"
	"strings"
)

// A spectrum's conventions are data: the direction convention of its
// direction coordinate, the encoding of its densities (linear or a
// logarithm) and the basis of its density units (per Hz or per rad/s, per
// radian or per degree) are read from every attribute the file gives
// (standard_name, long_name, comment, units). Where the attributes disagree
// with each other or with the spec, the file is refused naming the key that
// settles it; where a units string admits two readings, the reading chosen
// is recorded (Reading) and a run stops until the spec states it.

// DirConvention is how the values of a spectral direction coordinate are
// measured.
type DirConvention string

// The direction conventions swellgrid reads.
const (
	// NauticalFrom is a bearing (clockwise from north) of the direction
	// the waves come from: the convention of every direction swellgrid
	// writes.
	NauticalFrom DirConvention = "nautical_from"
	// NauticalTo is a bearing of the direction the waves go to.
	NauticalTo DirConvention = "nautical_to"
	// Cartesian is an angle counterclockwise from east of the direction
	// the waves go to (the mathematical convention).
	Cartesian DirConvention = "cartesian"
)

// DirConventions lists the conventions, for messages.
var DirConventions = []DirConvention{NauticalFrom, NauticalTo, Cartesian}

// ParseDirConvention reads a spec's direction convention: "nautical_from"
// (or "from"), "nautical_to" (or "to"), "cartesian"; "" is none.
func ParseDirConvention(s string) (DirConvention, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "":
		return "", nil
	case "from", "nautical_from":
		return NauticalFrom, nil
	case "to", "nautical_to":
		return NauticalTo, nil
	case "cartesian":
		return Cartesian, nil
	}
	return "", fmt.Errorf("%q is not a direction convention: give \"nautical_from\" (or \"from\"), \"nautical_to\" (or \"to\") or \"cartesian\"", s)
}

// Describe says what the convention means, for a person.
func (c DirConvention) Describe() string {
	switch c {
	case NauticalFrom:
		return "nautical, coming from (clockwise from north)"
	case NauticalTo:
		return "nautical, going to (clockwise from north), converted to coming from by d + 180"
	case Cartesian:
		return "Cartesian, going to (counterclockwise from east), converted to nautical coming from by 270 - d"
	}
	return "unknown"
}

// ToNauticalFrom converts a direction d in degrees stored in convention c to
// the nautical "from" direction in [0, 360) degrees:
//
//	nautical from:  d
//	nautical to:    d + 180
//	Cartesian:      270 - d
//
// A Cartesian angle d (counterclockwise from east, going to) points to the
// bearing 90 - d; the waves come from the opposite bearing, 90 - d + 180 =
// 270 - d (common practice: the conversion between the mathematical and
// the nautical conventions, e.g. Cartesian 0 = going east = coming from 270).
func (c DirConvention) ToNauticalFrom(d float64) float64 {
	switch c {
	case NauticalTo:
		d += 180
	case Cartesian:
		d = 270 - d
	}
	d = math.Mod(d, 360)
	if d < 0 {
		d += 360
	}
	return d
}

// attr is one attribute of a variable as found in the file (or the spec).
type attr struct{ name, value string }

func (a attr) String() string { return fmt.Sprintf("%s %q", a.name, a.value) }

// quoteAttrs quotes the attributes that are set, or says there are none.
func quoteAttrs(as []attr) string {
	var q []string
	for _, a := range as {
		if a.value != "" {
			q = append(q, a.String())
		}
	}
	if len(q) == 0 {
		return "no standard_name, long_name or comment"
	}
	return strings.Join(q, ", ")
}

// dirOfStandardName is the convention a direction's CF standard_name says:
// names with "from_direction" or "to_direction" are bearings clockwise from
// north (CF standard name table: "a bearing in the usual geographical
// sense, measured positive clockwise from due north"; quoted from memory).
func dirOfStandardName(sn string) (DirConvention, bool) {
	switch {
	case strings.Contains(sn, "to_direction"):
		return NauticalTo, true
	case strings.Contains(sn, "from_direction"):
		return NauticalFrom, true
	}
	return "", false
}

var wordRE = regexp.MustCompile(`[a-z]+`)

// dirOfText is the convention a free text (long_name, comment) states, by
// its words: Cartesian ("cartesian", "counterclockwise", "anticlockwise",
// "mathematical", "trigonometric"), going to ("going to", "towards",
// "propagation", "direction to", "to direction", "oceanographic") or coming
// from ("coming from", "direction from", "from direction", "from which",
// "meteorological"). A reference alone ("clockwise from north", "from
// east", "nautical") says neither from nor to. speaks is false when the
// text says nothing of the convention; unclear is true when it says
// contradictory things (from and to, or a Cartesian "from", which swellgrid
// does not read).
func dirOfText(text string) (c DirConvention, speaks, unclear bool) {
	w := wordRE.FindAllString(strings.ToLower(text), -1)
	has := func(s string) bool {
		for _, x := range w {
			if x == s {
				return true
			}
		}
		return false
	}
	pair := func(a, b string) bool {
		for i := 0; i+1 < len(w); i++ {
			if w[i] == a && w[i+1] == b {
				return true
			}
		}
		return false
	}
	cart := has("cartesian") || has("counterclockwise") || has("anticlockwise") || has("mathematical") ||
		has("trigonometric") || pair("counter", "clockwise") || pair("anti", "clockwise")
	to := has("towards") || has("toward") || has("propagation") || has("oceanographic") ||
		pair("to", "direction") || pair("direction", "to") || pair("going", "to") || pair("propagating", "to") ||
		pair("travelling", "to") || pair("traveling", "to") || pair("heading", "to") || pair("moving", "to")
	from := has("meteorological") || pair("coming", "from") || pair("comes", "from") || pair("come", "from") || pair("arriving", "from") ||
		pair("from", "direction") || pair("direction", "from") || pair("from", "which")
	switch {
	case cart && from:
		return "", true, true
	case cart:
		return Cartesian, true, false
	case to && from:
		return "", true, true
	case to:
		return NauticalTo, true, false
	case from:
		return NauticalFrom, true, false
	}
	return "", false, false
}

// dirSpec is what a spec says of the direction convention.
type dirSpec struct {
	conv  DirConvention // "" none
	force bool          // the spec's convention wins over the file's attributes
}

// resolveDirection decides the convention of a spectral direction
// coordinate from its standard_name, long_name and comment and the spec:
//
//   - the attributes that state a convention must agree; the spec may then
//     only repeat it (a spec that contradicts agreeing attributes is
//     refused, unless input.direction_convention_force is set);
//   - attributes that disagree are refused, quoting each, unless the spec
//     chooses one of them (or forces another);
//   - where no attribute states one, the spec must.
//
// It returns the convention and what decided it.
func resolveDirection(path, name string, attrs []attr, sp dirSpec) (DirConvention, string, error) {
	type said struct {
		a attr
		c DirConvention
	}
	var clear []said
	var unclear []attr
	for _, a := range attrs {
		if a.value == "" {
			continue
		}
		if a.name == "standard_name" {
			if c, ok := dirOfStandardName(a.value); ok {
				clear = append(clear, said{a, c})
			}
			continue
		}
		if c, speaks, unc := dirOfText(a.value); unc {
			unclear = append(unclear, a)
		} else if speaks {
			clear = append(clear, said{a, c})
		}
	}
	distinct := map[DirConvention][]attr{}
	var order []DirConvention
	for _, s := range clear {
		if distinct[s.c] == nil {
			order = append(order, s.c)
		}
		distinct[s.c] = append(distinct[s.c], s.a)
	}
	found := quoteAttrs(attrs)
	choices := fmt.Sprintf("%q, %q or %q", NauticalFrom, NauticalTo, Cartesian)
	specSays := fmt.Sprintf("the spec's input.direction_convention = %q", sp.conv)
	says := func(c DirConvention) string {
		var q []string
		for _, a := range distinct[c] {
			q = append(q, a.String())
		}
		return fmt.Sprintf("%s (%s)", strings.Join(q, " and "), c)
	}
	switch {
	case len(order) == 1:
		fc := order[0]
		switch {
		case sp.conv == "":
			return fc, says(fc), nil
		case sp.conv == fc:
			return fc, says(fc) + ", as " + specSays + " says", nil
		case sp.force:
			return sp.conv, specSays + " with input.direction_convention_force, over " + says(fc), nil
		}
		return "", "", errf(path, name, "%s contradicts the direction coordinate's %s: remove input.direction_convention from the spec (the file says %s), or, if the file's attributes are wrong, keep it and set input.direction_convention_force = true",
			specSays, says(fc), fc)
	case len(order) > 1:
		var parts []string
		for _, c := range order {
			parts = append(parts, says(c))
		}
		disagree := strings.Join(parts, " but ")
		switch {
		case sp.conv != "" && distinct[sp.conv] != nil:
			return sp.conv, specSays + ", choosing between " + disagree, nil
		case sp.conv != "" && sp.force:
			return sp.conv, specSays + " with input.direction_convention_force, over " + disagree, nil
		case sp.conv != "":
			return "", "", errf(path, name, "the direction coordinate's attributes disagree: %s; %s agrees with neither: set input.direction_convention to the one that is right (%s), or set input.direction_convention_force = true if both attributes are wrong",
				disagree, specSays, choices)
		}
		return "", "", errf(path, name, "the direction coordinate's attributes disagree: %s; a wrong choice turns every direction (Cartesian and nautical differ by up to 180 degrees): set input.direction_convention in the spec to the one that is right (%s)",
			disagree, choices)
	}
	if sp.conv != "" {
		return sp.conv, specSays + " (the file's " + found + " say nothing of it)", nil
	}
	why := "say nothing of its convention"
	if len(unclear) > 0 {
		var q []string
		for _, a := range unclear {
			q = append(q, a.String())
		}
		why = "leave its convention unclear (" + strings.Join(q, ", ") + " name both \"from\" and \"to\", or a Cartesian \"from\")"
	}
	return "", "", errf(path, name, "the direction coordinate's attributes (%s) %s: no standard_name sea_surface_wave_from_direction or sea_surface_wave_to_direction, no long_name or comment saying \"coming from\", \"going to\" or \"Cartesian\"; set input.direction_convention in the spec (%s)",
		found, why, choices)
}

// Encoding is how the values of a spectral density are stored.
type Encoding string

// The density encodings swellgrid reads.
const (
	Linear Encoding = "linear"
	Log10  Encoding = "log10" // the stored value is log10 of the density: decoded as 10^x
	Ln     Encoding = "ln"    // the stored value is the natural logarithm: decoded as e^x
)

// ParseEncoding reads a spec's density encoding.
func ParseEncoding(s string) (Encoding, error) {
	switch e := Encoding(strings.ToLower(strings.TrimSpace(s))); e {
	case Linear, Log10, Ln:
		return e, nil
	}
	return "", fmt.Errorf("%q is not a density encoding: give \"linear\", \"log10\" or \"ln\"", s)
}

// decode turns a stored value into the density it encodes:
//
//	linear: x;  log10: 10^x;  ln: e^x.
func (e Encoding) decode(x float64) float64 {
	switch e {
	case Log10:
		return math.Pow(10, x)
	case Ln:
		return math.Exp(x)
	}
	return x
}

var (
	// unitsLogRE matches a units string wrapped in a logarithm:
	// "log10(m2 s rad-1)", "lg(re 1 m2 s)", "ln(m2 s)", "log(m2 s)".
	unitsLogRE = regexp.MustCompile(`^\s*(log10|log_10|lg|ln|log)\s*\(\s*(?:re\s+(?:1\s+)?)?(.*?)\s*\)\s*$`)
	log10RE    = regexp.MustCompile(`log\s*_?\s*10|log10|\blg\s*\(|base[\s-]*10\b|decimal log|common log`)
	lnRE       = regexp.MustCompile(`natural log|\bln\s*\(|\bln\b|log\s*_?\s*e\b|base[\s-]*e\b|napierian`)
	// a logarithm of unstated base ("log(...)", "logarithm of"), but not
	// "log-spaced" or "logarithmically spaced" (of the frequencies)
	logRE = regexp.MustCompile(`\blog\s*\(|\blogarithm\b|\blog of\b|\blog-?transformed\b`)
)

// splitLogUnits separates a logarithm wrapper from a units string: enc is
// Log10 or Ln for "log10(...)", "lg(...)" or "ln(...)", "" for plain units;
// baseless is true for "log(...)", whose base is not stated.
func splitLogUnits(u string) (enc Encoding, inner string, baseless bool) {
	m := unitsLogRE.FindStringSubmatch(strings.ToLower(u))
	if m == nil {
		return "", u, false
	}
	inner = m[2] // units are read without regard to case (parseUnits)
	switch m[1] {
	case "log10", "log_10", "lg":
		return Log10, inner, false
	case "ln":
		return Ln, inner, false
	}
	return "", inner, true
}

// encodingOfText is the encoding a long_name or comment states: log10 or
// ln by their names ("log10", "base 10", "natural logarithm", "ln"), a
// logarithm of unstated base as baseless; speaks is false when the text
// says nothing of logarithms.
func encodingOfText(text string) (e Encoding, speaks, baseless bool) {
	t := strings.ToLower(text)
	l10, ln := log10RE.MatchString(t), lnRE.MatchString(t)
	switch {
	case l10 && ln:
		return "", true, true
	case l10:
		return Log10, true, false
	case ln:
		return Ln, true, false
	case logRE.MatchString(t):
		return "", true, true
	}
	return "", false, false
}

// encSpec is what a spec says of a density's encoding and units.
type encSpec struct {
	enc       Encoding // units.<role>_encoding ("" none)
	units     string   // units.<role> ("" none)
	encKey    string   // "units.spectrum2d_encoding"
	unitsKey  string   // "units.spectrum2d"
	fileUnits string   // the variable's units attribute
}

// resolveEncoding decides the encoding of a spectral density from its units
// (the attribute, or units.<role> of the spec, which replaces it), its
// long_name and comment, and units.<role>_encoding. The spec's encoding key
// decides when set (a [units] key replaces what the file says; a file
// attribute it contradicts is quoted in the reading); otherwise the
// attributes that state an encoding must agree, one of unstated base must
// be settled by the key, and none means linear. It returns the encoding,
// what decided it, and the units without their logarithm wrapper.
func resolveEncoding(path, name string, sp encSpec, longName, comment string) (Encoding, string, string, error) {
	units, unitsName := sp.fileUnits, "units"
	if sp.units != "" {
		units, unitsName = sp.units, "spec "+sp.unitsKey
	}
	uenc, inner, ubaseless := splitLogUnits(units)
	type said struct {
		a attr
		e Encoding
	}
	var clear []said
	var baseless []attr
	ua := attr{unitsName, units}
	if ubaseless {
		baseless = append(baseless, ua)
	} else if uenc != "" {
		clear = append(clear, said{ua, uenc})
	}
	for _, a := range []attr{{"long_name", longName}, {"comment", comment}} {
		if a.value == "" {
			continue
		}
		if e, speaks, bl := encodingOfText(a.value); bl {
			baseless = append(baseless, a)
		} else if speaks {
			clear = append(clear, said{a, e})
		}
	}
	quote := func(ss []said) string {
		var q []string
		for _, s := range ss {
			q = append(q, fmt.Sprintf("%s (%s)", s.a, s.e))
		}
		return strings.Join(q, ", ")
	}
	if sp.enc != "" {
		if sp.units != "" && uenc != "" && uenc != sp.enc {
			return "", "", "", errf(path, name, "the spec contradicts itself: %s = %q says %s but %s = %q; make them agree", sp.unitsKey, sp.units, uenc, sp.encKey, sp.enc)
		}
		src := fmt.Sprintf("spec %s = %q", sp.encKey, sp.enc)
		var over []said
		for _, s := range clear {
			if s.e != sp.enc {
				over = append(over, s)
			}
		}
		if len(over) > 0 {
			src += ", over the file's " + quote(over)
		}
		return sp.enc, src, inner, nil
	}
	if sp.units != "" && uenc != "" {
		return uenc, fmt.Sprintf("spec %s = %q", sp.unitsKey, sp.units), inner, nil
	}
	set := map[Encoding]bool{}
	for _, s := range clear {
		set[s.e] = true
	}
	keyHelp := fmt.Sprintf("set %s in the spec to \"linear\", \"log10\" or \"ln\"", sp.encKey)
	switch {
	case len(set) > 1:
		return "", "", "", errf(path, name, "the density's attributes disagree on how its values are stored: %s; %s (a wrong choice changes every density by orders of magnitude)", quote(clear), keyHelp)
	case len(set) == 1 && len(baseless) == 0:
		return clear[0].e, quote(clear), inner, nil
	case len(baseless) > 0:
		var q []string
		for _, a := range baseless {
			q = append(q, a.String())
		}
		also := ""
		if len(clear) > 0 {
			also = "; " + quote(clear)
		}
		return "", "", "", errf(path, name, "the density is stored as a logarithm of unstated base (%s%s): %s", strings.Join(q, ", "), also, keyHelp)
	}
	return Linear, fmt.Sprintf("no attribute saying the values are logarithms (%s)", quoteAttrs([]attr{ua, {"long_name", longName}, {"comment", comment}})), inner, nil
}

// Reading records how one convention of a spectral variable was read: what
// was chosen, what decided it, and, where the units admit another reading,
// that reading and the spec key that states which is meant. Files with the
// same reading share one entry.
type Reading struct {
	Role     Role   `json:"role"`
	Variable string `json:"variable"`
	// What is "direction convention", "density encoding" or "density units".
	What    string `json:"what"`
	Reading string `json:"reading"`
	From    string `json:"decided_by"`
	// Ambiguous: the units admit Other as well; a run stops unless the
	// spec states the reading (Stated) with Key.
	Ambiguous bool   `json:"ambiguous,omitempty"`
	Other     string `json:"other_reading,omitempty"`
	Key       string `json:"key,omitempty"`
	Stated    bool   `json:"stated_by_spec,omitempty"`
	Files     int    `json:"files"`
	First     string `json:"first_file"`
	Last      string `json:"last_file,omitempty"`
}

// Unsettled reports whether the reading is ambiguous and the spec has not
// stated it: a run must not go on with it.
func (r *Reading) Unsettled() bool { return r.Ambiguous && !r.Stated }

// Refusal says why an unsettled reading stops a run and what to set.
func (r *Reading) Refusal() string {
	where := r.First
	if r.Files > 1 {
		where = fmt.Sprintf("%s .. %s (%d files)", r.First, r.Last, r.Files)
	}
	return fmt.Sprintf("%s: variable %q (role %s): the %s are ambiguous: %s; but they may mean %s, which changes power by a factor 2 pi and Hm0 by sqrt(2 pi); state which in the spec: %s = %q or %q",
		where, r.Variable, r.Role, r.What, r.Reading, r.Other, r.Key, PerHz, PerRadS)
}

// addReadings merges one file's readings into rs (one entry per role,
// variable, kind, reading and source; files counted in order).
func addReadings(rs []Reading, path string, file []Reading) []Reading {
	path = PathText(path)
	for _, f := range file {
		found := false
		for i := range rs {
			r := &rs[i]
			if r.Role == f.Role && r.Variable == f.Variable && r.What == f.What && r.Reading == f.Reading && r.From == f.From &&
				r.Ambiguous == f.Ambiguous && r.Other == f.Other && r.Stated == f.Stated {
				r.Files++
				r.Last = path
				found = true
				break
			}
		}
		if !found {
			f.Files, f.First, f.Last = 1, path, ""
			rs = append(rs, f)
		}
	}
	return rs
}

// NotASea refuses a spectral density that gives, at record step step and
// cell cell, a significant wave height hm0 (m) above limit, beyond any sea:
// the density is not read as it is stored. It names the file and variable
// of the spectrum at that step, how it was read, and the keys that would
// read it otherwise.
func (c *Catalog) NotASea(step, cell int, hm0, limit float64) error {
	role := Spectrum2D
	if c.Vars[role] == nil {
		role = Spectrum1D
	}
	path, vi := "", c.Vars[role]
	for _, fi := range c.roleFiles[role] {
		fe := &c.Files[fi]
		if k := sort.SearchInts(fe.uidx, step); k < len(fe.uidx) && fe.uidx[k] == step {
			path, vi = fe.Path, fe.vars[role]
			break
		}
	}
	if vi == nil {
		return &NoDataError{fmt.Sprintf("ingest: a spectrum at step %d, cell %d gives Hm0 = %.4g m, above %g m, beyond any sea; check the spectral density's units and encoding", step, cell, hm0, limit)}
	}
	enc := vi.Encoding
	if enc == "" {
		enc = Linear
	}
	where := fmt.Sprintf("cell %d", cell)
	if cell < len(c.Grid.Lon) {
		where = fmt.Sprintf("cell %d (lon %.4f, lat %.4f)", cell, c.Grid.Lon[cell], c.Grid.Lat[cell])
	}
	when := ""
	if step < len(c.times) {
		when = " at " + c.Date(c.times[step]).String()
	}
	found := quoteAttrs([]attr{{"standard_name", vi.StandardName}, {"long_name", vi.longName}, {"comment", vi.comment}, {"units", vi.Units}})
	return &NoDataError{errf(path, vi.Name, "the spectrum of %s%s gives Hm0 = %.4g m, above %g m, beyond any sea: the density is not read as it is stored (read as %s, units x %.6g to m2 Hz-1 rad-1; %s). Likely causes: a linear density read as a logarithm (set units.%s_encoding = \"linear\"), or units in cm2, per degree or per rad/s read as m2, per radian or per Hz (set units.%s, or units.%s_basis)",
		where, when, hm0, limit, enc, vi.Factor, found, role, role, role).Error()}
}
