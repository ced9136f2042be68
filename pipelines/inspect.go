package pipelines

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"swellgrid/ingest"
)

// InspectReport is what `swellgrid inspect` shows of a hindcast.
type InspectReport struct {
	Files       []ingest.FileInfo               `json:"files"`
	Calendar    ingest.Calendar                 `json:"calendar"`
	Start       string                          `json:"start"`
	End         string                          `json:"end"`
	Steps       int                             `json:"steps"`
	StepSeconds int64                           `json:"step_seconds"`
	Gaps        []ingest.Gap                    `json:"gaps"`
	GridKind    string                          `json:"grid_kind"`
	GridShape   [2]int                          `json:"grid_shape_ny_nx"`
	Cells       int                             `json:"cells"`
	MaskedCells int                             `json:"masked_cells"`
	Bounds      [4]float64                      `json:"bbox_lon_lat"`
	Roles       map[ingest.Role]*ingest.VarInfo `json:"roles"`
	Spectral    *ingest.Spectral                `json:"spectral,omitempty"`
	DepthSource string                          `json:"depth_source"`
	DepthRange  [2]float64                      `json:"depth_range_m"`
	Warnings    []string                        `json:"warnings"`
}

// Inspect builds the catalog of a hindcast and summarises it.
func Inspect(inputs []string, opt ingest.Options) (*InspectReport, error) {
	cat, err := ingest.Open(inputs, opt)
	if err != nil {
		return nil, err
	}
	return report(cat), nil
}

func report(cat *ingest.Catalog) *InspectReport {
	r := &InspectReport{Files: cat.Files, Calendar: cat.Calendar, Start: cat.Start, End: cat.End, Steps: cat.Steps,
		StepSeconds: cat.StepSeconds, Gaps: cat.Gaps, GridKind: cat.Grid.Kind.String(), GridShape: [2]int{cat.Grid.NY, cat.Grid.NX},
		Cells: cat.Grid.NCells(), Roles: cat.Vars, Spectral: cat.Spectral, DepthSource: cat.DepthSource, Warnings: cat.Warnings}
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
func (r *InspectReport) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(r)
}

// WriteText writes the report for a person.
func (r *InspectReport) WriteText(w io.Writer) error {
	var sb strings.Builder
	var total int64
	for _, f := range r.Files {
		total += f.Size
	}
	fmt.Fprintf(&sb, "files        %d (%.1f MB)\n", len(r.Files), float64(total)/1e6)
	for i, f := range r.Files {
		if i == 3 && len(r.Files) > 6 {
			fmt.Fprintf(&sb, "  ... %d more\n", len(r.Files)-6)
		}
		if i >= 3 && i < len(r.Files)-3 {
			continue
		}
		fmt.Fprintf(&sb, "  %s  %s .. %s  %d steps  %s\n", f.Path, f.From, f.To, f.Steps, f.Format)
	}
	fmt.Fprintf(&sb, "time         %s .. %s (%s calendar)\n", r.Start, r.End, r.Calendar)
	fmt.Fprintf(&sb, "steps        %d, step %s\n", r.Steps, hms(r.StepSeconds))
	if len(r.Gaps) == 0 {
		fmt.Fprintf(&sb, "gaps         none\n")
	} else {
		miss := 0
		for _, g := range r.Gaps {
			miss += g.Missing
		}
		fmt.Fprintf(&sb, "gaps         %d (%d missing steps)\n", len(r.Gaps), miss)
		for i, g := range r.Gaps {
			if i == 10 {
				fmt.Fprintf(&sb, "  ... %d more\n", len(r.Gaps)-10)
				break
			}
			fmt.Fprintf(&sb, "  after %s, before %s: %d missing\n", g.After, g.Before, g.Missing)
		}
	}
	fmt.Fprintf(&sb, "grid         %s, %d x %d (ny x nx), %d cells, %d masked\n", r.GridKind, r.GridShape[0], r.GridShape[1], r.Cells, r.MaskedCells)
	fmt.Fprintf(&sb, "extent       lon %.4f .. %.4f, lat %.4f .. %.4f\n", r.Bounds[0], r.Bounds[2], r.Bounds[1], r.Bounds[3])
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
		fmt.Fprintf(&sb, "  %-11s %-10s units %q (x%g to SI), %s, dims %v\n", k, v.Name, v.Units, v.Factor, pack, v.Dims)
	}
	if r.Spectral != nil {
		sp := r.Spectral
		fmt.Fprintf(&sb, "spectra      %d frequencies %.4f .. %.4f Hz", len(sp.FreqHz), sp.FreqHz[0], sp.FreqHz[len(sp.FreqHz)-1])
		if len(sp.DirDeg) > 0 {
			conv := "from"
			if sp.DirTo {
				conv = "to (converted to from)"
			}
			fmt.Fprintf(&sb, ", %d directions (%s)", len(sp.DirDeg), conv)
		}
		sb.WriteString("\n")
	}
	fmt.Fprintf(&sb, "depth        %s", r.DepthSource)
	if r.DepthRange[1] > 0 {
		fmt.Fprintf(&sb, ", %.1f .. %.1f m", r.DepthRange[0], r.DepthRange[1])
	}
	sb.WriteString("\n")
	for _, w := range r.Warnings {
		fmt.Fprintf(&sb, "warning      %s\n", w)
	}
	_, err := io.WriteString(w, sb.String())
	return err
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
