package synth

import (
	"math"
	"path/filepath"
	"sort"
	"strings"
)

// fixtureGrid is the small regular grid shared by the bulk fixtures: 6 x 5
// cells at 0.5 degree in an arbitrary patch of open ocean (no real coast is
// there; the coastline on its eastern edge is invented).
func fixtureGrid() Grid {
	return Grid{Kind: Regular, NX: 6, NY: 5, LonMin: -30, LonMax: -27.5, LatMin: 44, LatMax: 46}
}

// ReferenceStations are the constant-in-time spectra of the spectral fixtures.
// Each Tp is 1/f_n of a bin of the default axis f_n = 0.035 * 1.1^n (n = 8, 12,
// 15), so the discrete peak falls on the generating peak.
func ReferenceStations() []JonswapParams {
	bin := func(n int) float64 { return 1 / (0.035 * math.Pow(1.1, float64(n))) }
	return []JonswapParams{
		{Hm0: 6.0, Tp: bin(8), Gamma: 3.3, SpreadS: 10, DirFrom: 270},
		{Hm0: 2.5, Tp: bin(12), Gamma: 1.0, SpreadS: 4, DirFrom: 5},
		{Hm0: 1.2, Tp: bin(15), Gamma: 7.0, SpreadS: 25, DirFrom: 137.5},
	}
}

// Fixtures returns the committed test fixtures, keyed by their path under
// testdata/: a file name for single-file fixtures, a directory name for the
// per-month set. All are small, invented and synthetic.
func Fixtures() map[string]Scenario {
	start := Date{Year: 2001, Month: 1}
	base := func(name string) Scenario {
		return Scenario{Name: name, Grid: fixtureGrid(), Bulk: true, Start: start, Months: 2, StepHours: 3,
			Calendar: Standard, Seed: 11, Place: "the Nullport Shelf, an invented coast"}
	}
	fx := map[string]Scenario{}

	m := base("sgfx_bulk")
	m.Title = "swellgrid fixture: synthetic regular bulk grid, 2 years 3-hourly, one file per month"
	m.Months, m.PerMonth, m.Deflate, m.Mask = 24, true, 6, true
	fx["bulk_monthly"] = m

	p := base("regular_packed")
	p.Title = "swellgrid fixture: synthetic regular bulk grid packed as int16, classic format"
	p.Packing, p.Format = Int16, Classic
	fx["regular_packed.nc"] = p

	dsc := base("regular_desc_lonlat")
	dsc.Title = "swellgrid fixture: synthetic regular bulk grid, latitude descending, dimensions (time, lon, lat)"
	dsc.Grid.LatDescending, dsc.Grid.LonFirst = true, true
	fx["regular_desc_lonlat.nc"] = dsc

	cv := base("curvilinear_bulk")
	cv.Title = "swellgrid fixture: synthetic curvilinear (rotated) bulk grid"
	cv.Grid = Grid{Kind: Curvilinear, NX: 7, NY: 6, LonMin: -30, LonMax: -27, LatMin: 44, LatMax: 46.5, RotationDeg: 25}
	cv.Months, cv.Deflate = 1, 4
	fx["curvilinear_bulk.nc"] = cv

	pt := base("points_bulk")
	pt.Title = "swellgrid fixture: synthetic bulk sea states at a point set"
	pt.Grid = Grid{Kind: Points, NX: 8, LonMin: -30, LonMax: -27.5, LatMin: 44, LatMax: 46}
	fx["points_bulk.nc"] = pt

	spec := func(name, title string) Scenario {
		s := base(name)
		s.Title = title
		s.Bulk = false
		s.Grid = Grid{Kind: Points, NX: 3, LonMin: -30, LonMax: -27.5, LatMin: 44, LatMax: 46}
		s.Spectra = &Spectra{Fixed: ReferenceStations(), DirStart: 90}
		s.Deflate = 6
		return s
	}
	fx["spectral_points.nc"] = spec("spectral_points",
		"swellgrid fixture: synthetic directional spectra (JONSWAP x cos^2s, constant in time) at 3 points, m2 s rad-1")
	deg := spec("spectral_points_deg",
		"swellgrid fixture: synthetic directional spectra in m2 s degree-1, 6-hourly, 1 month")
	deg.Spectra.PerDegree, deg.Spectra.DirStart, deg.Months, deg.StepHours = true, 0, 1, 6
	fx["spectral_points_deg.nc"] = deg
	one := spec("spectral_1d", "swellgrid fixture: synthetic frequency spectra (JONSWAP, constant in time) at 3 points, classic format")
	one.Spectra.OneD, one.Format, one.Deflate = true, Classic, 0
	fx["spectral_1d.nc"] = one

	for _, cal := range []struct {
		c     Calendar
		units string
	}{
		{NoLeap, "hours since 2001-01-01 00:00:00"},
		{Day360, "days since 2000-01-01"},
		{AllLeap, "hours since 2001-01-01 00:00:00"},
		{Julian, "hours since 2001-01-01 00:00:00"},
		{ProlepticGregorian, "minutes since 1999-12-31 06:00:00"},
	} {
		name := "calendar_" + string(cal.c)
		s := base(name)
		s.Title = "swellgrid fixture: synthetic point-set bulk data in the " + string(cal.c) + " calendar"
		s.Grid = Grid{Kind: Points, NX: 2, LonMin: -30, LonMax: -29, LatMin: 44, LatMax: 45}
		s.Calendar, s.TimeUnits = cal.c, cal.units
		s.Start, s.Months, s.StepHours = Date{Year: 2004, Month: 2}, 2, 12
		fx[name+".nc"] = s
	}
	return fx
}

