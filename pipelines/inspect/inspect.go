// Package inspect describes a hindcast before any run: its files, time axis
// (segments, gaps, shared steps), grid, roles and spectral conventions, as
// JSON or text, and turns a refusal into guided help. It reads the catalog
// only; it computes no statistic and writes no file.
package inspect

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// Report is what `swellgrid inspect` shows of a hindcast.
type Report struct {
	Files       []ingest.FileInfo `json:"files"`
	Calendar    ingest.Calendar   `json:"calendar"`
	Start       string            `json:"start"`
	End         string            `json:"end"`
	Steps       int               `json:"steps"`
	StepSeconds int64             `json:"step_seconds"`
	// Segments are the stretches of one step duration (or irregular),
	// CoveredHours the time the steps stand for.
	Segments     []ingest.Segment   `json:"time_segments"`
	CoveredHours float64            `json:"covered_hours"`
	Gaps         []ingest.Gap       `json:"gaps"`
	Duplicates   []ingest.Duplicate `json:"duplicate_steps,omitempty"`
	RoleGaps     []ingest.Gap       `json:"role_gaps,omitempty"`
	GridKind     string             `json:"grid_kind"`
	GridShape    [2]int             `json:"grid_shape_ny_nx"`
	Cells        int                `json:"cells"`
	MaskedCells  int                `json:"masked_cells"`
	// EmptyCells of MaskedCells have no depth or mask against them but no
	// value at any sampled step (the first steps of every file): land in a
	// set without depth. A run flags every cell without a value masked.
	EmptyCells  int                             `json:"masked_cells_without_values"`
	SampleSteps int                             `json:"sampled_steps_per_file"`
	Bounds      [4]float64                      `json:"bbox_lon_lat"` // RFC 7946: west, south, east, north; west > east across 180 degrees
	LonFrame    string                          `json:"lon_frame"`    // the grid's continuous longitude frame: "-180..180" or "0..360"
	Roles       map[ingest.Role]*ingest.VarInfo `json:"roles"`
	Spectral    *ingest.Spectral                `json:"spectral,omitempty"`
	// AxisSegments are the stretches of the record on one set of spectral
	// axes, when the axes change between files (else empty).
	AxisSegments []ingest.AxisSegment `json:"spectral_axis_segments,omitempty"`
	// Readings say how the spectral conventions were read; an ambiguous
	// one not stated by the spec stops a run.
	Readings    []ingest.Reading `json:"spectral_readings,omitempty"`
	DepthSource string           `json:"depth_source"`
	DepthRange  [2]float64       `json:"depth_range_m"`
	Warnings    []string         `json:"warnings"`
}

// Inspect builds the catalog of a hindcast and summarises it.
func Inspect(inputs []string, opt ingest.Options) (*Report, error) {
	cat, err := ingest.Open(inputs, opt)
	if err != nil {
		return nil, err
	}
	r := report(cat)
	if err := r.countEmpty(cat); err != nil {
		return nil, err
	}
	return r, nil
}

// InspectSpec inspects the inputs of a spec (or inputs, when given) with the
// spec's roles, units, depth and direction convention, as a run would read
// them.
func Spec(spec *runspec.Spec, inputs []string) (*Report, error) {
	if err := spec.CheckRoles(); err != nil {
		return nil, fault.Input(err)
	}
	if len(inputs) == 0 {
		inputs = spec.Input.Paths
	}
	if len(inputs) == 0 {
		return nil, fault.Input(fmt.Errorf("inspect: no input: give paths or a spec with input.paths"))
	}
	return Inspect(inputs, spec.IngestOptions())
}

// inspectSample is the number of steps inspect reads of each file to find
// cells without any value.
const inspectSample = 4

