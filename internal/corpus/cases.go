package corpus

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"

	"github.com/fhs/go-netcdf/netcdf"
)

// Outcome is what swellgrid must do with a corpus case.
type Outcome int

const (
	// Refused: exit code 2, a message naming the file (or spec key), the
	// variable where there is one, and what to do; nothing written.
	Refused Outcome = iota
	// Flagged: processed (exit code 0) with the problem reported in the run's
	// warnings or in the cells' quality columns.
	Flagged
)

func (o Outcome) String() string {
	if o == Flagged {
		return "processed, flagged"
	}
	return "refused"
}

// Case is one malformed or hostile input and the outcome it must have.
type Case struct {
	Name    string  // short id, also the directory the case is built in
	Breaks  string  // what is wrong with the input
	Outcome Outcome // what swellgrid must do
	Exit    int     // the documented exit code (0 processed, 2 bad input or spec)
	// Want are substrings the message must hold (refusals: the file or spec
	// key, the variable, the fix) or the run's report must hold (flagged:
	// the warning). Matching ignores case.
	Want []string
	// CellFlag, for flagged cases, is a quality flag at least one cell of
	// cells.parquet must carry ("" for none), and Column/ColumnCheck name a
	// numeric column and what it must show.
	CellFlag string
	// Stage says where the problem is caught: "catalog", "spec", "read",
	// "compute".
	Stage string

	build func(dir string) (*Setup, error)
}

// Setup is what the binary is run with for a case.
type Setup struct {
	Input string   // --input
	Spec  string   // --spec ("" for none)
	Args  []string // further flags
}

// Build writes the case's files under dir (created) and returns the command
// line pieces to run it with.
func (c *Case) Build(dir string) (*Setup, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	return c.build(dir)
}

// writeAll writes descriptions as in/<name>.nc under dir and returns the input
// directory.
func writeAll(dir string, files map[string]*ncDesc) (string, error) {
	in := filepath.Join(dir, "in")
	if err := os.MkdirAll(in, 0o755); err != nil {
		return "", err
	}
	for name, d := range files {
		if err := d.write(filepath.Join(in, name)); err != nil {
			return "", err
		}
	}
	return in, nil
}

func bulkPair(seed uint64) (*ncDesc, *ncDesc) { return bulkFile(1, seed), bulkFile(2, seed) }

// bulkCase builds a two-month bulk input after change alters it.
func bulkCase(change func(jan, feb *ncDesc)) func(string) (*Setup, error) {
	return func(dir string) (*Setup, error) {
		jan, feb := bulkPair(7)
		change(jan, feb)
		in, err := writeAll(dir, map[string]*ncDesc{"cx_2001-01.nc": jan, "cx_2001-02.nc": feb})
		if err != nil {
			return nil, err
		}
		return &Setup{Input: in}, nil
	}
}

// specCase builds a one-month spectral input after change alters it.
func specCase(change func(d *ncDesc)) func(string) (*Setup, error) {
	return func(dir string) (*Setup, error) {
		d := spectralFile(1, 11)
		change(d)
		in, err := writeAll(dir, map[string]*ncDesc{"cx_spec_2001-01.nc": d})
		if err != nil {
			return nil, err
		}
		return &Setup{Input: in}, nil
	}
}

// spec2DThen1DCase builds a two-month spectral input: January's 2-D
// spectra, February's integrated over direction into a 1-D spectrum
// (E(f) = sum_j S_j dtheta, no direction axis).
func spec2DThen1DCase(dir string) (*Setup, error) {
	jan, feb := spectralFile(1, 11), spectralFile(2, 11)
	v := feb.v("efth")
	oned := make([]float64, len(v.data)/specND)
	for k := range oned {
		for j := 0; j < specND; j++ {
			oned[k] += v.data[k*specND+j] * 2 * math.Pi / specND
		}
	}
	v.data, v.dims = oned, []string{"time", "station", "frequency"}
	v.setText("standard_name", "sea_surface_wave_variance_spectral_density")
	v.setText("units", "m2 s")
	feb.drop("direction")
	dims := feb.dims[:0]
	for _, d := range feb.dims {
		if d.name != "direction" {
			dims = append(dims, d)
		}
	}
	feb.dims = dims
	in, err := writeAll(dir, map[string]*ncDesc{"cx_spec_2001-01.nc": jan, "cx_spec_2001-02.nc": feb})
	if err != nil {
		return nil, err
	}
	return &Setup{Input: in}, nil
}

