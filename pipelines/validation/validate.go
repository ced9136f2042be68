package validation

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"swellgrid/export"
	"swellgrid/export/contract"
	atlasreport "swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/products"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/tables"
	"swellgrid/stats/climate"
	"swellgrid/stats/seastate"
	"swellgrid/stats/validate"
)

// Options are the inputs of Validate.
type Options struct {
	RunDir string   // a finished run directory (manifest.json, cells.parquet)
	Obs    []string // observation files, directories or globs (nil: the spec's validation.observations)
	OutDir string   // where to write (""= RunDir)
	// runspec.Spec, if set, gives the [validation] section instead of the run's recorded spec.
	Spec *runspec.Spec
}

// Result is what Validate wrote.
type Result struct {
	OutDir   string
	Files    []string
	Summary  *summaryDoc
	Warnings []string
}

// Validate compares the hindcast of a finished run with measured station
// records (issue 18): each station is placed on the nearest sea cell (or
// the bilinear value of the four around it) within
// validation.max_distance_km, each measured time matched to the nearest
// hindcast step within validation.max_time_diff_min (or interpolated), and
// the error statistics of Hm0, Te, Tp, wave power and direction computed
// by stats/validate over the record, by calendar month and season, and for
// the storm tail. The hindcast is read again for the station cells only,
// from the files the run's manifest lists. It writes validation.parquet,
// validation_qq.parquet, validation_pairs.parquet and validation.json.
// Errors of the inputs (a station too far from the grid, no measured time
// inside the record, an unreadable file) are bad input (exit code 2).
func Validate(ctx context.Context, opt Options) (*Result, error) {
	run, spec, err := openValidationRun(opt.RunDir)
	if err != nil {
		return nil, fault.Input(err)
	}
	// every sealed file proves itself before the comparison, but for
	// those validate rewrites (its own files, the report)
	if err := run.VerifyAllBut(func(rel string) bool {
		return slices.Contains(contract.SealedExtras, rel) || strings.HasPrefix(rel, contract.ReportDir+"/")
	}); err != nil {
		return nil, fault.Input(err)
	}
	if opt.Spec != nil {
		if err := opt.Spec.Validation.Check(); err != nil {
			return nil, fault.Input(err)
		}
		spec.Validation = opt.Spec.Validation
	} else if err := spec.Validation.Check(); err != nil {
		return nil, fault.Input(err)
	}
	vs := spec.Validation.WithDefaults()
	obsIn := opt.Obs
	if len(obsIn) == 0 {
		obsIn = vs.Observations
	}
	if len(obsIn) == 0 {
		return nil, fault.Input(fmt.Errorf("validate: no observations: give --obs PATH_OR_GLOB or validation.observations in the spec"))
	}
	stations, err := ingest.ReadObservations(obsIn)
	if err != nil {
		return nil, fault.Input(err)
	}
	if len(stations) > runspec.MaxStations {
		return nil, fault.Input(fmt.Errorf("validate: the observation files hold %d stations; at most %d are compared in one validation: split them over several output directories (--out)", len(stations), runspec.MaxStations))
	}
	stNames := make([]string, len(stations))
	for i, st := range stations {
		stNames[i] = st.Name
	}
	if err := runspec.CheckFileNames("station", stNames, func(i int) string { return "validate: " + ingest.TermText(stations[i].Source) }, atlasreport.StationNameOverhead); err != nil {
		return nil, fault.Input(err)
	}
	cat, err := reopenCatalog(ctx, run, spec)
	if err != nil {
		return nil, err
	}
	out := opt.OutDir
	if out == "" {
		out = opt.RunDir
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fault.Output(fmt.Errorf("validate: output directory %s: %w", out, err))
	}
	// In the run directory, the tables are written and the run resealed
	// under its lock (and through its door: export.OpenDoor); elsewhere
	// through the output directory's door.
	inRun := filepath.Clean(out) == filepath.Clean(opt.RunDir)
	var release func()
	if inRun {
		release, err = lock.Dir(out)
	} else {
		release, err = export.OpenDoor(out)
		if err != nil {
			err = fault.Output(err)
		}
	}
	if err != nil {
		return nil, err
	}
	checked := append([]string{}, contract.SealedExtras...)
	if inRun {
		checked = append(checked, contract.ManifestFile, contract.ManifestSeal)
	} else {
		checked = append(checked, contract.ValidationSeal)
	}
	if err := export.CheckOutputs(out, []string{contract.ReportDir}, checked); err != nil {
		release()
		return nil, fault.Input(err)
	}
	released := false
	defer func() {
		if !released {
			release()
		}
	}()
	v := &validator{cat: cat, spec: spec, vs: vs, consts: seastate.Consts{Rho: spec.Physics.Rho, G: spec.Physics.G}}
	var places []*stationPlace
	for _, st := range stations {
		p, err := v.place(st)
		if err != nil {
			return nil, fault.Input(err)
		}
		places = append(places, p)
	}
	if err := v.readCells(ctx, places); err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		return nil, fault.Input(err)
	}
	var results []*stationResult
	for _, p := range places {
		r, err := v.compare(p)
		if err != nil {
			return nil, fault.Input(err)
		}
		results = append(results, r)
	}
	res := &Result{OutDir: out}
	for name, t := range validationTables(results) {
		if err := export.WriteParquet(filepath.Join(out, name), t); err != nil {
			return nil, fault.Output(err)
		}
		res.Files = append(res.Files, name)
	}
	sum := v.summary(run, opt.RunDir, results)
	if err := export.WriteManifest(filepath.Join(out, "validation.json"), sum); err != nil {
		return nil, fault.Output(err)
	}
	res.Files = append(res.Files, "validation.json")
	if inRun {
		if err := export.Reseal(out); err != nil { // validation's files are sealed with the run
			return nil, fault.Output(err)
		}
	} else if err := export.SealFiles(out, contract.ValidationSeal, res.Files...); err != nil { // a seal of their own
		return nil, fault.Output(err)
	}
	released = true
	release()
	// The run's report gets its station pages now (swellgrid report DIR
	// rebuilds them later too).
	if inRun {
		if _, err := os.Stat(filepath.Join(out, "report", "index.html")); err == nil {
			files, warns, err := products.Rebuild(out, products.Products{Report: true})
			if err != nil {
				return nil, err
			}
			for _, f := range files {
				if strings.HasPrefix(filepath.Base(f), "validation_") {
					res.Files = append(res.Files, f)
				}
			}
			sum.Warnings = append(sum.Warnings, warns...)
		}
	}
	sort.Strings(res.Files)
	res.Summary = sum
	res.Warnings = sum.Warnings
	return res, nil
}

