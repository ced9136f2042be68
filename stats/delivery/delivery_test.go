package delivery

import (
	"math"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.12g, want %.12g (hand computation)", what, got, want)
	}
}

// Hand computations, written out.
func TestAvailabilityByHand(t *testing.T) {
	// 2 failures a year, 100 h mean wait, 24 h repair: 2 x 124 = 248 h down
	// of 8766: A = 1 - 248/8766 = 0.971708875199635
	near(t, "Availability(2, 100, 24)", Availability(2, 100, 24), 1-248.0/8766, 1e-15)
	near(t, "Availability(100, 200, 24)", Availability(100, 200, 24), 0, 0)
	if !math.IsNaN(Availability(1, math.NaN(), 24)) {
		t.Error("Availability with no wait is not NaN")
	}
	// two months: A = 0.9 with 300 MWh, 0.6 with 100 MWh: (270 + 60) / 400
	near(t, "EnergyWeightedAvailability", EnergyWeightedAvailability([]float64{0.9, 0.6, math.NaN()}, []float64{300, 100, 50}), 330.0/400, 1e-15)
}

func TestLossesByHand(t *testing.T) {
	// 60 km geodesic x route factor 1.2 = 72 km; AC: 0.005 + 0.0003 x 72 = 0.0266
	km := RouteKm(60, 1.2)
	near(t, "RouteKm", km, 72, 1e-12)
	near(t, "AC loss", DefaultAC.Loss(km), 0.0266, 1e-15)
	// DC: 0.025 + 0.00003 x 72 = 0.02716
	near(t, "DC loss", DefaultDC.Loss(km), 0.02716, 1e-15)
	// crossover: (0.025 - 0.005) / (0.0003 - 0.00003) = 0.02 / 0.00027 = 74.074...
	near(t, "crossover", LossCrossoverKm(DefaultAC, DefaultDC), 0.02/0.00027, 1e-9)
	if !math.IsInf(LossCrossoverKm(DefaultAC, DefaultAC), 1) {
		t.Error("equal models cross")
	}
	near(t, "loss clipped", TransmissionLoss(0.5, 0.01, 100), 1, 0)
}

func TestDeliveredByHand(t *testing.T) {
	// 1000 MWh x 0.95 x 0.9 x (1 - 0.03) = 829.35 MWh
	near(t, "Delivered", Delivered(1000, 0.95, 0.9, 0.03), 829.35, 1e-9)
	// 829.35 MWh from 560 kW: 829350 kWh / (560 x 8766) = 0.168942...
	near(t, "CapacityFactor", CapacityFactor(829.35, 560), 829350.0/(560*8766), 1e-15)
	// 150 m x 200 m spacing: 1e6 / 30000 = 33.33 devices per km^2
	near(t, "DevicesPerKm2", DevicesPerKm2(150, 200), 100.0/3, 1e-12)
}

func TestAnnuityByHand(t *testing.T) {
	// r = 8 %, n = 20: 1.08^20 = 4.660957144; CRF = 0.08 x 4.660957144 / 3.660957144
	// = 0.101852209 (engineering-economics tables list 0.10185)
	near(t, "CRF(0.08, 20)", CapitalRecoveryFactor(0.08, 20), 0.1018522088, 1e-9)
	near(t, "CRF(0, 25)", CapitalRecoveryFactor(0, 25), 0.04, 1e-15)
	// capex 10e6, opex 0.4e6 a year, 5000 MWh, 8 %, 20 years:
	// (10e6 x 0.1018522088 + 0.4e6) / 5000 = (1018522.088 + 400000) / 5000 = 283.7044176
	near(t, "LCOE", LCOE(10e6, 0.4e6, 5000, 0.08, 20), 283.7044176, 1e-6)
	if !math.IsNaN(LCOE(1, 1, 0, 0.08, 20)) {
		t.Error("LCOE with no energy is not NaN")
	}
}