// WriteFixtures (re)writes every fixture under root and returns the paths
// written, sorted.
func WriteFixtures(root string) ([]string, error) {
	fx := Fixtures()
	keys := make([]string, 0, len(fx))
	for k := range fx {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var all []string
	for _, k := range keys {
		s := fx[k]
		dir := root
		if !strings.HasSuffix(k, ".nc") {
			dir = filepath.Join(root, k)
		}
		paths, err := s.Write(dir)
		all = append(all, paths...)
		if err != nil {
			return all, err
		}
	}
	sort.Strings(all)
	return all, nil
}

// Demo is the built-in demonstration's bulk hindcast: the Nullport Shelf, an
// invented stretch of coast (the name is made up and the coordinates are an
// arbitrary patch of open ocean where no such coast exists). Bulk fields on a
// 16 x 12 regular grid at 0.25 degree with land along the eastern edge and
// shelf depths from 15 m at the coast to 200 m offshore; 30 years, 3-hourly,
// one file per month, so that the extremes (annual maxima, storm peaks) and
// design sea states of the demo rest on a record of common length for such
// analyses. DemoSpectra is the shorter spectral companion.
func Demo() Scenario {
	return Scenario{
		Name:      "nullport_bulk",
		Title:     "swellgrid demo: synthetic wave hindcast of the Nullport Shelf (an invented coast), bulk fields",
		Place:     "the Nullport Shelf, an invented stretch of coast",
		Grid:      Grid{Kind: Regular, NX: 16, NY: 12, LonMin: -35, LonMax: -31.25, LatMin: 44, LatMax: 46.75},
		Bulk:      true,
		KeepBits:  12,
		Start:     Date{Year: 1991, Month: 1},
		Months:    360,
		StepHours: 3,
		Calendar:  Standard,
		Deflate:   1,
		PerMonth:  true,
		Mask:      true,
		Seed:      2001,
	}
}

// DemoSpectra is the demo's spectral hindcast of the same invented coast:
// directional spectra at 12 offshore cells of a 40 x 30 grid at 0.1 degree,
// the last 3 years of the bulk record, 3-hourly, one file per month. It is
// generated on its own (a separate synthetic draw), so its sea states do not
// match the bulk grid's step by step.
func DemoSpectra() Scenario {
	var cells []int
	for _, ix := range []int{3, 12} {
		for iy := 2; iy < 30; iy += 5 {
			cells = append(cells, iy*40+ix)
		}
	}
	return Scenario{
		Name:      "nullport_spec",
		Title:     "swellgrid demo: synthetic wave hindcast of the Nullport Shelf (an invented coast), directional spectra",
		Place:     "the Nullport Shelf, an invented stretch of coast",
		Grid:      Grid{Kind: Regular, NX: 40, NY: 30, LonMin: -35, LonMax: -31.1, LatMin: 44, LatMax: 46.9},
		Spectra:   &Spectra{Cells: cells, FloorRel: 1e-4},
		KeepBits:  12,
		Start:     Date{Year: 2018, Month: 1},
		Months:    36,
		StepHours: 3,
		Calendar:  Standard,
		Deflate:   1,
		PerMonth:  true,
		Seed:      2018,
	}
}

// DemoMesh is the demo's hindcast on an unstructured mesh: bulk fields on
// the nodes of an invented triangular mesh (UGRID 1.0) of the same invented
// coast, 10 years 3-hourly, one file per month; a separate synthetic draw.
func DemoMesh() Scenario {
	return Scenario{
		Name:      "nullport_mesh",
		Title:     "swellgrid demo: synthetic wave hindcast of the Nullport Shelf (an invented coast), bulk fields on an invented unstructured mesh",
		Place:     "the Nullport Shelf, an invented stretch of coast",
		Grid:      Grid{Kind: Mesh, NX: 12, NY: 9, LonMin: -35, LonMax: -31.7, LatMin: 44, LatMax: 46.4},
		Bulk:      true,
		KeepBits:  12,
		Start:     Date{Year: 2011, Month: 1},
		Months:    120,
		StepHours: 3,
		Calendar:  Standard,
		Deflate:   1,
		PerMonth:  true,
		Seed:      2011,
	}
}