// countEmpty reads the first steps of every file and counts the cells not
// masked by depth or mask that have no value there (land where the files
// give no depth); they are counted as masked. It reads in cell ranges of a
// bounded size.
func (r *Report) countEmpty(cat *ingest.Catalog) error {
	lead := ingest.Hm0
	per := 1
	if cat.Spectral != nil && (cat.Vars[ingest.Spectrum2D] != nil || cat.Vars[ingest.Spectrum1D] != nil) {
		lead = ingest.Spectrum2D
		per = cat.MaxBins() // the largest of the files' spectra (axes may change between files)
	}
	n := cat.Grid.NCells()
	seen := make([]bool, n)
	chunk := max(1, (1<<21)/(per*inspectSample))
	for c0 := 0; c0 < n; c0 += chunk {
		c1 := min(n, c0+chunk)
		out := make(chan *ingest.Block, 2)
		errc := make(chan error, 1)
		go func() {
			errc <- cat.Read(context.Background(), ingest.ReadRange{C0: c0, C1: c1, Sample: inspectSample}, out)
			close(out)
		}()
		for b := range out {
			nc := b.NC()
			if lead != ingest.Hm0 {
				per = b.NF * b.ND // the block's own axes
			}
			for t := 0; t < b.NT; t++ {
				for k := 0; k < nc; k++ {
					i := t*nc + k
					var x float64
					if lead == ingest.Hm0 {
						x = b.Bulk[ingest.Hm0][i]
					} else {
						x = math.NaN()
						for _, v := range b.Spec[i*per : (i+1)*per] {
							if !math.IsNaN(v) {
								x = v
								break
							}
						}
					}
					if !math.IsNaN(x) {
						seen[b.C0+k] = true
					}
				}
			}
		}
		if err := <-errc; err != nil {
			return err
		}
	}
	r.SampleSteps = inspectSample
	for i, ok := range seen {
		if !ok && !cat.Masked[i] {
			r.EmptyCells++
			r.MaskedCells++
		}
	}
	return nil
}

// GuidedHelp explains a refusal for want of a role: it lists every data
// variable of the input files (name, dimensions, units, long_name,
// standard_name) and prints a [roles] table, guessed from long_name and
// units, that would let swellgrid read them. It returns "" for any other
// error.
func GuidedHelp(err error) string {
	var nr *ingest.NoRoleError
	if !errors.As(err, &nr) || len(nr.Vars) == 0 {
		return ""
	}
	var sb strings.Builder
	fmt.Fprintf(&sb, "data variables of the input files (coordinates left out):\n")
	w := tabwriter.NewWriter(&sb, 0, 0, 2, ' ', 0)
	fmt.Fprintf(w, "  name\tdimensions\tunits\tlong_name\tstandard_name\n")
	for _, v := range nr.Vars {
		fmt.Fprintf(w, "  %s\t(%s)\t%s\t%s\t%s\n", ingest.TermText(v.Name), strings.Join(termAll(v.Dims), ", "), dash(v.Units), dash(v.LongName), dash(v.StandardName))
	}
	w.Flush()
	guess := ingest.Guess(nr.Vars)
	if len(guess) == 0 {
		sb.WriteString("no role could be guessed from long_name and units; map the variables yourself:\n[roles]\nhm0 = \"...\"   # significant wave height\nte = \"...\"    # energy period (or tp = peak period)\n")
		return sb.String()
	}
	sb.WriteString("\nA GUESS from long_name and units (check every line before use), for a spec or --role:\n[roles]\n")
	units := map[ingest.Role]string{}
	for _, role := range append(append([]ingest.Role{}, ingest.Roles...), ingest.Mask) {
		name, ok := guess[role]
		if !ok {
			continue
		}
		var vs ingest.VarSummary
		for _, v := range nr.Vars {
			if v.Name == name {
				vs = v
			}
		}
		fmt.Fprintf(&sb, "%s = %q   # %s\n", role, name, dash(vs.LongName))
		if u := ingest.SuggestUnits(role, vs.Units); u != "" {
			units[role] = u
		}
	}
	if len(units) > 0 {
		sb.WriteString("[units]   # these units attributes are not understood; check the conversion\n")
		for _, role := range ingest.Roles {
			if u, ok := units[role]; ok {
				var vs string
				for _, v := range nr.Vars {
					if v.Name == guess[role] {
						vs = v.Units
					}
				}
				fmt.Fprintf(&sb, "%s = %q   # the file says %q\n", role, u, vs)
			}
		}
	}
	if guess[ingest.Depth] == "" {
		sb.WriteString("# no depth variable guessed: set [depth] source = \"constant\", \"bathymetry\" or \"deep-water\" (or --depth / --deep-water)\n")
	}
	sb.WriteString("Try it: swellgrid inspect")
	for _, role := range ingest.Roles {
		if name, ok := guess[role]; ok {
			fmt.Fprintf(&sb, " --role %s=%s", role, name)
		}
	}
	for _, role := range ingest.Roles {
		if u, ok := units[role]; ok {
			fmt.Fprintf(&sb, " --units %s=%q", role, u)
		}
	}
	sb.WriteString(" PATH...\n")
	return sb.String()
}