// openValidationRun reads the run's manifest and its recorded spec.
func openValidationRun(dir string) (*rundir.Run, *runspec.Spec, error) {
	run, err := rundir.Open(dir, nil)
	if err != nil {
		return nil, nil, err
	}
	var raw struct {
		Parameters json.RawMessage `json:"parameters"`
	}
	if err := json.Unmarshal(run.Manifest.Raw, &raw); err != nil || len(raw.Parameters) == 0 {
		return nil, nil, fmt.Errorf("validate: %s/manifest.json has no recorded spec (parameters); rerun the run with this version", dir)
	}
	spec := runspec.DefaultSpec()
	if err := json.Unmarshal(raw.Parameters, spec); err != nil {
		return nil, nil, fmt.Errorf("validate: %s/manifest.json: parameters: %w", dir, err)
	}
	return run, spec, nil
}

// reopenCatalog opens the hindcast files the run's manifest lists, with the
// run's roles, units and depth, and checks they are still the files the run
// read (count, sizes, steps and times).
func reopenCatalog(ctx context.Context, run *rundir.Run, spec *runspec.Spec) (*ingest.Catalog, error) {
	var paths []string
	for _, in := range run.Manifest.Inputs {
		paths = append(paths, in.Path)
	}
	if len(paths) == 0 {
		return nil, fault.Input(fmt.Errorf("validate: %s/manifest.json lists no input files", run.Dir))
	}
	opt := spec.IngestOptions()
	opt.Ctx = ctx
	if strings.HasPrefix(run.Manifest.DepthSource, "bathymetry") && spec.Depth.BathymetryFile != "" {
		opt.BathymetryFile = spec.Depth.BathymetryFile
	}
	cat, err := ingest.Open(paths, opt)
	if err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		hint := ""
		for _, p := range paths {
			if !filepath.IsAbs(p) {
				hint = "; the manifest names them relative to the directory the run was started from (a run made before paths were recorded absolute): run validate from there"
				break
			}
		}
		return nil, fault.Input(fmt.Errorf("validate: the run's hindcast files (from %s/manifest.json): %w%s", run.Dir, err, hint))
	}
	m := run.Manifest
	if len(cat.Files) != len(m.Inputs) || cat.Steps != m.Steps || cat.Grid.NCells() != m.Grid.Cells {
		return nil, fault.Input(fmt.Errorf("validate: the hindcast files now hold %d files, %d steps, %d cells but the run read %d, %d, %d; the inputs changed since the run: rerun it before validating", len(cat.Files), cat.Steps, cat.Grid.NCells(), len(m.Inputs), m.Steps, m.Grid.Cells))
	}
	for i, f := range cat.Files {
		in := m.Inputs[i]
		if f.Size != in.Size || f.Steps != in.Steps || f.From != in.First || f.To != in.Last {
			return nil, fault.Input(fmt.Errorf("validate: %s: size %d, %d steps %s .. %s, but the run read %d bytes, %d steps %s .. %s; the file changed since the run: rerun it before validating", f.Path, f.Size, f.Steps, f.From, f.To, in.Size, in.Steps, in.First, in.Last))
		}
	}
	return cat, nil
}

