package ingest

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strings"
)

// VarSummary describes one data variable of a file, for a person choosing
// the [roles] of a spec.
type VarSummary struct {
	Name         string   `json:"name"`
	Dims         []string `json:"dims"`
	Units        string   `json:"units,omitempty"`
	LongName     string   `json:"long_name,omitempty"`
	StandardName string   `json:"standard_name,omitempty"`
	File         string   `json:"file"`
}

// NoRoleError is a refusal because a role was not found. Vars lists every
// data variable of the input files (coordinates left out), so that the
// caller can show them and suggest a [roles] table (Guess).
type NoRoleError struct {
	Path string
	Vars []VarSummary
	Err  error
}

func (e *NoRoleError) Error() string { return e.Err.Error() }
func (e *NoRoleError) Unwrap() error { return e.Err }

// dataVars lists the data variables of the open file: every variable that
// is not a coordinate variable (one dimension named like itself) and not a
// bounds or character variable.
func (s *scan) dataVars() []VarSummary {
	var out []VarSummary
	for i := range s.f.vars {
		v := &s.f.vars[i]
		if len(v.dims) == 1 && v.dims[0] == v.name || len(v.dims) == 0 {
			continue
		}
		if v.typ.String() == "char" || v.typ.String() == "string" {
			continue
		}
		out = append(out, VarSummary{Name: v.name, Dims: v.dims, Units: v.str("units"), LongName: v.str("long_name"),
			StandardName: v.str("standard_name"), File: s.f.path})
	}
	return out
}

// allDataVars joins the data variables of several files, each name once.
func allDataVars(scans []*scan) []VarSummary {
	seen := map[string]bool{}
	var out []VarSummary
	for _, s := range scans {
		for _, v := range s.vars {
			if !seen[v.Name] {
				seen[v.Name] = true
				out = append(out, v)
			}
		}
	}
	return out
}

// Guess proposes a role for each variable from its long_name and units
// (never from its short name alone): a hint for a person, to be checked,
// never used by a run. It returns role -> variable, at most one per role.
func Guess(vars []VarSummary) map[Role]string {
	out := map[Role]string{}
	for _, v := range vars {
		r := guessRole(v)
		if r != "" && out[r] == "" {
			out[r] = v.Name
		}
	}
	return out
}

// guessRole is the role a variable's long_name (or standard_name) and units
// suggest, "" for none.
func guessRole(v VarSummary) Role {
	for r, names := range StandardNames {
		for _, sn := range names {
			if v.StandardName == sn {
				return r
			}
		}
	}
	ln := strings.ToLower(v.LongName + " " + v.StandardName)
	has := func(words ...string) bool {
		for _, w := range words {
			if !strings.Contains(ln, w) {
				return false
			}
		}
		return true
	}
	_, lengthErr := ConversionFactor(v.Units, Length)
	_, periodErr := ConversionFactor(v.Units, Period)
	_, angleErr := ConversionFactor(v.Units, Angle)
	if strings.Contains(strings.ToLower(v.Units), "deg") {
		angleErr = nil // "degree true" and the like: an angle, units to be set
	}
	switch {
	case has("spectr") && has("direction"):
		return Spectrum2D
	case has("spectr"):
		return Spectrum1D
	case lengthErr == nil && (has("significant") || has("height") && has("wave")):
		return Hm0
	case lengthErr == nil && (has("depth") || has("bathymetry") || has("elevation") || has("height") && has("sea floor")):
		return Depth
	case periodErr == nil && has("peak"):
		return Tp
	case periodErr == nil && (has("energy") || has("m-1") || has("m_-1") || has("inverse") || has("tm-10") || has("tm10")):
		return Te
	case angleErr == nil && has("direction") && has("peak"):
		return DirPeak
	case angleErr == nil && has("direction"):
		return Dir
	}
	return ""
}

// warnings collects per-file warnings and gives one line per kind and
// variable, with the count of files and the range of values, in a stable
// order.
type warnings struct {
	groups map[[2]string]*warnGroup
	other  []string
}

type warnGroup struct {
	what   string
	files  []string
	values map[string]float64 // value shown -> its sort key
}

