package calc

import (
	"math"
	"testing"

	"github.com/thermalmovement/service/internal/units"
)

func near(got, want, relTol float64) bool {
	if want == 0 {
		return math.Abs(got) <= relTol
	}
	return math.Abs(got-want) <= relTol*math.Abs(want)
}

func TestLinearConst(t *testing.T) {
	tests := []struct {
		name                 string
		lengthM, alpha, dT   float64
		wantDeltaM, wantEndM float64
	}{
		// EN 1993-1-1 3.2.6: alpha = 12e-6/K for steel (value from memory of
		// EN 1993-1-1, not re-read); dL = alpha L dT by definition of the mean
		// coefficient (ASTM E228, from memory, not re-read): 100 m x 12e-6 x 40 K = 48 mm.
		{"steel 100 m, 40 K", 100, 12e-6, 40, 0.048, 100.048},
		// EN 1991-1-5 Table C.1: concrete 10e-6/K (value from memory of EN 1991-1-5, not re-read).
		{"concrete 30 m, -25 K", 30, 10e-6, -25, -0.0075, 29.9925},
		// AASHTO LRFD eq. 3.12.2.3-1, design movement = alpha L (TMaxDesign - TMinDesign),
		// with 6.4.1 steel 6.5e-6/degF and Procedure A moderate climate 0..120 degF
		// (values from memory of AASHTO LRFD, not re-read): 300 ft x 6.5e-6 x 120 = 0.234 ft.
		{"AASHTO steel 300 ft, 0..120 degF", 300 * 0.3048, 6.5e-6 * 9 / 5, 120 * 5.0 / 9, 0.234 * 0.3048, 300*0.3048 + 0.234*0.3048},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := LinearConst(tt.lengthM, tt.alpha, units.TemperatureDifference(tt.dT))
			if !near(r.DeltaLengthM, tt.wantDeltaM, 1e-12) || !near(r.FinalLengthM, tt.wantEndM, 1e-12) {
				t.Errorf("LinearConst(%v, %v, %v) = %+v, want dL %v, L %v", tt.lengthM, tt.alpha, tt.dT, r, tt.wantDeltaM, tt.wantEndM)
			}
			if r.AlphaMean != tt.alpha || !near(r.Strain, tt.alpha*tt.dT, 1e-12) {
				t.Errorf("LinearConst alpha_mean %v strain %v, want %v, %v", r.AlphaMean, r.Strain, tt.alpha, tt.alpha*tt.dT)
			}
		})
	}
}

// Property: heating then cooling by the same difference returns the length
// to first order; with the same mean coefficient referred to each start
// length, L (1 + a dT)(1 - a dT) = L (1 - (a dT)^2). Common practice, no
// published source.
func TestLinearRoundTrip(t *testing.T) {
	for _, dT := range []float64{1, 10, 50, 300} {
		up := LinearConst(50, 12e-6, units.TemperatureDifference(dT))
		down := LinearConst(up.FinalLengthM, 12e-6, units.TemperatureDifference(-dT))
		e := 12e-6 * dT
		if !near(down.FinalLengthM, 50*(1-e*e), 1e-13) {
			t.Errorf("round trip %v K: %v, want %v", dT, down.FinalLengthM, 50*(1-e*e))
		}
	}
}