// validator holds what the comparison of every station shares.
type validator struct {
	cat    *ingest.Catalog
	spec   *runspec.Spec
	vs     runspec.ValidationSpec
	consts seastate.Consts
	// series are the hindcast's bulk values of the cells read, per cell id.
	series map[int]*cellSeries
}

// cellSeries are a cell's Hm0, Te, Tp and direction at every step.
type cellSeries struct{ hm0, te, tp, dir []float64 }

// screen leaves out the unusable values of step as the run's state does
// (climate.ScreenStep), so that the hindcast compared is the atlas's.
func (s *cellSeries) screen(step int) {
	_, s.hm0[step], s.te[step], s.tp[step], s.dir[step], _ = climate.ScreenStep(math.NaN(), s.hm0[step], s.te[step], s.tp[step], s.dir[step])
}

// stationPlace is a station on the grid: the cells its values come from.
type stationPlace struct {
	st      *ingest.Station
	nearest int
	distKm  float64
	cells   []int     // the cells used (one, or four for bilinear)
	weights []float64 // their weights, summing to 1
	method  string    // "nearest" or "bilinear"
	warning string
}

// place finds the station's cells, refusing a station beyond
// validation.max_distance_km of every sea cell.
func (v *validator) place(st *ingest.Station) (*stationPlace, error) {
	g := v.cat.Grid
	best, bd := -1, math.Inf(1)
	for i := range g.Lon {
		if v.cat.Masked[i] {
			continue
		}
		if d := rundir.Haversine(st.Lon, st.Lat, g.Lon[i], g.Lat[i]); d < bd {
			best, bd = i, d
		}
	}
	if best < 0 || bd > v.vs.MaxDistanceKm {
		return nil, fmt.Errorf("validate: %s: station %q at (%.4f, %.4f) is %.1f km from the nearest sea cell of the grid, more than validation.max_distance_km = %g; leave the station out, or raise the limit if the cell still represents it", st.Source, st.Name, st.Lon, st.Lat, bd, v.vs.MaxDistanceKm)
	}
	p := &stationPlace{st: st, nearest: best, distKm: bd, cells: []int{best}, weights: []float64{1}, method: "nearest"}
	if v.vs.Location == runspec.PlaceBilinear {
		cells, w, why := bilinearCells(g.Kind, g.NX, g.NY, g.Lon, g.Lat, v.cat.Masked, st.Lon, st.Lat)
		if why != "" {
			p.warning = fmt.Sprintf("station %q: %s; the nearest sea cell %d (%.1f km) is used", st.Name, why, best, bd)
		} else {
			p.cells, p.weights, p.method = cells, w, "bilinear"
		}
	}
	return p, nil
}

