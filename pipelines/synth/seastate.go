package synth

import (
	"math"
	"math/rand/v2"
)

// site is one cell or station of the scenario, in the internal west-to-east,
// south-to-north order.
type site struct {
	lon, lat float64
	u, v     float64 // position in the box, 0..1 west->east, south->north
	sea      bool
	depth    float64 // m, NaN on land
	exposure float64 // fraction of the offshore Hm0 that reaches the site
}

// coastU is the invented coastline: the fraction of the box width (west to
// east) at which land begins, as a function of the south-north position v.
// Invented for the synthetic scenario (no source: not a real coast).
func coastU(v float64) float64 {
	return 0.82 + 0.06*math.Sin(2*math.Pi*1.5*v) + 0.03*math.Cos(2*math.Pi*3.7*v)
}

// shelfDepth gives the invented sea-floor depth (m) at distance q offshore,
// q = (coastU - u)/0.7 clamped to [0,1]: h = 15 + 185 q^1.5, 15 m at the coast
// to 200 m offshore. Invented for the synthetic scenario (no source).
func shelfDepth(q float64) float64 {
	q = math.Max(0, math.Min(1, q))
	return 15 + 185*math.Pow(q, 1.5)
}

// exposureAt gives the fraction of the offshore Hm0 reaching depth h (m):
// 0.55 + 0.45 min(1, h/120). An invented stand-in for shoaling, refraction and
// bottom friction losses on the shelf (no source: synthetic scenario only).
func exposureAt(h float64) float64 {
	return 0.55 + 0.45*math.Min(1, h/120)
}

// sites lays out the cells of the scenario.
func (s *Scenario) sites() []site {
	g := s.Grid
	frac := func(i, n int) float64 { return (float64(i) + 0.5) / float64(n) }
	mk := func(u, v, lon, lat float64) site {
		st := site{lon: lon, lat: lat, u: u, v: v, sea: true}
		cu := coastU(v)
		if g.NoLand {
			cu = 1.2
		}
		if u >= cu {
			st.sea = false
			st.depth = math.NaN()
			return st
		}
		st.depth = shelfDepth((cu - u) / 0.7)
		st.exposure = exposureAt(st.depth)
		return st
	}
	lerp := func(a, b, t float64) float64 { return a + (b-a)*t }
	var out []site
	switch g.Kind {
	case Points:
		// Stations along a line from the south-west offshore corner towards
		// the north-east coast, stopping short of land.
		for i := 0; i < g.NX; i++ {
			t := frac(i, g.NX)
			u, v := 0.05+0.7*t, 0.1+0.8*t
			out = append(out, mk(u, v, lerp(g.LonMin, g.LonMax, u), lerp(g.LatMin, g.LatMax, v)))
		}
	default:
		lon0, lat0 := (g.LonMin+g.LonMax)/2, (g.LatMin+g.LatMax)/2
		a := g.RotationDeg * math.Pi / 180
		for iy := 0; iy < g.NY; iy++ {
			for ix := 0; ix < g.NX; ix++ {
				u, v := axisFrac(ix, g.NX), axisFrac(iy, g.NY)
				lon, lat := g.jitterSite(ix, iy, lerp(g.LonMin, g.LonMax, u), lerp(g.LatMin, g.LatMax, v))
				if g.Kind == Curvilinear {
					dx, dy := lon-lon0, lat-lat0
					lon = lon0 + dx*math.Cos(a) - dy*math.Sin(a)
					lat = lat0 + dx*math.Sin(a) + dy*math.Cos(a)
				}
				out = append(out, mk(u, v, lon, lat))
			}
		}
	}
	return out
}

// axisFrac places cell i of n along an axis so that the first and last cell
// centres sit on the box edges (a single cell sits in the middle).
func axisFrac(i, n int) float64 {
	if n == 1 {
		return 0.5
	}
	return float64(i) / float64(n-1)
}

// storm is one invented storm event.
type storm struct {
	peakHour  float64 // hours from the record start, at the western edge
	halfWidth float64 // h, e-folding half duration
	amp       float64 // m, added to the offshore Hm0 at the storm track
	trackV    float64 // south-north position of the track, box fraction
	dirFrom   float64 // degrees, direction the storm waves come from
	cosDir    float64 // cos and sin of dirFrom
	sinDir    float64
}

