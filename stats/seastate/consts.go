package seastate

import (
	"fmt"
	"math"
)

// Consts holds the physical constants used by every power formula.
type Consts struct {
	Rho float64 // water density, kg/m^3
	G   float64 // gravitational acceleration, m/s^2
}

// DefaultConsts are seawater density 1025 kg/m^3 and g = 9.81 m/s^2, the
// defaults of the project design; the caller records the values it used.
var DefaultConsts = Consts{Rho: 1025, G: 9.81}

// Validate reports whether rho and g are finite and positive, naming the bad
// field so the run spec can be corrected.
func (c Consts) Validate() error {
	if !(c.Rho > 0) || math.IsInf(c.Rho, 0) {
		return fmt.Errorf("seastate: water density rho = %v kg/m^3 is not a finite positive number; set it in the run spec (default 1025)", c.Rho)
	}
	if !(c.G > 0) || math.IsInf(c.G, 0) {
		return fmt.Errorf("seastate: gravitational acceleration g = %v m/s^2 is not a finite positive number; set it in the run spec (default 9.81)", c.G)
	}
	return nil
}

// DefaultTeOverTp is the ratio alpha in Te = alpha * Tp used when a hindcast
// gives only the peak period. IEC TS 62600-101 (2015) recommends alpha = 0.9
// for a standard JONSWAP spectrum with peak enhancement gamma = 3.3 (and 0.86
// for a Pierson-Moskowitz shape); the figures are quoted from memory of the
// TS and should be checked against the published text. The package tests
// check the value against the energy period of a numerically integrated
// JONSWAP spectrum with gamma = 3.3 (JONSWAPPeriodRatios gives 0.9033, and the
// scipy reference in testdata/seastate agrees). The caller must record the
// alpha it used as an assumption in the manifest.
const DefaultTeOverTp = 0.9

// DefaultTeOverTpGamma is the JONSWAP peak enhancement factor behind
// DefaultTeOverTp.
const DefaultTeOverTpGamma = 3.3

// TeFromTp returns the energy period estimated from the peak period,
//
//	Te = alpha * Tp,
//
// the fallback of IEC TS 62600-101 when no spectrum or Te is available
// (alpha: see DefaultTeOverTp). It returns NaN for a non-positive alpha or Tp.
func TeFromTp(tp, alpha float64) float64 {
	if !(tp > 0) || !(alpha > 0) {
		return math.NaN()
	}
	return alpha * tp
}