// bilinearCells returns the four cells of a regular grid around (lon, lat)
// and their bilinear weights in longitude and latitude
// (validate.BilinearWeights of the station's fractional position between
// the cell centres), or why it cannot (not a regular grid, outside the
// centres' hull, a land cell among the four). Longitudes are compared in
// the grid's continuous frame (grid.LonFrame), so a station beside 180
// degrees finds its cells on both sides of it, whatever its convention.
func bilinearCells(kind grid.Kind, nx, ny int, lons, lats []float64, masked []bool, lon, lat float64) ([]int, []float64, string) {
	if kind != grid.Regular || nx < 2 || ny < 2 {
		return nil, nil, "bilinear location needs a regular grid"
	}
	fr := grid.LonFrame(lons[:nx])
	xs := fr.ShiftAll(lons[:nx])
	lon = fr.Shift(lon)
	ys := make([]float64, ny)
	for j := range ys {
		ys[j] = lats[j*nx]
	}
	ix := sort.SearchFloat64s(xs, lon) - 1
	iy := sort.SearchFloat64s(ys, lat) - 1
	if lon == xs[0] {
		ix = 0
	}
	if lat == ys[0] {
		iy = 0
	}
	if ix < 0 || ix >= nx-1 || iy < 0 || iy >= ny-1 {
		return nil, nil, "outside the hull of the cell centres, no four cells around it"
	}
	a := (lon - xs[ix]) / (xs[ix+1] - xs[ix])
	b := (lat - ys[iy]) / (ys[iy+1] - ys[iy])
	c00 := iy*nx + ix
	cells := []int{c00, c00 + 1, c00 + nx, c00 + nx + 1}
	for _, c := range cells {
		if masked[c] {
			return nil, nil, fmt.Sprintf("cell %d among the four around it is land or has no data", c)
		}
	}
	w := validate.BilinearWeights(a, b)
	return cells, w[:], ""
}