// dash is an attribute's text for the terminal (ingest.TermText), or "-"
// when it is empty.
func dash(s string) string {
	if s == "" {
		return "-"
	}
	return ingest.TermText(s)
}

// termAll is every text of ts for the terminal (ingest.TermText).
func termAll(ts []string) []string {
	out := make([]string, len(ts))
	for i, t := range ts {
		out[i] = ingest.TermText(t)
	}
	return out
}

func report(cat *ingest.Catalog) *Report {
	r := &Report{Files: cat.Files, Calendar: cat.Calendar, Start: cat.Start, End: cat.End, Steps: cat.Steps,
		StepSeconds: cat.StepSeconds, Gaps: cat.Gaps, RoleGaps: cat.RoleGaps, GridKind: cat.Grid.Kind.String(), GridShape: [2]int{cat.Grid.NY, cat.Grid.NX},
		Cells: cat.Grid.NCells(), Roles: cat.Vars, Spectral: cat.Spectral, AxisSegments: cat.AxisSegments, Readings: cat.Readings, DepthSource: cat.DepthSource, Warnings: cat.Warnings,
		Segments: cat.Segments, CoveredHours: cat.CoveredHours(), Duplicates: cat.Duplicates}
	if r.Gaps == nil {
		r.Gaps = []ingest.Gap{}
	}
	if r.Warnings == nil {
		r.Warnings = []string{}
	}
	for _, m := range cat.Masked {
		if m {
			r.MaskedCells++
		}
	}
	a, b, c, d := cat.Grid.Bounds()
	r.Bounds = [4]float64{a, b, c, d}
	r.LonFrame = cat.Grid.Frame().String()
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, z := range cat.Depth {
		if z > 0 && !math.IsInf(z, 1) {
			lo, hi = math.Min(lo, z), math.Max(hi, z)
		}
	}
	if lo <= hi {
		r.DepthRange = [2]float64{lo, hi}
	}
	return r
}

// WriteJSON writes the report as indented JSON.
func (r *Report) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