// seasonalHm0 is the invented offshore background Hm0 (m) at year fraction
// phase (0 = 1 January): 2.2 + 1.0 cos(2 pi (phase - 0.04)), most energetic in
// mid-January (northern-hemisphere winter). Synthetic scenario, no source.
func seasonalHm0(phase float64) float64 {
	return 2.2 + 1.0*math.Cos(2*math.Pi*(phase-0.04))
}

// stormRate is the invented mean number of storms per month at year fraction
// phase: 2 + 1.5 cos(2 pi (phase - 0.04)), 3.5 in winter, 0.5 in summer.
func stormRate(phase float64) float64 {
	return 2 + 1.5*math.Cos(2*math.Pi*(phase-0.04))
}

// teFromHm0 is the invented energy-period relation of the scenario:
// Te = 3.6 + 3.2 sqrt(Hm0) (s), scaled by a random factor. It keeps the
// steepness 2 pi Hm0 / (g Tp^2) near 1/40 in storms, below the wind-sea
// breaking limit of about 1/15 (common practice). Synthetic, no source.
func teFromHm0(hm0, factor float64) float64 {
	te := (3.6 + 3.2*math.Sqrt(hm0)) * factor
	return math.Max(3.5, math.Min(15, te))
}

// tpFromTe is the generator's peak period, Tp = Te / 0.9 (s); the ratio
// Te/Tp = 0.9 is the usual assumption for a JONSWAP-like sea with gamma = 3.3
// (common practice; IEC TS 62600-101 uses Te = 0.9 Tp when only Tp is known).
func tpFromTe(te float64) float64 { return te / 0.9 }

// depthLimitedHm0 caps Hm0 at 0.55 h, a screening limit for depth-induced
// breaking on a gentle shelf (common practice: Hm0/h of about 0.5-0.6).
func depthLimitedHm0(hm0, h float64) float64 { return math.Min(hm0, 0.55*h) }

// makeStorms draws the storms of the record, month by month, from the seed.
func makeStorms(rng *rand.Rand, months []monthSpan) []storm {
	var out []storm
	for _, m := range months {
		n := poisson(rng, stormRate(m.phaseMid))
		for k := 0; k < n; k++ {
			a := 1.0 + 1.6*rng.ExpFloat64()
			out = append(out, storm{
				peakHour:  m.startHour + rng.Float64()*(m.endHour-m.startHour),
				halfWidth: 10 + 26*rng.Float64(),
				amp:       math.Min(a, 6.5),
				trackV:    -0.3 + 1.6*rng.Float64(),
				dirFrom:   230 + 90*rng.Float64(),
			})
			sm := &out[len(out)-1]
			sm.cosDir, sm.sinDir = math.Cos(sm.dirFrom*math.Pi/180), math.Sin(sm.dirFrom*math.Pi/180)
		}
	}
	return out
}

// poisson draws a Poisson count with mean lambda (Knuth's multiplication
// method, D. E. Knuth, The Art of Computer Programming vol. 2, 3.4.1).
func poisson(rng *rand.Rand, lambda float64) int {
	l, k, p := math.Exp(-lambda), 0, 1.0
	for {
		p *= rng.Float64()
		if p <= l {
			return k
		}
		k++
	}
}

// seaStates generates the bulk sea state of every site, step by step. The
// whole record is one stream, so per-month files continue each other.
type seaStates struct {
	sites   []site
	storms  []storm
	noise   *rand.Rand
	xh, xt  []float64 // AR(1) log-noise states per site for Hm0 and Te
	ch, ct  float64   // AR(1) log-noise states shared by all sites
	hm0, te []float64
	tp, dir []float64
	active  []int   // storms in reach at the current step
	lagMid  float64 // mid and half range of the storm delays over the sites, h
	lagHalf float64
}

const (
	arPhi     = 0.97 // lag-one correlation of the 3-hourly log noise (invented)
	sigmaHm0  = 0.18 // std of log Hm0 noise (invented)
	sigmaTe   = 0.06 // std of log Te noise (invented)
	stormLagH = 2.0  // h of storm delay per degree of longitude eastwards (invented)
	shareRho  = 0.8  // fraction of the log-noise variance shared by all sites (invented)
)