// runSpecCase builds a good bulk input and a run spec with body (plus files).
func runSpecCase(body string, extra map[string]string) func(string) (*Setup, error) {
	return func(dir string) (*Setup, error) {
		jan, feb := bulkPair(7)
		in, err := writeAll(dir, map[string]*ncDesc{"cx_2001-01.nc": jan, "cx_2001-02.nc": feb})
		if err != nil {
			return nil, err
		}
		for name, content := range extra {
			if err := os.WriteFile(filepath.Join(dir, name), []byte(content), 0o644); err != nil {
				return nil, err
			}
		}
		sp := filepath.Join(dir, "run.toml")
		if err := os.WriteFile(sp, []byte("# swellgrid corpus run spec (synthetic)\n"+body), 0o644); err != nil {
			return nil, err
		}
		return &Setup{Input: in, Spec: sp}, nil
	}
}

// setAt sets values of a (time, ...) variable at the given flat indices.
func setAt(v *ncVarDesc, x float64, idx ...int) {
	for _, i := range idx {
		v.data[i] = x
	}
}

const goodMatrix = `# synthetic power matrix (invented device), kW
hm0_m\te_s,5,7,9,11
0.5,5,9,10,8
1.5,40,70,75,60
2.5,110,190,200,170
3.5,200,300,300,280
`