// readCells reads the hindcast again for the stations' cells only: one
// Catalog.Read per run of consecutive cell ids, each on the calling
// goroutine's reader (every NetCDF call in Read, one goroutine), the blocks
// consumed here.
func (v *validator) readCells(ctx context.Context, places []*stationPlace) error {
	need := map[int]bool{}
	for _, p := range places {
		for _, c := range p.cells {
			need[c] = true
		}
	}
	ids := make([]int, 0, len(need))
	for c := range need {
		ids = append(ids, c)
	}
	sort.Ints(ids)
	// one layout per set of spectral axes (they may change between files)
	var layouts []*seastate.Layout
	if v.cat.Spectral != nil && (v.cat.Vars[ingest.Spectrum2D] != nil || v.cat.Vars[ingest.Spectrum1D] != nil) {
		for _, a := range v.cat.SpectralAxes {
			l, err := seastate.NewLayout(a.FreqHz, a.DirDeg)
			if err != nil {
				return fmt.Errorf("spectral layout: %w", err)
			}
			layouts = append(layouts, l)
		}
	}
	v.series = map[int]*cellSeries{}
	nt := v.cat.Steps
	for _, c := range ids {
		s := &cellSeries{make([]float64, nt), make([]float64, nt), make([]float64, nt), make([]float64, nt)}
		for i := 0; i < nt; i++ {
			s.hm0[i], s.te[i], s.tp[i], s.dir[i] = math.NaN(), math.NaN(), math.NaN(), math.NaN()
		}
		v.series[c] = s
	}
	alpha := v.spec.Physics.TeOverTp
	for k := 0; k < len(ids); {
		j := k + 1
		for j < len(ids) && ids[j] == ids[j-1]+1 {
			j++
		}
		c0, c1 := ids[k], ids[j-1]+1
		k = j
		ch := make(chan *ingest.Block, 2)
		errc := make(chan error, 1)
		rctx, cancel := context.WithCancel(ctx)
		go func() {
			defer close(ch)
			errc <- v.cat.Read(rctx, ingest.ReadRange{C0: c0, C1: c1, MaxSteps: 256}, ch)
		}()
		type kernKey struct{ cell, axes int }
		kerns := map[kernKey]*seastate.Kernel{}
		var p seastate.Params
		for b := range ch {
			nc := b.NC()
			for id := c0; id < c1; id++ {
				s := v.series[id]
				for t := 0; t < b.NT; t++ {
					i := t*nc + (id - c0)
					step := b.Step0 + t
					if layouts != nil {
						per := b.NF * b.ND
						sp := b.Spec[i*per : (i+1)*per]
						if seastate.AllMissing(sp) {
							continue
						}
						kern := kerns[kernKey{id, b.Axes}]
						if kern == nil {
							kern = seastate.NewKernel(layouts[b.Axes], v.cat.Depth[id], v.consts)
							kerns[kernKey{id, b.Axes}] = kern
						}
						kern.Params(sp, &p)
						if p.Valid {
							s.hm0[step], s.te[step], s.tp[step], s.dir[step] = p.Hm0, p.Te, p.Tp, p.MeanDirDeg
						}
						s.screen(step)
						continue
					}
					if x := b.Bulk[ingest.Hm0]; x != nil {
						s.hm0[step] = x[i]
					}
					if x := b.Bulk[ingest.Tp]; x != nil {
						s.tp[step] = x[i]
					}
					if x := b.Bulk[ingest.Te]; x != nil {
						s.te[step] = x[i]
					} else {
						s.te[step] = seastate.TeFromTp(s.tp[step], alpha)
					}
					if x := b.Bulk[ingest.Dir]; x != nil {
						s.dir[step] = x[i]
					} else if x := b.Bulk[ingest.DirPeak]; x != nil {
						s.dir[step] = x[i]
					}
					s.screen(step)
				}
			}
		}
		err := <-errc
		cancel()
		if err != nil {
			return err
		}
	}
	return nil
}

// matched is one measured time with the hindcast step(s) it is compared with.
type matched struct {
	obs      int     // index in the station's record
	s0, s1   int     // hindcast steps; s1 = s0 for a nearest match
	w1       float64 // weight of s1 (interpolation), 0 for nearest
	diffMin  float64 // measured time minus the (nearest) step's time, minutes
	month    int
	timeText string
}

// stationResult is one station's comparison.
type stationResult struct {
	p        *stationPlace
	matches  []matched
	outside  int // measured times outside the record (beyond the tolerance)
	unmapped int // measured times not in the hindcast's calendar
	unpaired int // inside the record but no step within the tolerance (gaps)
	depth    float64
	obs, mod map[string][]float64 // per variable, per match
	vars     []string
	groups   []validate.Group
	thr      float64
	stats    map[string][]validate.Stats // per variable, per group
	teNote   string
}

// validationVars are the compared variables, their units and roles.
var validationVars = []struct {
	name, unit string
	role       ingest.Role
}{{"hm0", "m", ingest.Hm0}, {"te", "s", ingest.Te}, {"tp", "s", ingest.Tp}, {"power", "kW/m", ""}, {"dir", "deg", ingest.Dir}}

