package synth

import (
	"fmt"
	"math"

	"github.com/fhs/go-netcdf/netcdf"
)

// specBuilder discretises JONSWAP x cos^2s spectra on the scenario's axes.
// Values are the continuous spectrum evaluated at the bin centres (no bin
// averaging).
type specBuilder struct {
	sp       *Spectra
	stations []int
	freq     []float64
	dir      []float64
	norms    map[float64]float64 // gamma -> jonswapShapeIntegral(gamma)
	dirScale float64             // 1 for per radian, pi/180 for per degree
	dtmp     []float64
	keep     int // Scenario.KeepBits
}

func newSpecBuilder(c *Scenario, sites []site) *specBuilder {
	b := &specBuilder{sp: c.Spectra, stations: c.stations(), norms: map[float64]float64{}, dirScale: 1, keep: c.KeepBits}
	b.freq, b.dir = c.Spectra.axes()
	if c.Spectra.PerDegree {
		b.dirScale = math.Pi / 180
	}
	b.dtmp = make([]float64, len(b.dir))
	return b
}

func (b *specBuilder) perStation() int {
	if b.sp.OneD {
		return len(b.freq)
	}
	return len(b.freq) * len(b.dir)
}

func (b *specBuilder) norm(gamma float64) float64 {
	n, ok := b.norms[gamma]
	if !ok {
		n = jonswapShapeIntegral(gamma)
		b.norms[gamma] = n
	}
	return n
}

// params returns the spectrum parameters of station j at the current step.
func (b *specBuilder) params(j int, gen *seaStates) JonswapParams {
	if len(b.sp.Fixed) > 0 {
		return b.sp.Fixed[j]
	}
	si := b.stations[j]
	return JonswapParams{Hm0: gen.hm0[si], Tp: gen.tp[si], Gamma: b.sp.Gamma, SpreadS: b.sp.SpreadS, DirFrom: gen.dir[si]}
}

// roundMantissa rounds x to keep float32 mantissa bits (round half away
// from zero on the bit pattern); keep outside 1..22 returns x unchanged.
func roundMantissa(x float32, keep int) float32 {
	if keep < 1 || keep > 22 || x == 0 || math.IsInf(float64(x), 0) || x != x {
		return x
	}
	drop := uint(23 - keep)
	b := math.Float32bits(x)
	b += 1 << (drop - 1)
	b &^= (1 << drop) - 1
	return math.Float32frombits(b)
}

// fill writes station j's spectrum, frequency-major (then direction), into out.
func (b *specBuilder) fill(out []float32, j int, gen *seaStates) {
	p := b.params(j, gen)
	if math.IsNaN(p.Hm0) {
		for i := range out {
			out[i] = FillFloat
		}
		return
	}
	nrm := b.norm(p.Gamma)
	if b.sp.OneD {
		for i, f := range b.freq {
			out[i] = roundMantissa(float32(jonswapS(f, p.Hm0, p.Tp, p.Gamma, nrm)), b.keep)
		}
		b.floor(out)
		return
	}
	for k, th := range b.dir {
		b.dtmp[k] = spreadingCos2s(th, p.DirFrom, p.SpreadS) * b.dirScale
	}
	nd := len(b.dir)
	for i, f := range b.freq {
		e := jonswapS(f, p.Hm0, p.Tp, p.Gamma, nrm)
		for k := range b.dir {
			out[i*nd+k] = roundMantissa(float32(e*b.dtmp[k]), b.keep)
		}
	}
	b.floor(out)
}

// floor sets values below FloorRel times the largest value of out to zero.
func (b *specBuilder) floor(out []float32) {
	if b.sp.FloorRel <= 0 {
		return
	}
	var mx float32
	for _, x := range out {
		mx = max(mx, x)
	}
	lim := float32(b.sp.FloorRel) * mx
	for i, x := range out {
		if x < lim {
			out[i] = 0
		}
	}
}