// add records one file's warning of a kind about a variable; value (sorted
// by key) shows what differs in that file.
func (w *warnings) add(kind, variable, path, value string, key float64, what string) {
	if w.groups == nil {
		w.groups = map[[2]string]*warnGroup{}
	}
	k := [2]string{kind, variable}
	g := w.groups[k]
	if g == nil {
		g = &warnGroup{what: what, values: map[string]float64{}}
		w.groups[k] = g
	}
	g.files = append(g.files, path)
	g.values[value] = key
}

func (w *warnings) plain(s string) { w.other = append(w.other, s) }

func (w *warnings) lines() []string {
	keys := make([][2]string, 0, len(w.groups))
	for k := range w.groups {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i][0] != keys[j][0] {
			return keys[i][0] < keys[j][0]
		}
		return keys[i][1] < keys[j][1]
	})
	var out []string
	for _, k := range keys {
		g := w.groups[k]
		files := append([]string(nil), g.files...)
		sort.Strings(files)
		vs := make([]string, 0, len(g.values))
		for v := range g.values {
			vs = append(vs, v)
		}
		sort.Slice(vs, func(i, j int) bool {
			a, b := g.values[vs[i]], g.values[vs[j]]
			return a < b || a == b && vs[i] < vs[j]
		})
		rng := vs[0]
		if len(vs) > 1 {
			rng = fmt.Sprintf("%d kinds, from %s to %s", len(vs), vs[0], vs[len(vs)-1])
		}
		where := files[0]
		if len(files) > 1 {
			where = fmt.Sprintf("%s .. %s", files[0], files[len(files)-1])
		}
		out = append(out, fmt.Sprintf("variable %q %s in %d files (%s; %s)", k[1], g.what, len(files), where, rng))
	}
	return append(out, w.other...)
}

// sortRoles puts roles in the order of Roles (Mask last).
func sortRoles(rs []Role) {
	rank := map[Role]int{Mask: len(Roles)}
	for i, r := range Roles {
		rank[r] = i
	}
	sort.Slice(rs, func(i, j int) bool { return rank[rs[i]] < rank[rs[j]] })
}

func sortedRoles[T any](m map[Role]T) []Role {
	rs := make([]Role, 0, len(m))
	for r := range m {
		rs = append(rs, r)
	}
	sortRoles(rs)
	return rs
}

// jsonNum is a float64 that encodes as null when it is NaN or infinite
// (JSON has no such numbers; xarray writes _FillValue = NaN by default).
type jsonNum float64

func (x jsonNum) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// MarshalJSON writes a VarInfo with NaN or infinite attribute values (a
// _FillValue of NaN, an infinite valid_max) as null.
func (vi *VarInfo) MarshalJSON() ([]byte, error) {
	type plain VarInfo
	fill := make([]jsonNum, len(vi.Fill))
	for i, f := range vi.Fill {
		fill[i] = jsonNum(f)
	}
	var vmin, vmax *jsonNum
	if !math.IsInf(vi.ValidMin, -1) {
		x := jsonNum(vi.ValidMin)
		vmin = &x
	}
	if !math.IsInf(vi.ValidMax, 1) {
		x := jsonNum(vi.ValidMax)
		vmax = &x
	}
	return json.Marshal(struct {
		*plain
		Factor   jsonNum   `json:"factor_to_si"`
		Scale    jsonNum   `json:"scale_factor"`
		Offset   jsonNum   `json:"add_offset"`
		Fill     []jsonNum `json:"fill_values,omitempty"`
		ValidMin *jsonNum  `json:"valid_min,omitempty"`
		ValidMax *jsonNum  `json:"valid_max,omitempty"`
	}{(*plain)(vi), jsonNum(vi.Factor), jsonNum(vi.Scale), jsonNum(vi.Offset), fill, vmin, vmax})
}

// SuggestUnits returns units swellgrid understands for a role whose units
// attribute it does not ("degree true" -> "degree"), "" when the attribute
// is understood or nothing can be suggested. A hint for a person.
func SuggestUnits(r Role, units string) string {
	q, ok := roleQuantity[r]
	if !ok {
		return ""
	}
	if _, err := ConversionFactor(units, q); err == nil {
		return ""
	}
	u := strings.ToLower(units)
	switch {
	case q == Angle && strings.Contains(u, "deg"):
		return "degree"
	case q == Length && (u == "metre" || u == "meter" || u == "meters" || u == "metres"):
		return "m"
	case q == Period && strings.HasPrefix(u, "sec"):
		return "s"
	}
	return ""
}