// compare matches the station's times to the hindcast's and computes the
// statistics.
func (v *validator) compare(p *stationPlace) (*stationResult, error) {
	st := p.st
	cal := v.cat.Calendar
	times := v.cat.Times()
	r := &stationResult{p: p, obs: map[string][]float64{}, mod: map[string][]float64{}, stats: map[string][]validate.Stats{}}
	tol := ingest.Stamp(math.Round(v.vs.MaxTimeDiffMin * 60))
	first, last := times[0], times[len(times)-1]
	for k, ts := range st.Times {
		t := ts
		if st.Calendar != cal {
			d := ingest.DateOf(st.Calendar, ts)
			t = ingest.StampOf(cal, d)
			if ingest.DateOf(cal, t) != d {
				r.unmapped++ // e.g. 29 February against a noleap hindcast
				continue
			}
		}
		if t < first-tol || t > last+tol {
			r.outside++
			continue
		}
		i := sort.Search(len(times), func(j int) bool { return times[j] >= t })
		m := matched{obs: k}
		switch {
		case v.vs.Time == runspec.TimeInterpolate && i < len(times) && times[i] == t:
			m.s0, m.s1 = i, i
		case v.vs.Time == runspec.TimeInterpolate:
			if i == 0 || i == len(times) || v.cat.GapAfter(i-1) {
				r.unpaired++ // at the record's ends or across a gap
				continue
			}
			m.s0, m.s1 = i-1, i
			m.w1 = float64(t-times[i-1]) / float64(times[i]-times[i-1])
		default:
			best := -1
			for _, j := range []int{i - 1, i} {
				if j >= 0 && j < len(times) && (best < 0 || absStamp(times[j]-t) < absStamp(times[best]-t)) {
					best = j
				}
			}
			if best < 0 || absStamp(times[best]-t) > tol {
				r.unpaired++
				continue
			}
			m.s0, m.s1 = best, best
		}
		near := m.s0
		if m.w1 > 0.5 {
			near = m.s1
		}
		m.diffMin = float64(t-times[near]) / 60
		d := ingest.DateOf(cal, t)
		m.month, m.timeText = d.Month, d.String()
		r.matches = append(r.matches, m)
	}
	if len(r.matches) == 0 {
		a, b := ingest.DateOf(st.Calendar, st.Times[0]), ingest.DateOf(st.Calendar, st.Times[len(st.Times)-1])
		return nil, fmt.Errorf("validate: %s: station %q: none of its %d measured times (%s .. %s) is within %g min of a step of the hindcast's record (%s .. %s); check the times' zone and units, or give a record that overlaps the hindcast", st.Source, st.Name, len(st.Times), a, b, v.vs.MaxTimeDiffMin, v.cat.Start, v.cat.End)
	}
	// The hindcast at each match: the cells' weighted values, interpolated in time.
	n := len(r.matches)
	var cellDepth float64 = v.cat.Depth[p.nearest]
	r.depth = cellDepth
	get := func(which func(*cellSeries) []float64, circ bool) []float64 {
		out := make([]float64, n)
		var xs, ws []float64
		for k, m := range r.matches {
			xs, ws = xs[:0], ws[:0]
			for ci, c := range p.cells {
				s := which(v.series[c])
				for _, q := range [][2]float64{{float64(m.s0), 1 - m.w1}, {float64(m.s1), m.w1}} {
					if w := p.weights[ci] * q[1]; w != 0 {
						xs, ws = append(xs, s[int(q[0])]), append(ws, w)
					}
				}
			}
			out[k] = validate.WeightedMean(xs, ws, circ)
		}
		return out
	}
	r.mod["hm0"] = get(func(s *cellSeries) []float64 { return s.hm0 }, false)
	r.mod["te"] = get(func(s *cellSeries) []float64 { return s.te }, false)
	r.mod["tp"] = get(func(s *cellSeries) []float64 { return s.tp }, false)
	r.mod["dir"] = get(func(s *cellSeries) []float64 { return s.dir }, true)
	// A variable the station has no value of anywhere in its record (an
	// empty column of a CSV shared with other stations) is not measured
	// there: no rows, no Q-Q quantiles and no power for it.
	pick := func(role ingest.Role) []float64 {
		x := st.Values[role]
		if x == nil || allNaN(x) {
			return nil
		}
		out := make([]float64, n)
		for k, m := range r.matches {
			out[k] = x[m.obs]
		}
		return out
	}
	for _, vv := range validationVars {
		if vv.role != "" {
			r.obs[vv.name] = pick(vv.role)
		}
	}
	obsTe := r.obs["te"]
	if obsTe == nil && r.obs["tp"] != nil {
		obsTe = make([]float64, n)
		for k, x := range r.obs["tp"] {
			obsTe[k] = seastate.TeFromTp(x, v.spec.Physics.TeOverTp)
		}
		r.teNote = fmt.Sprintf("the station has no Te: its power uses Te = %g Tp (physics.te_over_tp)", v.spec.Physics.TeOverTp)
	}
	if r.obs["hm0"] != nil && obsTe != nil {
		r.obs["power"] = validate.PowerKW(r.obs["hm0"], obsTe, cellDepth, v.consts)
		r.mod["power"] = validate.PowerKW(r.mod["hm0"], r.mod["te"], cellDepth, v.consts)
	}
	months := make([]int, n)
	for k, m := range r.matches {
		months[k] = m.month
	}
	r.groups, r.thr = validate.Groups(months, r.obs["hm0"], v.vs.StormPercentile)
	for _, vv := range validationVars {
		o, m := r.obs[vv.name], r.mod[vv.name]
		if o == nil || m == nil || allNaN(m) {
			continue
		}
		r.vars = append(r.vars, vv.name)
		for _, g := range r.groups {
			mo, oo := validate.Pick(m, g.Index), validate.Pick(o, g.Index)
			if vv.name == "dir" {
				r.stats[vv.name] = append(r.stats[vv.name], validate.Circular(mo, oo))
			} else {
				r.stats[vv.name] = append(r.stats[vv.name], validate.Paired(mo, oo))
			}
		}
	}
	if len(r.vars) == 0 {
		return nil, fmt.Errorf("validate: %s: station %q: no variable both measured and in the hindcast (the station has %v); give Hm0, Te, Tp or direction", st.Source, st.Name, roleNames(st.Values))
	}
	return r, nil
}