// WriteText writes the report for a person.
func (r *Report) WriteText(w io.Writer) error {
	var sb strings.Builder
	var total int64
	for _, f := range r.Files {
		total += f.Size
	}
	fmt.Fprintf(&sb, "files        %d (%.1f MB)\n", len(r.Files), float64(total)/1e6)
	// Files grouped by the roles they carry.
	var groups []string
	byGroup := map[string][]ingest.FileInfo{}
	for _, f := range r.Files {
		var rs []string
		for _, x := range f.Roles {
			rs = append(rs, string(x))
		}
		k := strings.Join(rs, ", ")
		if byGroup[k] == nil {
			groups = append(groups, k)
		}
		byGroup[k] = append(byGroup[k], f)
	}
	for _, k := range groups {
		fs := byGroup[k]
		if len(groups) > 1 {
			fmt.Fprintf(&sb, "  roles %s: %d file(s)\n", k, len(fs))
		}
		for i, f := range fs {
			if i == 3 && len(fs) > 6 {
				fmt.Fprintf(&sb, "    ... %d more\n", len(fs)-6)
			}
			if i >= 3 && i < len(fs)-3 {
				continue
			}
			if f.Static {
				fmt.Fprintf(&sb, "    %s  static fields  %s\n", ingest.TermText(f.Path), f.Format)
				continue
			}
			fmt.Fprintf(&sb, "    %s  %s .. %s  %d steps  %s\n", ingest.TermText(f.Path), f.From, f.To, f.Steps, f.Format)
		}
	}
	fmt.Fprintf(&sb, "time         %s .. %s (%s calendar)\n", r.Start, r.End, r.Calendar)
	switch {
	case len(r.Segments) == 1 && r.Segments[0].StepHours > 0:
		fmt.Fprintf(&sb, "steps        %d, every %s (%s hours)\n", r.Steps, hms(int64(math.Round(r.Segments[0].StepHours*3600))), hoursText(r.CoveredHours))
	default:
		fmt.Fprintf(&sb, "steps        %d, the step changes (%d segments, %s hours)\n", r.Steps, len(r.Segments), hoursText(r.CoveredHours))
		for i, sg := range r.Segments {
			if i == 12 {
				fmt.Fprintf(&sb, "  ... and %d more segments\n", len(r.Segments)-12)
				break
			}
			fmt.Fprintf(&sb, "  %s\n", sg)
		}
	}
	writeGaps(&sb, "gaps        ", r.Gaps)
	if len(r.Duplicates) > 0 {
		fmt.Fprintf(&sb, "duplicates   %d time steps held by two files, each read once\n", len(r.Duplicates))
		for i, d := range r.Duplicates {
			if i == 5 {
				fmt.Fprintf(&sb, "  ... and %d more\n", len(r.Duplicates)-5)
				break
			}
			same := "identical values"
			if !d.Identical {
				same = "different values"
			}
			fmt.Fprintf(&sb, "  %s (%s) in %s and %s (%s; read from %s)\n", d.Time, strings.Join(d.Roles, ", "), ingest.TermText(d.Files[0]), ingest.TermText(d.Files[1]), same, ingest.TermText(d.Used))
		}
	}
	if len(r.RoleGaps) > 0 {
		byRole := map[string][]ingest.Gap{}
		var order []string
		for _, g := range r.RoleGaps {
			if byRole[g.Role] == nil {
				order = append(order, g.Role)
			}
			byRole[g.Role] = append(byRole[g.Role], g)
		}
		for _, role := range order {
			writeGaps(&sb, fmt.Sprintf("gaps of %-4s", role), byRole[role])
		}
	}
	fmt.Fprintf(&sb, "grid         %s, %d x %d (ny x nx), %d cells, %d masked", r.GridKind, r.GridShape[0], r.GridShape[1], r.Cells, r.MaskedCells)
	if r.EmptyCells > 0 {
		fmt.Fprintf(&sb, " (%d of them without any value in the first %d steps of every file)", r.EmptyCells, r.SampleSteps)
	}
	sb.WriteString("\n")
	fmt.Fprintf(&sb, "extent       lon %.4f .. %.4f, lat %.4f .. %.4f", r.Bounds[0], r.Bounds[2], r.Bounds[1], r.Bounds[3])
	if r.Bounds[0] > r.Bounds[2] {
		fmt.Fprintf(&sb, " (across 180 degrees: lon %.4f .. %.4f in the frame %s)", r.Bounds[0], r.Bounds[2]+360, r.LonFrame)
	}
	sb.WriteString("\n")
	roles := make([]string, 0, len(r.Roles))
	for k := range r.Roles {
		roles = append(roles, string(k))
	}
	sort.Strings(roles)
	fmt.Fprintf(&sb, "roles\n")
	for _, k := range roles {
		v := r.Roles[ingest.Role(k)]
		pack := "unpacked"
		if v.Packed {
			pack = fmt.Sprintf("packed %s, scale %g, offset %g", v.Type, v.Scale, v.Offset)
		}
		fmt.Fprintf(&sb, "  %-11s %-10s units %q (x%g to SI), %s, dims %v\n", k, ingest.TermText(v.Name), v.Units, v.Factor, pack, termAll(v.Dims))
	}
	if r.Spectral != nil {
		sp := r.Spectral
		fmt.Fprintf(&sb, "spectra      %d frequencies %.4f .. %.4f Hz", len(sp.FreqHz), sp.FreqHz[0], sp.FreqHz[len(sp.FreqHz)-1])
		if len(sp.DirDeg) > 0 {
			conv := "from"
			switch sp.DirConvention {
			case ingest.NauticalTo:
				conv = "to (converted to from)"
			case ingest.Cartesian:
				conv = "Cartesian (converted to nautical from)"
			}
			fmt.Fprintf(&sb, ", %d directions (%s)", len(sp.DirDeg), conv)
		}
		if len(r.AxisSegments) > 1 {
			sb.WriteString(" in the first file")
		}
		sb.WriteString("\n")
	}
	if len(r.AxisSegments) > 1 {
		fmt.Fprintf(&sb, "spectral axes change between files: %d segments, each integrated on its own axes\n", len(r.AxisSegments))
		for _, s := range r.AxisSegments {
			fmt.Fprintf(&sb, "  %s\n", ingest.TermText(s.String()))
		}
	}
	writeReadings(&sb, r.Readings)
	fmt.Fprintf(&sb, "depth        %s", ingest.TermText(r.DepthSource))
	if r.DepthRange[1] > 0 {
		fmt.Fprintf(&sb, ", %.1f .. %.1f m", r.DepthRange[0], r.DepthRange[1])
	}
	sb.WriteString("\n")
	for _, w := range r.Warnings {
		fmt.Fprintf(&sb, "warning      %s\n", ingest.TermText(w))
	}
	_, err := io.WriteString(w, sb.String())
	return err
}

