// Package delivery turns a device's open-water yield into the energy
// delivered ashore and its levelised cost: availability from the waiting
// time for access windows, transmission losses by route length, and the
// annuity (capital recovery factor) of a levelised cost of energy. Each
// formula is one function whose comment gives it and where it comes from.
// These are screening figures from stated assumptions (stats.Caution), not
// investment advice.
package delivery

import "math"

// HoursPerYear is the mean length of a year, 365.25 days (as for the
// peak rates of the extremes).
const HoursPerYear = 8766.0

// Availability returns the share of time a device is running when it fails
// failuresPerYear times a year and each failure stops it for the mean wait
// for an access window plus the repair:
//
//	A = 1 - lambda (W + R) / 8766 h,  clipped to [0, 1]
//
// with lambda in failures per device-year, W the mean wait (h) from a
// failure at a random instant to the first instant from which a repair of
// duration R (h) can start, R the repair duration. This is the downtime
// share of a device with independent failures at a constant rate, each
// followed by a wait and a repair (the steady-state availability, to first
// order in the downtime share; common practice in offshore O&M planning
// from weather windows; the source recalled from memory, not checked:
// Dinwoodie et al. 2015, "Reference cases for verification of operation and
// maintenance simulation models for offshore wind farms", Wind Engineering
// 39(1), and the availability MTBF/(MTBF+MDT) of reliability engineering,
// IEC 60050-192). NaN when W is NaN.
func Availability(failuresPerYear, meanWaitH, repairH float64) float64 {
	if math.IsNaN(meanWaitH) {
		return math.NaN()
	}
	a := 1 - failuresPerYear*(meanWaitH+repairH)/HoursPerYear
	return math.Min(1, math.Max(0, a))
}

// EnergyWeightedAvailability returns the share of the open-water energy that
// is produced, when a failure in calendar month m stops the device for that
// month's mean wait plus the repair and the power lost meanwhile is that
// month's mean power:
//
//	A_E = sum_m A_m E_m / sum_m E_m
//
// with A_m = Availability(lambda, W_m, R) and E_m the energy of month m
// (any unit). Failures in the energetic months thus cost more. Months
// without energy or without an availability (NaN) are left out; NaN when
// no month is left. Source: the energy-based availability of wind and wave
// farm O&M studies (common practice; from memory).
func EnergyWeightedAvailability(avail, energy []float64) float64 {
	var num, den float64
	for m := range avail {
		if m >= len(energy) || math.IsNaN(avail[m]) || !(energy[m] > 0) {
			continue
		}
		num += avail[m] * energy[m]
		den += energy[m]
	}
	if den == 0 {
		return math.NaN()
	}
	return num / den
}

// RouteKm returns the export route length: the geodesic distance (km)
// times the route factor (>= 1) that accounts for the cable not running
// straight (common practice).
func RouteKm(geodesicKm, routeFactor float64) float64 { return geodesicKm * routeFactor }

// TransmissionLoss returns the share of the energy lost between the array
// and the connection point over an export route of routeKm:
//
//	L = fixed + perKm * routeKm,  clipped to [0, 1]
//
// (a share for the terminal equipment, transformers or converter stations,
// plus a share per km of cable; common practice for screening, see
// DefaultAC and DefaultDC).
func TransmissionLoss(fixed, perKm, routeKm float64) float64 {
	return math.Min(1, math.Max(0, fixed+perKm*routeKm))
}

// LossModel is the loss of an export technology: a fixed share and a share
// per km of route.
type LossModel struct {
	Fixed, PerKm float64
}

// DefaultAC and DefaultDC are common-practice screening values of the
// losses of AC and DC export, from memory (not checked against a source):
// AC export loses little in its transformers (0.5 %) but its cable's
// charging current costs about 0.03 % per km; DC export loses about 2.5 %
// in its two converter stations and about 0.003 % per km in its cable. With
// them the losses are equal at about 74 km (LossCrossoverKm), within the
// 50 to 100 km usually quoted for offshore export.
var (
	DefaultAC = LossModel{Fixed: 0.005, PerKm: 0.0003}
	DefaultDC = LossModel{Fixed: 0.025, PerKm: 0.00003}
)

// Loss returns TransmissionLoss of the model over routeKm.
func (m LossModel) Loss(routeKm float64) float64 { return TransmissionLoss(m.Fixed, m.PerKm, routeKm) }

// LossCrossoverKm returns the route length at which two loss models lose
// the same share (a.Fixed + a.PerKm x = b.Fixed + b.PerKm x):
//
//	x = (b.Fixed - a.Fixed) / (a.PerKm - b.PerKm)
//
// +Inf when the lines do not cross at a positive length.
func LossCrossoverKm(a, b LossModel) float64 {
	d := a.PerKm - b.PerKm
	if d == 0 {
		return math.Inf(1)
	}
	x := (b.Fixed - a.Fixed) / d
	if !(x > 0) {
		return math.Inf(1)
	}
	return x
}

// Delivered returns the energy delivered at the connection point:
//
//	E = AEP x arrayFactor x availability x (1 - loss)
//
// (each factor a share, the AEP the open-water yield of the device).
func Delivered(aep, arrayFactor, availability, loss float64) float64 {
	return aep * arrayFactor * availability * (1 - loss)
}

// CapacityFactor returns energy (MWh per year) over what the rated power
// (kW) would give in a year of 8766 h.
func CapacityFactor(energyMWh, ratedKW float64) float64 {
	if !(ratedKW > 0) {
		return math.NaN()
	}
	return energyMWh * 1000 / (ratedKW * HoursPerYear)
}

// DevicesPerKm2 returns the number of devices per km^2 of an array laid out
// on a rectangular grid with spacings along and across the mean wave
// direction (m): 1e6 / (along x across).
func DevicesPerKm2(alongM, acrossM float64) float64 {
	if !(alongM > 0 && acrossM > 0) {
		return math.NaN()
	}
	return 1e6 / (alongM * acrossM)
}

// CapitalRecoveryFactor returns the annuity factor that spreads a capital
// cost over n years at the discount rate r:
//
//	CRF = r (1+r)^n / ((1+r)^n - 1),  and 1/n when r = 0
//
// (the standard annuity formula of engineering economics).
func CapitalRecoveryFactor(r float64, years int) float64 {
	n := float64(years)
	if years <= 0 {
		return math.NaN()
	}
	if r == 0 {
		return 1 / n
	}
	g := math.Pow(1+r, n)
	return r * g / (g - 1)
}

// LCOE returns the levelised cost of energy (currency per MWh) of a plant
// of capital cost capex (currency), yearly operating cost opexPerYear and
// delivered energy energyMWh per year:
//
//	LCOE = (capex x CRF(r, n) + opex) / E
//
// (the fixed-charge-rate form with constant yearly energy and cost; the
// standard screening formula). NaN when E is not positive.
func LCOE(capex, opexPerYear, energyMWh, r float64, years int) float64 {
	if !(energyMWh > 0) {
		return math.NaN()
	}
	return (capex*CapitalRecoveryFactor(r, years) + opexPerYear) / energyMWh
}