// createSpec defines a spectral point-set file: station, frequency, direction,
// lon/lat/depth per station and dirspec (or freqspec), with the generating parameters
// in attributes.
func (c *Scenario) createSpec(path string, nt int, sites []site, b *specBuilder) (*ncFile, error) {
	f, d, err := c.create(path)
	if err != nil {
		return nil, err
	}
	td, tv := c.defineTime(d, nt)
	f.time = tv
	ns := len(b.stations)
	f.nsp = ns
	sD := d.dim("station", ns)
	fD := d.dim("frequency", len(b.freq))
	fV := d.v("frequency", netcdf.DOUBLE, fD)
	d.text(fV.Attr("standard_name"), "sea_surface_wave_frequency")
	d.text(fV.Attr("long_name"), "frequency of the spectral bin centre")
	d.text(fV.Attr("units"), "Hz")
	var dV netcdf.Var
	dims := []netcdf.Dim{td, sD, fD}
	if !b.sp.OneD {
		dD := d.dim("direction", len(b.dir))
		dV = d.v("direction", netcdf.DOUBLE, dD)
		d.text(dV.Attr("standard_name"), "sea_surface_wave_from_direction")
		d.text(dV.Attr("long_name"), "direction the spectral component comes from, clockwise from north (bin centre)")
		d.text(dV.Attr("units"), "degree")
		dims = append(dims, dD)
	}
	lonV, latV := d.v("lon", netcdf.DOUBLE, sD), d.v("lat", netcdf.DOUBLE, sD)
	d.coordAttrs(lonV, latV, false)
	depV := d.v("depth", netcdf.FLOAT, sD)
	d.text(depV.Attr("standard_name"), depthVar.std)
	d.text(depV.Attr("long_name"), depthVar.long)
	d.text(depV.Attr("units"), "m")
	d.text(depV.Attr("positive"), "down")
	d.text(depV.Attr("coordinates"), "lon lat")
	d.f32(depV.Attr("_FillValue"), FillFloat)
	var v netcdf.Var
	if b.sp.OneD {
		v = d.v("freqspec", netcdf.FLOAT, dims...)
		d.text(v.Attr("standard_name"), "sea_surface_wave_variance_spectral_density")
		d.text(v.Attr("long_name"), "frequency spectrum of surface elevation variance")
		d.text(v.Attr("units"), "m2 s")
	} else {
		v = d.v("dirspec", netcdf.FLOAT, dims...)
		d.text(v.Attr("standard_name"), "sea_surface_wave_directional_variance_spectral_density")
		d.text(v.Attr("long_name"), "directional spectrum of surface elevation variance")
		if b.sp.PerDegree {
			d.text(v.Attr("units"), "m2 s degree-1")
		} else {
			d.text(v.Attr("units"), "m2 s rad-1")
		}
	}
	d.f32(v.Attr("_FillValue"), FillFloat)
	d.text(v.Attr("coordinates"), "lon lat")
	d.text(v.Attr("synthetic_spectrum"), "JONSWAP (Hasselmann et al. 1973) frequency spectrum normalised so that its "+
		"continuous integral is Hm0^2/16, times cos^2s((theta - theta_m)/2) spreading (Longuet-Higgins et al. 1963) "+
		"normalised over the circle; values at the bin centres, no bin averaging; theta is the direction waves come from")
	d.f64(v.Attr("synthetic_sigma_a"), jonswapSigmaA)
	d.f64(v.Attr("synthetic_sigma_b"), jonswapSigmaB)
	if len(b.sp.Fixed) > 0 {
		var hm0, tp, gam, s, dir []float64
		for _, p := range b.sp.Fixed {
			hm0, tp, gam = append(hm0, p.Hm0), append(tp, p.Tp), append(gam, p.Gamma)
			s, dir = append(s, p.SpreadS), append(dir, p.DirFrom)
		}
		d.text(v.Attr("synthetic_constant_in_time"), "yes: each station has the same spectrum at every time step")
		d.f64(v.Attr("synthetic_hm0_m"), hm0...)
		d.f64(v.Attr("synthetic_tp_s"), tp...)
		d.f64(v.Attr("synthetic_gamma"), gam...)
		if !b.sp.OneD {
			d.f64(v.Attr("synthetic_spread_s"), s...)
			d.f64(v.Attr("synthetic_dir_from_deg"), dir...)
		}
	} else {
		d.text(v.Attr("synthetic_constant_in_time"), "no: Hm0, Tp and mean direction follow the generated sea states")
		d.f64(v.Attr("synthetic_gamma"), b.sp.Gamma)
		if !b.sp.OneD {
			d.f64(v.Attr("synthetic_spread_s"), b.sp.SpreadS)
		}
	}
	if k := b.keep; k >= 1 && k <= 22 {
		d.text(v.Attr("synthetic_precision"), fmt.Sprintf("values rounded to %d float32 mantissa bits (relative error below %.1e) to help compression", k, math.Ldexp(1, -(k+1))))
	}
	if b.sp.FloorRel > 0 {
		d.text(v.Attr("synthetic_floor"), fmt.Sprintf("values below %g times the station's largest value at the time step written as 0", b.sp.FloorRel))
	}
	c.compress(d, v)
	f.vars = []netcdf.Var{v}
	if d.err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: define %s: %w", f.tmp, d.err)
	}
	if err := f.ds.EndDef(); err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: end definitions of %s: %w", f.tmp, err)
	}
	var lon, lat, dep []float64
	for _, si := range b.stations {
		lon, lat, dep = append(lon, sites[si].lon), append(lat, sites[si].lat), append(dep, sites[si].depth)
	}
	err = fV.WriteFloat64s(b.freq)
	if err == nil && !b.sp.OneD {
		err = dV.WriteFloat64s(b.dir)
	}
	if err == nil {
		err = lonV.WriteFloat64s(lon)
	}
	if err == nil {
		err = latV.WriteFloat64s(lat)
	}
	if err == nil {
		err = depV.WriteFloat32s(toFloat32(dep, 0))
	}
	if err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: write axes to %s: %w", f.tmp, err)
	}
	return f, nil
}