func newSeaStates(s *Scenario, sites []site, months []monthSpan) *seaStates {
	n := len(sites)
	g := &seaStates{
		sites:  sites,
		storms: makeStorms(rand.New(rand.NewPCG(s.Seed, 0x5eed0001)), months),
		noise:  rand.New(rand.NewPCG(s.Seed, 0x5eed0002)),
		xh:     make([]float64, n), xt: make([]float64, n),
		hm0: make([]float64, n), te: make([]float64, n), tp: make([]float64, n), dir: make([]float64, n),
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, st := range sites {
		lag := stormLagH * (st.lon - sites[0].lon)
		lo, hi = math.Min(lo, lag), math.Max(hi, lag)
	}
	g.lagMid, g.lagHalf = (lo+hi)/2, (hi-lo)/2+1
	// start the noise in its stationary distribution
	g.ch, g.ct = sigmaHm0*g.noise.NormFloat64(), sigmaTe*g.noise.NormFloat64()
	for i := range sites {
		g.xh[i] = sigmaHm0 * g.noise.NormFloat64()
		g.xt[i] = sigmaTe * g.noise.NormFloat64()
	}
	return g
}

// step advances to the time hour (from the record start) at year fraction phase.
func (g *seaStates) step(hour, phase float64) {
	base := seasonalHm0(phase)
	baseDir := 275 + 15*math.Sin(2*math.Pi*phase)
	innov := math.Sqrt(1 - arPhi*arPhi)
	lon0 := g.sites[0].lon
	g.ch = arPhi*g.ch + innov*sigmaHm0*g.noise.NormFloat64()
	g.ct = arPhi*g.ct + innov*sigmaTe*g.noise.NormFloat64()
	wS, wL := math.Sqrt(shareRho), math.Sqrt(1-shareRho)
	bx, by := base*math.Cos(baseDir*math.Pi/180), base*math.Sin(baseDir*math.Pi/180)
	// storms that can reach any site at this hour
	g.active = g.active[:0]
	for k := range g.storms {
		sm := &g.storms[k]
		if math.Abs(hour-g.lagMid-sm.peakHour) <= 4*sm.halfWidth+g.lagHalf {
			g.active = append(g.active, k)
		}
	}
	for i, st := range g.sites {
		// draw the noise for every site, land too, so the stream does not
		// depend on the land mask
		g.xh[i] = arPhi*g.xh[i] + innov*sigmaHm0*g.noise.NormFloat64()
		g.xt[i] = arPhi*g.xt[i] + innov*sigmaTe*g.noise.NormFloat64()
		if !st.sea {
			g.hm0[i], g.te[i], g.tp[i], g.dir[i] = math.NaN(), math.NaN(), math.NaN(), math.NaN()
			continue
		}
		off := base
		ex, ey := bx, by
		t := hour - stormLagH*(st.lon-lon0)
		for _, k := range g.active {
			sm := &g.storms[k]
			d := (t - sm.peakHour) / sm.halfWidth
			if d > 4 || d < -4 {
				continue
			}
			dv := (st.v - sm.trackV) / 0.6
			a := sm.amp * math.Exp(-d*d-dv*dv)
			off += a
			ex += a * sm.cosDir
			ey += a * sm.sinDir
		}
		hs := off * st.exposure * math.Exp(wS*g.ch+wL*g.xh[i]-sigmaHm0*sigmaHm0/2)
		hs = depthLimitedHm0(hs, st.depth)
		te := teFromHm0(hs, math.Exp(wS*g.ct+wL*g.xt[i]))
		dir := math.Atan2(ey, ex) * 180 / math.Pi
		// turn towards the shore normal (waves from 270) in shallow water:
		// an invented stand-in for refraction
		turn := math.Min(1, st.depth/80)
		dir = 270 + wrap180(dir-270)*turn
		g.hm0[i], g.te[i], g.tp[i], g.dir[i] = hs, te, tpFromTe(te), wrap360(dir)
	}
}

func wrap180(a float64) float64 {
	a = math.Mod(a+180, 360)
	if a < 0 {
		a += 360
	}
	return a - 180
}

func wrap360(a float64) float64 {
	a = math.Mod(a, 360)
	if a < 0 {
		a += 360
	}
	return a
}
