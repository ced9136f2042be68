package grid

// Geodesic distance on the WGS 84 ellipsoid.
//
// No Go module of the inverse geodesic problem is served to this project
// (github.com/tidwall/geodesic, a port of Karney's GeographicLib, is not), so
// the inverse problem is solved here by Vincenty's method. Its caveat: for
// nearly antipodal points (about 179.5 degrees or more apart in longitude on
// the equator, the region where the geodesic is not unique or the iteration
// swings) the iteration may fail to converge; Inverse then reports ok =
// false and callers publish no distance. Screening distances are regional
// (ports, coastlines, connection points within hundreds of km), far from that
// region. Accuracy elsewhere is about 0.1 mm (Vincenty 1975), checked against
// pyproj's Geod.inv (Karney 2013, GeographicLib) in testdata/screening.

import "math"

// WGS 84 ellipsoid (NIMA TR8350.2, 3rd ed., 2000, table 3.1): semi-major axis
// a and flattening f.
const (
	WGS84A = 6378137.0
	WGS84F = 1 / 298.257223563
	wgs84B = WGS84A * (1 - WGS84F)
)

// Inverse solves the inverse geodesic problem on WGS 84: the length in metres
// of the shortest geodesic between (lon1, lat1) and (lon2, lat2), in degrees.
//
// Vincenty's inverse formula (T. Vincenty, "Direct and inverse solutions of
// geodesics on the ellipsoid with application of nested equations", Survey
// Review 23(176), 88-93, 1975, eqs. 13-18 and the iteration on lambda):
// with reduced latitudes tan U = (1-f) tan phi, iterate
//
//	sin sigma = sqrt((cos U2 sin L)^2 + (cos U1 sin U2 - sin U1 cos U2 cos L)^2)
//	cos sigma = sin U1 sin U2 + cos U1 cos U2 cos L
//	sin alpha = cos U1 cos U2 sin L / sin sigma
//	cos 2sigma_m = cos sigma - 2 sin U1 sin U2 / cos^2 alpha
//	C = f/16 cos^2 alpha (4 + f (4 - 3 cos^2 alpha))
//	L' = lambda + (1-C) f sin alpha (sigma + C sin sigma (cos 2sigma_m + C cos sigma (-1 + 2 cos^2 2sigma_m)))
//
// from L = lambda2 - lambda1 until L' changes by less than 1e-12 rad, then
// s = b A (sigma - delta sigma) with u^2 = cos^2 alpha (a^2 - b^2)/b^2,
// A = 1 + u^2/16384 (4096 + u^2 (-768 + u^2 (320 - 175 u^2))),
// B = u^2/1024 (256 + u^2 (-128 + u^2 (74 - 47 u^2))) and
// delta sigma = B sin sigma (cos 2sigma_m + B/4 (cos sigma (-1 + 2 cos^2 2sigma_m)
// - B/6 cos 2sigma_m (-3 + 4 sin^2 sigma)(-3 + 4 cos^2 2sigma_m))).
//
// ok is false when the iteration does not converge in 200 steps (nearly
// antipodal points; see the file comment) or an input is not finite.
func Inverse(lon1, lat1, lon2, lat2 float64) (s float64, ok bool) {
	if math.IsNaN(lon1+lat1+lon2+lat2) || math.IsInf(lon1+lat1+lon2+lat2, 0) {
		return math.NaN(), false
	}
	const rad = math.Pi / 180
	f, a, b := WGS84F, WGS84A, wgs84B
	L := NormLon(lon2-lon1) * rad
	U1 := math.Atan((1 - f) * math.Tan(lat1*rad))
	U2 := math.Atan((1 - f) * math.Tan(lat2*rad))
	sinU1, cosU1 := math.Sincos(U1)
	sinU2, cosU2 := math.Sincos(U2)
	lambda := L
	var sinSigma, cosSigma, sigma, cos2Alpha, cos2SigmaM float64
	for iter := 0; ; iter++ {
		if iter == 200 {
			return math.NaN(), false
		}
		sinL, cosL := math.Sincos(lambda)
		t1 := cosU2 * sinL
		t2 := cosU1*sinU2 - sinU1*cosU2*cosL
		sinSigma = math.Sqrt(t1*t1 + t2*t2)
		if sinSigma == 0 {
			return 0, true // coincident points
		}
		cosSigma = sinU1*sinU2 + cosU1*cosU2*cosL
		sigma = math.Atan2(sinSigma, cosSigma)
		sinAlpha := cosU1 * cosU2 * sinL / sinSigma
		cos2Alpha = 1 - sinAlpha*sinAlpha
		if cos2Alpha != 0 {
			cos2SigmaM = cosSigma - 2*sinU1*sinU2/cos2Alpha
		} else {
			cos2SigmaM = 0 // both points on the equator
		}
		C := f / 16 * cos2Alpha * (4 + f*(4-3*cos2Alpha))
		prev := lambda
		lambda = L + (1-C)*f*sinAlpha*(sigma+C*sinSigma*(cos2SigmaM+C*cosSigma*(-1+2*cos2SigmaM*cos2SigmaM)))
		if math.Abs(lambda-prev) < 1e-12 {
			break
		}
		if math.Abs(lambda) > math.Pi {
			return math.NaN(), false // the iteration left its domain: nearly antipodal
		}
	}
	u2 := cos2Alpha * (a*a - b*b) / (b * b)
	A := 1 + u2/16384*(4096+u2*(-768+u2*(320-175*u2)))
	B := u2 / 1024 * (256 + u2*(-128+u2*(74-47*u2)))
	dSigma := B * sinSigma * (cos2SigmaM + B/4*(cosSigma*(-1+2*cos2SigmaM*cos2SigmaM)-
		B/6*cos2SigmaM*(-3+4*sinSigma*sinSigma)*(-3+4*cos2SigmaM*cos2SigmaM)))
	return b * A * (sigma - dSigma), true
}