func TestAreaAndVolumeExactVersusLinear(t *testing.T) {
	// Isotropic solid: A (1 + e)^2 and V (1 + e)^3, first order 2eA and 3eV
	// (beta = 3 alpha): any physics handbook, e.g. CRC Handbook of Chemistry
	// and Physics, thermal expansion section (from memory, not re-read).
	e := 24e-6 * 100.0 // aluminium, EN 1991-1-5 Table C.1 24e-6/K (memory), 100 K
	a := AreaStrain(2, e, e)
	if !near(a.FinalAreaM2, 2*(1+e)*(1+e), 1e-14) || !near(a.DeltaAreaLinearM2, 2*2*e, 1e-14) {
		t.Errorf("AreaStrain = %+v", a)
	}
	if d := a.DeltaAreaM2 - a.DeltaAreaLinearM2; !near(d, 2*e*e, 1e-9) {
		t.Errorf("exact minus linear area = %v, want A e^2 = %v", d, 2*e*e)
	}
	v := SolidVolume(3, e)
	if !near(v.FinalVolumeM3, 3*math.Pow(1+e, 3), 1e-14) || !near(v.DeltaVolumeLinearM3, 9*e, 1e-14) {
		t.Errorf("SolidVolume = %+v", v)
	}
	if d := v.DeltaVolumeM3 - v.DeltaVolumeLinearM3; !near(d, 3*(3*e*e+e*e*e), 1e-9) {
		t.Errorf("exact minus linear volume = %v", d)
	}
	// Orthotropic: the two directions multiply.
	o := AreaStrain(1, 1e-3, 3e-3)
	if !near(o.FinalAreaM2, 1.001*1.003, 1e-14) {
		t.Errorf("orthotropic area = %v", o.FinalAreaM2)
	}
}

func TestHoleGrowsLikeMaterial(t *testing.T) {
	// A hole in a plate grows as a disc of the plate's material would
	// (every length in the plane scales by 1 + e): any mechanics-of-materials
	// text (from memory of Gere and Timoshenko, not re-read).
	d := 0.080
	e := 12e-6 * 200
	disc := AreaStrain(CircleArea(d), e, e)
	if !near(disc.FinalAreaM2, CircleArea(d*(1+e)), 1e-13) {
		t.Errorf("hole area %v, want circle of grown diameter %v", disc.FinalAreaM2, CircleArea(d*(1+e)))
	}
}

func TestVessel(t *testing.T) {
	// Net change of a liquid in a container = liquid change - container
	// change, container volume scaling by (1 + alpha dT)^3
	// (verification.md, Liquids).
	liquid := VolumeBeta(1, 2.1e-4, 60)
	v := InVessel(1, 12e-6*60, liquid.FinalVolumeM3)
	wantCap := math.Pow(1+12e-6*60, 3)
	if !near(v.FinalVolumeM3, wantCap, 1e-14) || !near(v.NetOverflowM3, liquid.FinalVolumeM3-wantCap, 1e-12) {
		t.Errorf("InVessel = %+v", v)
	}
}

func TestWaterDensityKell(t *testing.T) {
	// Tanaka et al. (2001), Metrologia 38:301, Table: 998.2067 kg/m3 at
	// 20 degC (read); the other points are from the same paper's formula,
	// rho = a5 [1 - (t + a1)^2 (t + a2) / (a3 (t + a4))], a1 = -3.983035,
	// a2 = 301.797, a3 = 522528.9, a4 = 69.34881, a5 = 999.974950 (value
	// from memory of Tanaka et al. 2001, not re-read). Kell (1975) and
	// Tanaka differ by less than 0.01 kg/m3 over 0..40 degC.
	tanaka := func(t float64) float64 {
		return 999.974950 * (1 - (t-3.983035)*(t-3.983035)*(t+301.797)/(522528.9*(t+69.34881)))
	}
	if got := WaterDensityAnyT(units.Celsius(20)); math.Abs(got-998.2067) > 0.01 {
		t.Errorf("Kell at 20 degC = %v, want 998.2067 +- 0.01 (Tanaka 2001)", got)
	}
	for c := 0.0; c <= 40; c += 2.5 {
		got, err := WaterDensity(units.Celsius(c))
		if err != nil || math.Abs(got-tanaka(c)) > 0.01 {
			t.Errorf("WaterDensity(%v degC) = %v, %v; Tanaka %v", c, got, err, tanaka(c))
		}
	}
	// Maximum density near 4 degC (Tanaka: 3.983 degC).
	if !(WaterDensityAnyT(units.Celsius(4)) > WaterDensityAnyT(units.Celsius(2)) && WaterDensityAnyT(units.Celsius(4)) > WaterDensityAnyT(units.Celsius(6))) {
		t.Error("Kell's density has no maximum near 4 degC")
	}
	for _, c := range []float64{-0.1, 150.1} {
		if _, err := WaterDensity(units.Celsius(c)); err != ErrOutOfRange {
			t.Errorf("WaterDensity(%v degC) error = %v, want ErrOutOfRange", c, err)
		}
	}
}

