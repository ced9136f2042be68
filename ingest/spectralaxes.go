package ingest

import (
	"fmt"
	"path/filepath"
	"strings"
)

// Spectral axes that change between files (a model upgrade, a re-gridded
// archive): every file keeps its own frequencies and directions
// (Catalog.SpectralAxes, one entry per distinct set), each block says which
// set its spectra are on (Block.Axes), and the record's stretches on one
// set are listed as AxisSegments, like the time segments. Every statistic
// is computed spectrum by spectrum, so none needs one set for the whole
// record; the directional ones need a direction axis in every file (a 2-D
// and a 1-D spectrum in one record are refused, checkRoles).

// AxisSegment is a stretch of the record whose spectra share one set of
// spectral axes: consecutive files (in time order) on the same frequencies
// and directions.
type AxisSegment struct {
	First       string  `json:"first"` // first time of the segment's first file
	Last        string  `json:"last"`  // last time of its last file
	Files       int     `json:"files"`
	FirstFile   string  `json:"first_file"`
	LastFile    string  `json:"last_file"`
	Frequencies int     `json:"frequencies"`
	FreqMinHz   float64 `json:"frequency_min_hz"`
	FreqMaxHz   float64 `json:"frequency_max_hz"`
	Directions  int     `json:"directions"` // 0 for 1-D spectra
	// Axes is the index of the segment's set in Catalog.SpectralAxes.
	Axes int `json:"axes"`
}

// Bins describes the axes briefly: "25 x 24 bins" (frequencies x
// directions), "25 bins" for 1-D spectra.
func (s AxisSegment) Bins() string {
	if s.Directions == 0 {
		return fmt.Sprintf("%d bins", s.Frequencies)
	}
	return fmt.Sprintf("%d x %d bins", s.Frequencies, s.Directions)
}

// String describes the segment for people: "2031-01-01 00:00:00 to
// 2031-01-31 00:00:00: 25 x 24 bins, 0.035 .. 0.5 Hz (1 file, a.nc)".
func (s AxisSegment) String() string {
	files := fmt.Sprintf("1 file, %s", filepath.Base(s.FirstFile))
	if s.Files > 1 {
		files = fmt.Sprintf("%d files, %s .. %s", s.Files, filepath.Base(s.FirstFile), filepath.Base(s.LastFile))
	}
	return fmt.Sprintf("%s to %s: %s, %.4g .. %.4g Hz (%s)", s.First, s.Last, s.Bins(), s.FreqMinHz, s.FreqMaxHz, files)
}

// same reports whether two sets of axes are the same (frequencies in Hz and
// directions in nautical-from degrees, in file order, within rounding).
func (sp *Spectral) same(o *Spectral) bool {
	return sameFloats(sp.FreqHz, o.FreqHz) && sameFloats(sp.DirDeg, o.DirDeg)
}

// bins is the number of density values of one spectrum on these axes.
func (sp *Spectral) bins() int { return len(sp.FreqHz) * max(1, len(sp.DirDeg)) }

// MaxBins is the largest number of density values of one spectrum over
// every set of spectral axes of the record (0 without spectra).
func (c *Catalog) MaxBins() int {
	n := 0
	for _, a := range c.SpectralAxes {
		n = max(n, a.bins())
	}
	return n
}

// addAxes records the spectral axes of file s (scanned), adding a set
// when they differ from every set seen so far.
func (c *Catalog) addAxes(s *scan) {
	for k, a := range c.SpectralAxes {
		if a.same(s.spectral) {
			s.info.axes = k
			return
		}
	}
	c.SpectralAxes = append(c.SpectralAxes, s.spectral)
	s.info.axes = len(c.SpectralAxes) - 1
	if c.Spectral == nil {
		c.Spectral = s.spectral
	}
}

// axisSegments lists the record's stretches on one set of spectral axes
// (files in time order holding a spectrum varying in time), and warns when
// there is more than one; with one set, AxisSegments stays empty.
func (c *Catalog) axisSegments() {
	if len(c.SpectralAxes) < 2 {
		return
	}
	var segs []AxisSegment
	for i := range c.Files {
		f := &c.Files[i]
		vi := f.vars[Spectrum2D]
		if vi == nil {
			vi = f.vars[Spectrum1D]
		}
		if vi == nil || vi.Static() || f.Static {
			continue
		}
		if n := len(segs); n > 0 && segs[n-1].Axes == f.axes {
			segs[n-1].Last, segs[n-1].LastFile = f.To, f.Path
			segs[n-1].Files++
			continue
		}
		a := c.SpectralAxes[f.axes]
		lo, hi := a.FreqHz[0], a.FreqHz[0]
		for _, x := range a.FreqHz {
			lo, hi = min(lo, x), max(hi, x)
		}
		segs = append(segs, AxisSegment{First: f.From, Last: f.To, Files: 1, FirstFile: f.Path, LastFile: f.Path,
			Frequencies: len(a.FreqHz), FreqMinHz: lo, FreqMaxHz: hi, Directions: len(a.DirDeg), Axes: f.axes})
	}
	c.AxisSegments = segs
	if len(segs) > 1 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("the spectral axes change between files: %s; each file's spectra are integrated on their own axes (every statistic is computed spectrum by spectrum, the direction sectors are fixed sectors)",
			AxisSegmentsText(segs, 6)))
	}
}

// AxisSegmentsText lists the segments on one line each (at most max, then
// a count of the rest), separated by "; ".
func AxisSegmentsText(segs []AxisSegment, max int) string {
	var parts []string
	for i, s := range segs {
		if i == max {
			parts = append(parts, fmt.Sprintf("and %d more", len(segs)-max))
			break
		}
		parts = append(parts, s.String())
	}
	return strings.Join(parts, "; ")
}

// axesOf is the index in SpectralAxes of file fi's spectral axes.
func (c *Catalog) axesOf(fi int) int { return c.Files[fi].axes }

// binsText describes the axes briefly: "25 x 24 bins, 0.035 .. 0.5 Hz".
func (sp *Spectral) binsText() string {
	lo, hi := sp.FreqHz[0], sp.FreqHz[0]
	for _, x := range sp.FreqHz {
		lo, hi = min(lo, x), max(hi, x)
	}
	if len(sp.DirDeg) == 0 {
		return fmt.Sprintf("%d bins, %.4g .. %.4g Hz", len(sp.FreqHz), lo, hi)
	}
	return fmt.Sprintf("%d x %d bins, %.4g .. %.4g Hz", len(sp.FreqHz), len(sp.DirDeg), lo, hi)
}