// Cases returns the corpus, in a fixed order.
func Cases() []Case {
	cell := baseNX * baseNY
	return append([]Case{
		{Name: "truncated", Breaks: "a classic file cut to 40% of its length (transfer stopped)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-02.nc", "truncated or corrupt"},
			build: func(dir string) (*Setup, error) {
				s, err := bulkCase(func(_, _ *ncDesc) {})(dir)
				if err != nil {
					return nil, err
				}
				p := filepath.Join(s.Input, "cx_2001-02.nc")
				st, err := os.Stat(p)
				if err != nil {
					return nil, err
				}
				return s, os.Truncate(p, st.Size()*4/10)
			}},
		{Name: "random_bytes", Breaks: "a .nc file of seeded random bytes", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-02.nc", "not a NetCDF file", "check that the path"},
			build: func(dir string) (*Setup, error) {
				s, err := bulkCase(func(_, _ *ncDesc) {})(dir)
				if err != nil {
					return nil, err
				}
				r := rand.New(rand.NewPCG(2, 3))
				b := make([]byte, 8192)
				for i := range b {
					b[i] = byte(r.Uint32())
				}
				return s, os.WriteFile(filepath.Join(s.Input, "cx_2001-02.nc"), b, 0o644)
			}},
		{Name: "hdf5_not_netcdf", Breaks: "a valid HDF5 file without NetCDF-4 dimensions or CF metadata", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-02.nc", "no time coordinate", "add one"},
			build: func(dir string) (*Setup, error) {
				s, err := bulkCase(func(_, _ *ncDesc) {})(dir)
				if err != nil {
					return nil, err
				}
				return s, writePlainHDF5(filepath.Join(s.Input, "cx_2001-02.nc"))
			}},
		{Name: "hdf5_magic_garbage", Breaks: "the HDF5 signature followed by garbage", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cannot open as NetCDF", "truncated or corrupt"},
			build: func(dir string) (*Setup, error) {
				s, err := bulkCase(func(_, _ *ncDesc) {})(dir)
				if err != nil {
					return nil, err
				}
				b := append([]byte("\x89HDF\r\n\x1a\n"), []byte(strings.Repeat("not really hdf5 ", 256))...)
				return s, os.WriteFile(filepath.Join(s.Input, "cx_2001-01.nc"), b, 0o644)
			}},
		{Name: "empty_file", Breaks: "a .nc file of zero bytes", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-02.nc", "not a NetCDF file", "0 bytes"},
			build: func(dir string) (*Setup, error) {
				s, err := bulkCase(func(_, _ *ncDesc) {})(dir)
				if err != nil {
					return nil, err
				}
				return s, os.WriteFile(filepath.Join(s.Input, "cx_2001-02.nc"), nil, 0o644)
			}},
		{Name: "missing_coordinate", Breaks: "no latitude variable", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", "no longitude/latitude", "add them"},
			build: bulkCase(func(jan, feb *ncDesc) { jan.drop("lat"); feb.drop("lat") })},
		{Name: "coordinate_nan", Breaks: "a NaN longitude", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"lon"`, "NaN", "must be finite"},
			build: bulkCase(func(jan, feb *ncDesc) { jan.v("lon").data[2] = math.NaN(); feb.v("lon").data[2] = math.NaN() })},
		{Name: "time_backwards_in_file", Breaks: "time goes back inside one file", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"time"`, "goes back", "remove the duplicated or misordered"},
			build: bulkCase(func(jan, _ *ncDesc) { t := jan.v("time").data; t[10], t[11] = t[11], t[10] })},
		{Name: "time_repeated_in_file", Breaks: "a time step repeated inside one file", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-02.nc", `"time"`, "repeats", "remove the duplicated"},
			build: bulkCase(func(_, feb *ncDesc) { t := feb.v("time").data; t[5] = t[4] })},
		{Name: "time_overlap_across_files", Breaks: "the second file starts before the first ends (16 steps held by both, with different values)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cx_2001-02.nc", "both hold time", "different values", "duplicate_steps"},
			build: bulkCase(func(_, feb *ncDesc) {
				for i := range feb.v("time").data {
					feb.v("time").data[i] -= 48
				}
			})},
		{Name: "time_overlap_not_aligned", Breaks: "the second file starts 49.5 h before the first ends, its times between the first's", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cx_2001-02.nc", "overlap in time", "remove the duplicate or overlapping file"},
			build: bulkCase(func(_, feb *ncDesc) {
				for i := range feb.v("time").data {
					feb.v("time").data[i] -= 49.5
				}
			})},
		{Name: "time_duplicate_file", Breaks: "the same month given twice under two names", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cx_2001-01_copy.nc", "start at the same time", "remove the duplicate"},
			build: func(dir string) (*Setup, error) {
				jan, feb := bulkPair(7)
				in, err := writeAll(dir, map[string]*ncDesc{"cx_2001-01.nc": jan, "cx_2001-01_copy.nc": jan, "cx_2001-02.nc": feb})
				return &Setup{Input: in}, err
			}},
		{Name: "time_units_no_reference", Breaks: `time units "hours" without "since <date>"`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"time"`, `"<unit> since <date>"`, "fix the units attribute"},
			build: bulkCase(func(jan, feb *ncDesc) {
				jan.v("time").setText("units", "hours")
				feb.v("time").setText("units", "hours")
			})},
		{Name: "time_units_bad_date", Breaks: `time units "hours since 2001-13-45"`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"time"`, "does not exist"},
			build: bulkCase(func(jan, feb *ncDesc) {
				jan.v("time").setText("units", "hours since 2001-13-45")
				feb.v("time").setText("units", "hours since 2001-13-45")
			})},
		{Name: "unknown_calendar", Breaks: `calendar "lunar_13"`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"time"`, "unknown calendar", "set the calendar attribute"},
			build: bulkCase(func(jan, feb *ncDesc) {
				jan.v("time").setText("calendar", "lunar_13")
				feb.v("time").setText("calendar", "lunar_13")
			})},
		{Name: "calendar_differs_between_files", Breaks: "standard calendar in one file, noleap in the next", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", "cx_2001-02.nc", "calendar", "share one calendar"},
			build: bulkCase(func(_, feb *ncDesc) { feb.v("time").setText("calendar", "noleap") })},
		{Name: "time_fill_value", Breaks: "a time step equal to the time variable's _FillValue", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-02.nc", `"time"`, "fill value", "every time must be set"},
			build: bulkCase(func(_, feb *ncDesc) { feb.v("time").setNum("_FillValue", -1); feb.v("time").data[7] = -1 })},
		{Name: "hm0_nan_steps", Breaks: "isolated NaN Hm0 steps (6 steps x 12 cells)", Outcome: Flagged, Exit: 0, Stage: "compute",
			CellFlag: "", Want: []string{"wrote"},
			build: bulkCase(func(jan, _ *ncDesc) {
				for _, t := range []int{3, 40, 41, 90, 150, 200} {
					for k := 0; k < cell; k++ {
						jan.v("hm0").data[t*cell+k] = math.NaN()
					}
				}
			})},
		{Name: "hm0_negative", Breaks: "negative Hm0 values at a few steps", Outcome: Flagged, Exit: 0, Stage: "compute",
			Want:  []string{"wrote"},
			build: bulkCase(func(jan, _ *ncDesc) { setAt(jan.v("hm0"), -1.5, 5*cell, 5*cell+1, 77*cell+3) })},
		{Name: "hm0_inf", Breaks: "+Inf and -Inf Hm0 values at a few steps", Outcome: Flagged, Exit: 0, Stage: "compute",
			Want: []string{"wrote"},
			build: bulkCase(func(jan, _ *ncDesc) {
				setAt(jan.v("hm0"), math.Inf(1), 9*cell+2)
				setAt(jan.v("hm0"), math.Inf(-1), 19*cell+4)
				setAt(jan.v("te"), math.Inf(1), 29*cell+4)
			})},
		{Name: "hm0_all_fill", Breaks: "every Hm0 value is the fill value", Outcome: Refused, Exit: 2, Stage: "read",
			Want:  []string{"cx_2001-02.nc", `"hm0"`, "every value is a fill value", "map role hm0"},
			build: bulkCase(func(_, feb *ncDesc) { setAt(feb.v("hm0"), -999, seq(len(feb.v("hm0").data))...) })},
		{Name: "spectrum_nan_steps", Breaks: "NaN spectra at isolated steps", Outcome: Flagged, Exit: 0, Stage: "compute",
			Want: []string{"wrote"},
			build: specCase(func(d *ncDesc) {
				per := specNF * specND
				for _, t := range []int{4, 100, 101} {
					for k := 0; k < specNP*per; k++ {
						d.v("efth").data[t*specNP*per+k] = math.NaN()
					}
				}
			})},
		{Name: "spectrum_negative_inf", Breaks: "negative and infinite densities in some bins", Outcome: Flagged, Exit: 0, Stage: "compute",
			CellFlag: "bad_spectral_bins", Want: []string{"wrote"},
			build: specCase(func(d *ncDesc) {
				per := specNF * specND
				setAt(d.v("efth"), -0.5, 10*specNP*per+17, 11*specNP*per+per+3)
				setAt(d.v("efth"), math.Inf(1), 12*specNP*per+40)
			})},
		{Name: "density_wrong_units", Breaks: `spectral density with units "m2" (no per-frequency)`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_spec_2001-01.nc", `"efth"`, "not convertible", "set units.spectrum2d in the spec"},
			build: specCase(func(d *ncDesc) { d.v("efth").setText("units", "m2") })},
		{Name: "spectrum_2d_then_1d", Breaks: "directional spectra in January, frequency spectra (no direction axis) in February", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_spec_2001-01.nc", "cx_spec_2001-02.nc", "direction axis in every file", "roles.spectrum2d"},
			build: spec2DThen1DCase},
		{Name: "direction_coord_out_of_range", Breaks: "spectral direction coordinate reaching 900 degrees", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_spec_2001-01.nc", `"direction"`, "0-360"},
			build: specCase(func(d *ncDesc) { d.v("direction").data[11] = 900 })},
		{Name: "direction_field_out_of_range", Breaks: "bulk wave direction values of -30, 400 and 5000 degrees: -30 and 400 are wrapped, 5000 is treated as missing; power and coverage are unaffected", Outcome: Flagged, Exit: 0, Stage: "compute",
			Want: []string{"wrote"},
			build: bulkCase(func(jan, _ *ncDesc) {
				setAt(jan.v("wdir"), -30, 3*cell)
				setAt(jan.v("wdir"), 400, 4*cell)
				setAt(jan.v("wdir"), 5000, 5*cell)
			})},
		{Name: "depth_negative_zero", Breaks: "depth negative in one cell and zero in another", Outcome: Flagged, Exit: 0, Stage: "catalog",
			CellFlag: "masked", Want: []string{"2 cells have depth <= 0 m", "land"},
			build: bulkCase(func(jan, feb *ncDesc) {
				for _, d := range []*ncDesc{jan, feb} {
					d.v("depth").data[1] = -12
					d.v("depth").data[6] = 0
				}
			})},
		{Name: "depth_all_nonpositive", Breaks: "depth <= 0 in every cell", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "variable depth", "every cell", "depth.source"},
			build: bulkCase(func(jan, feb *ncDesc) {
				for _, d := range []*ncDesc{jan, feb} {
					for i := range d.v("depth").data {
						d.v("depth").data[i] = -5
					}
				}
			})},
		{Name: "grids_differ", Breaks: "the second file's longitudes are shifted", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cx_2001-02.nc", "different grids", "one grid"},
			build: bulkCase(func(_, feb *ncDesc) {
				for i := range feb.v("lon").data {
					feb.v("lon").data[i] += 0.25
				}
			})},
		{Name: "zero_size_dimension", Breaks: "a longitude dimension of size 0", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"lon/lat"`, "size 0", "remove it from the input"},
			build: bulkCase(func(jan, feb *ncDesc) {
				for _, d := range []*ncDesc{jan, feb} {
					d.netcdf4 = true // a size-0 dimension is an unlimited one, which classic files allow only first
					d.setDim("lon", 0)
					for _, v := range d.vars {
						if v.name != "time" && v.name != "lat" {
							v.data = nil
						}
					}
				}
			})},
		{Name: "zero_time_steps", Breaks: "a time dimension of size 0", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-02.nc", `"time"`, "size 0", "remove it from the input"},
			build: bulkCase(func(_, feb *ncDesc) {
				feb.setDim("time", 0) // 0 = unlimited with no records
				for _, n := range []string{"time", "hm0", "te", "wdir"} {
					feb.v(n).data = nil
				}
			})},
		{Name: "huge_dimension_header", Breaks: "a 556-byte classic file whose header claims 2^28 longitudes (2 GiB)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_huge.nc", `"lon"`, "truncated or corrupt"},
			build: func(dir string) (*Setup, error) {
				in := filepath.Join(dir, "in")
				if err := os.MkdirAll(in, 0o755); err != nil {
					return nil, err
				}
				return &Setup{Input: in}, writeHugeHeader(filepath.Join(in, "cx_huge.nc"), 1<<28)
			}},
		{Name: "role_wrong_rank", Breaks: "Hm0 stored as (time, lat) without the longitude dimension", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"hm0"`, "role hm0 has dimensions", "check the variable or the role mapping"},
			build: bulkCase(func(jan, feb *ncDesc) {
				for _, d := range []*ncDesc{jan, feb} {
					v := d.v("hm0")
					v.dims = []string{"time", "lat"}
					v.data = v.data[:d.dim("time")*baseNY]
				}
			})},
		{Name: "packing_inconsistent", Breaks: "Hm0 packed as short with a different scale_factor in each file", Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want: []string{"packed differently"},
			build: bulkCase(func(jan, feb *ncDesc) {
				for i, d := range []*ncDesc{jan, feb} {
					v := d.v("hm0")
					sc := []float64{0.001, 0.002}[i]
					v.typ = netcdf.SHORT
					v.setNum("scale_factor", sc)
					v.setNum("add_offset", 0)
					v.setNum("_FillValue", -32767)
					for k, x := range v.data {
						v.data[k] = math.Round(x / sc)
					}
				}
			})},
		{Name: "packing_zero_scale", Breaks: "scale_factor = 0 (every value would unpack to the offset)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"te"`, "scale_factor", "fix the packing attributes"},
			build: bulkCase(func(jan, feb *ncDesc) { jan.v("te").setNum("scale_factor", 0); feb.v("te").setNum("scale_factor", 0) })},
		{Name: "no_input_files", Breaks: "an input directory with no NetCDF files", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"no NetCDF files found", ".nc"},
			build: func(dir string) (*Setup, error) {
				in := filepath.Join(dir, "in")
				if err := os.MkdirAll(in, 0o755); err != nil {
					return nil, err
				}
				return &Setup{Input: in}, os.WriteFile(filepath.Join(in, "README.txt"), []byte("no data here\n"), 0o644)
			}},
		{Name: "spec_negative_return_period", Breaks: "extremes.return_periods_y = [-10, 50]", Outcome: Refused, Exit: 2, Stage: "spec",
			Want:  []string{"extremes.return_periods_y", "-10", "out of range"},
			build: runSpecCase("[depth]\nsource = \"file\"\n[extremes]\nreturn_periods_y = [-10.0, 50.0]\n", nil)},
		{Name: "spec_limits_out_of_order", Breaks: "statistics.window_limits_m = [2.5, 1.5]", Outcome: Refused, Exit: 2, Stage: "spec",
			Want:  []string{"statistics.window_limits_m", "strictly increasing"},
			build: runSpecCase("[statistics]\nwindow_limits_m = [2.5, 1.5]\n", nil)},
		{Name: "spec_unknown_device_file", Breaks: "a device whose power matrix file does not exist", Outcome: Refused, Exit: 2, Stage: "spec",
			Want:  []string{"device[0].power_matrix", "no_such_matrix.csv", "cannot be read"},
			build: runSpecCase("[[device]]\nname = \"alpha\"\npower_matrix = \"no_such_matrix.csv\"\n", nil)},
		{Name: "spec_unknown_key", Breaks: "a misspelt key (statistics.hm0_bin)", Outcome: Refused, Exit: 2, Stage: "spec",
			Want:  []string{"run.toml", "unknown key", "statistics.hm0_bin"},
			build: runSpecCase("[statistics]\nhm0_bin = 0.1\n", nil)},
		{Name: "spec_not_toml", Breaks: "a spec that is not TOML", Outcome: Refused, Exit: 2, Stage: "spec",
			Want:  []string{"run.toml"},
			build: runSpecCase("[statistics\nthis is = = not toml\n", nil)},
		{Name: "power_matrix_ragged", Breaks: "a power matrix row with one value too few", Outcome: Refused, Exit: 2, Stage: "spec",
			Want: []string{"alpha", "ragged.csv", "row"},
			build: runSpecCase("[[device]]\nname = \"alpha\"\npower_matrix = \"ragged.csv\"\n",
				map[string]string{"ragged.csv": strings.Replace(goodMatrix, "1.5,40,70,75,60", "1.5,40,70,75", 1)})},
		{Name: "power_matrix_non_numeric", Breaks: "a power matrix cell reading \"n/a\"", Outcome: Refused, Exit: 2, Stage: "spec",
			Want: []string{"alpha", "nonnum.csv", "n/a"},
			build: runSpecCase("[[device]]\nname = \"alpha\"\npower_matrix = \"nonnum.csv\"\n",
				map[string]string{"nonnum.csv": strings.Replace(goodMatrix, "2.5,110,190,200,170", "2.5,110,n/a,200,170", 1)})},
	}, strictCases()...)
}

func seq(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}

// Good writes the well-formed two-month bulk input that the bulk cases start
// from, for comparisons with a case's results.
func Good(dir string) (*Setup, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	return bulkCase(func(_, _ *ncDesc) {})(dir)
}

// WriteAll builds every case under root/<name> and returns the setups by
// name (for the command-line generator and for inspection by hand).
func WriteAll(root string) (map[string]*Setup, error) {
	out := map[string]*Setup{}
	for _, c := range Cases() {
		s, err := c.Build(filepath.Join(root, c.Name))
		if err != nil {
			return nil, fmt.Errorf("corpus case %s: %w", c.Name, err)
		}
		out[c.Name] = s
	}
	return out, nil
}