func TestIntervalStrainASME(t *testing.T) {
	// ASME BPVC II-D tables TE (read): strain(T1 -> T2) =
	// [a2 (T2 - T0) - a1 (T1 - T0)] / [1 + a1 (T1 - T0)] for mean
	// coefficients a referenced to T0. The points are the mean coefficients
	// of 1.4301 (304) stainless from 20 degC at 100, 200 and 300 degC of the
	// producer datasheet cited in the catalogue (read in a public code copy).
	t0 := units.Celsius(20)
	m, err := NewMeanTable(t0, []units.Temperature{units.Celsius(100), units.Celsius(200), units.Celsius(300)}, []float64{16.0e-6, 16.5e-6, 17.0e-6})
	if err != nil {
		t.Fatal(err)
	}
	t1, t2 := units.Celsius(100), units.Celsius(300)
	a1, a2 := 16.0e-6, 17.0e-6
	want := (a2*280 - a1*80) / (1 + a1*80)
	if got := IntervalStrain(m, t1, t2); !near(got, want, 1e-12) {
		t.Errorf("IntervalStrain = %v, want %v", got, want)
	}
	// From the reference itself the strain is the mean coefficient times dT.
	if got := IntervalStrain(m, t0, units.Celsius(200)); !near(got, 16.5e-6*180, 1e-12) {
		t.Errorf("IntervalStrain from T0 = %v, want %v", got, 16.5e-6*180)
	}
	// Going up then down returns to zero strain: (1+e12)(1+e21) = 1.
	up, down := IntervalStrain(m, t1, t2), IntervalStrain(m, t2, t1)
	if !near((1+up)*(1+down), 1, 1e-15) {
		t.Errorf("up %v then down %v does not return", up, down)
	}
}

func TestEN1993SteelElongation(t *testing.T) {
	// EN 1993-1-2 3.4.1.1 (read in stored public code quoting the clause):
	// dl/l = 1.2e-5 T + 0.4e-8 T^2 - 2.416e-4 for 20 <= T < 750 degC,
	// 1.1e-2 for 750..860, 2e-5 T - 6.2e-3 for 860..1200.
	c, err := NewPiecewiseStrain([]Segment{
		{units.Celsius(20), units.Celsius(750), []float64{-2.416e-4, 1.2e-5, 0.4e-8}},
		{units.Celsius(750), units.Celsius(860), []float64{1.1e-2}},
		{units.Celsius(860), units.Celsius(1200), []float64{-6.2e-3, 2e-5}},
	}, 1, true, units.Celsius(20))
	if err != nil {
		t.Fatal(err)
	}
	raw := func(T float64) float64 { return 1.2e-5*T + 0.4e-8*T*T - 2.416e-4 }
	for _, T := range []float64{100, 400, 600} {
		// Strain from 20 degC: the standard's formula is already zero at 20
		// degC to 1e-9 (1.2e-5*20 + 0.4e-8*400 - 2.416e-4 = 0).
		if got := IntervalStrain(c, units.Celsius(20), units.Celsius(T)); !near(got, raw(T), 1e-9) {
			t.Errorf("steel strain 20..%v degC = %v, want %v", T, got, raw(T))
		}
	}
	if got := c.Strain(units.Celsius(800)); !near(got, 1.1e-2, 1e-9) {
		t.Errorf("plateau strain = %v, want 1.1e-2", got)
	}
}