// writeReadings lists how the spectral conventions were read (what was
// chosen and what decided it, per variable and group of files), the
// ambiguous ones first with the key that settles them.
func writeReadings(sb *strings.Builder, rs []ingest.Reading) {
	label := "conventions "
	for i := range rs {
		if r := &rs[i]; r.Unsettled() {
			fmt.Fprintf(sb, "AMBIGUOUS    %s; a run stops until the spec says which\n", ingest.TermText(r.Refusal()))
		}
	}
	for _, r := range rs {
		files := ""
		if r.Files > 1 {
			files = fmt.Sprintf(" [%d files]", r.Files)
		}
		fmt.Fprintf(sb, "%s %s %q %s: %s (decided by %s)%s\n", label, r.Role, r.Variable, ingest.TermText(r.What), ingest.TermText(r.Reading), ingest.TermText(r.From), files)
		label = "            "
	}
}

// writeGaps lists gaps with their dates: the first five, then a count.
func writeGaps(sb *strings.Builder, label string, gaps []ingest.Gap) {
	if len(gaps) == 0 {
		fmt.Fprintf(sb, "%s none\n", label)
		return
	}
	miss, hours := 0, 0.0
	for _, g := range gaps {
		miss += g.Missing
		hours += g.Hours
	}
	if miss > 0 { // a role's gaps: steps of the record in no file of the role
		fmt.Fprintf(sb, "%s %d (%d missing steps, %s hours)\n", label, len(gaps), miss, hoursText(hours))
	} else {
		fmt.Fprintf(sb, "%s %d (%s hours not covered)\n", label, len(gaps), hoursText(hours))
	}
	for i, g := range gaps {
		if i == 5 {
			fmt.Fprintf(sb, "  ... and %d more gaps\n", len(gaps)-5)
			break
		}
		switch {
		case g.Missing > 0:
			fmt.Fprintf(sb, "  %s .. %s missing (%d steps)\n", g.First, g.Last, g.Missing)
		default:
			fmt.Fprintf(sb, "  after %s, before %s: %s hours not covered, from %s\n", g.After, g.Before, hoursText(g.Hours), g.First)
		}
	}
}

// hoursText writes hours briefly (to a thousandth): 744, 1.5.
func hoursText(h float64) string {
	return strconv.FormatFloat(math.Round(h*1000)/1000, 'f', -1, 64)
}

func hms(s int64) string {
	switch {
	case s%3600 == 0:
		return fmt.Sprintf("%d h", s/3600)
	case s%60 == 0:
		return fmt.Sprintf("%d min", s/60)
	}
	return fmt.Sprintf("%d s", s)
}