func roleNames(m map[ingest.Role][]float64) []string {
	var out []string
	for r := range m {
		out = append(out, string(r))
	}
	sort.Strings(out)
	return out
}

func allNaN(x []float64) bool {
	for _, v := range x {
		if !math.IsNaN(v) {
			return false
		}
	}
	return true
}

func absStamp(s ingest.Stamp) ingest.Stamp {
	if s < 0 {
		return -s
	}
	return s
}

// summaryDoc is validation.json as validate writes it: the output
// contract's document with the [validation] settings used.
type summaryDoc = contract.ValidationDocument[runspec.ValidationSpec]

func jsonNum(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func statsMap(s validate.Stats, circ bool) map[string]*float64 {
	n := float64(s.N)
	m := map[string]*float64{"n": &n, "obs_mean": jsonNum(s.MeanObs), "model_mean": jsonNum(s.MeanModel), "bias": jsonNum(s.Bias), "rmse": jsonNum(s.RMSE)}
	if !circ {
		m["scatter_index"], m["r"], m["slope_origin"], m["slope_symmetric"] = jsonNum(s.ScatterIndex), jsonNum(s.R), jsonNum(s.SlopeOrigin), jsonNum(s.SlopeSymmetric)
	}
	return m
}

func (v *validator) summary(run *rundir.Run, dir string, rs []*stationResult) *summaryDoc {
	s := &summaryDoc{Software: "swellgrid", Caution: tables.Caution, Run: dir, Settings: v.vs, Record: [2]string{v.cat.Start, v.cat.End},
		Calendar: string(v.cat.Calendar), Columns: validationColumns(), Warnings: []string{}}
	s.Settings.Observations = nil
	for _, r := range rs {
		st := r.p.st
		ss := contract.ValidationStation{Name: st.Name, Source: ingest.PathText(st.Source), Format: st.Format, Attributes: st.Attrs, Lon: st.Lon, Lat: st.Lat,
			Location: r.p.method, Cells: r.p.cells, Weights: r.p.weights, NearestCell: r.p.nearest, DistanceKm: r.p.distKm, DepthM: jsonNum(r.depth),
			Measured: len(st.Times), Matched: len(r.matches), Outside: r.outside, Unpaired: r.unpaired, NotInCal: r.unmapped,
			StormThrM: jsonNum(r.thr), Record: map[string]map[string]*float64{}}
		for _, name := range r.vars {
			ss.Record[name] = statsMap(r.stats[name][0], name == "dir")
		}
		ss.PlotFrom, ss.PlotTo = v.plotPeriod(r)
		if r.p.warning != "" {
			s.Warnings = append(s.Warnings, r.p.warning)
		}
		if r.teNote != "" {
			ss.Notes = append(ss.Notes, r.teNote)
		}
		if r.outside > 0 {
			s.Warnings = append(s.Warnings, fmt.Sprintf("station %q: %d of %d measured times are outside the hindcast's record (%s .. %s) and are not compared", st.Name, r.outside, len(st.Times), v.cat.Start, v.cat.End))
		}
		if r.unmapped > 0 {
			s.Warnings = append(s.Warnings, fmt.Sprintf("station %q: %d measured times do not exist in the hindcast's %s calendar and are not compared", st.Name, r.unmapped, v.cat.Calendar))
		}
		s.Stations = append(s.Stations, ss)
	}
	return s
}

// plotPeriod is the period of the report's time-series overlay: from
// validation.plot_start (or the first matched time) for plot_days.
func (v *validator) plotPeriod(r *stationResult) (string, string) {
	cal := v.cat.Calendar
	start := v.cat.Times()[r.matches[0].s0]
	if v.vs.PlotStart != "" {
		d, _ := runspec.ParsePlotStart(v.vs.PlotStart)
		start = ingest.StampOf(cal, d)
	}
	end := start + ingest.Stamp(v.vs.PlotDays*86400)
	return ingest.DateOf(cal, start).String(), ingest.DateOf(cal, end).String()
}

// IsInput reports whether err is a refusal of validate's inputs.
func IsInput(err error) bool {
	var e *fault.Error
	return errors.As(err, &e) && e.Kind == fault.BadInput
}

// Series is the hindcast record of one cell of a finished run, as validation
// reads it: Hm0, Te and the mean direction at every step of Catalog.
type Series struct {
	Cell         int
	Hm0, Te, Dir []float64
	Catalog      *ingest.Catalog
}

// SeriesAt reads the record of the sea cell nearest to the station at (lon,
// lat) named name (source: where the station comes from, for messages) from
// the finished run in runDir, as `swellgrid validate` places and reads a
// station with the default [validation] settings.
func SeriesAt(ctx context.Context, runDir, name, source string, lon, lat float64) (*Series, error) {
	run, spec, err := openValidationRun(runDir)
	if err != nil {
		return nil, err
	}
	cat, err := reopenCatalog(ctx, run, spec)
	if err != nil {
		return nil, err
	}
	v := &validator{cat: cat, spec: spec, vs: runspec.DefaultValidation(), consts: seastate.Consts{Rho: spec.Physics.Rho, G: spec.Physics.G}}
	p, err := v.place(&ingest.Station{Name: name, Lon: lon, Lat: lat, Source: source})
	if err != nil {
		return nil, err
	}
	if err := v.readCells(ctx, []*stationPlace{p}); err != nil {
		return nil, err
	}
	s := v.series[p.nearest]
	return &Series{Cell: p.nearest, Hm0: s.hm0, Te: s.te, Dir: s.dir, Catalog: cat}, nil
}
