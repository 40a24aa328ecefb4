package calc_test

import (
	"testing"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

// allocCurves builds one curve of each kind. The data are those of the
// material catalogue (internal/materials/catalogue.yaml), cited there:
// the EN 1993-1-2 3.4.1.1 elongation of carbon steel (piecewise), the
// NIST cryogenic 304 fit (polynomial, 23..300 K), the NIST OFHC copper
// coefficient fit (log-polynomial) and the 16Mo3 datasheet mean table.
// Only the shape of the data matters here: these tests count
// allocations and verify no values.
func allocCurves(tb testing.TB) map[string]calc.StrainCurve {
	tb.Helper()
	poly := calc.NewPolynomialStrain([]float64{-2.9554e2, -3.9811e-1, 9.2683e-3, -2.0261e-5, 1.7127e-8}, 1e-5, false,
		units.Temperature(293), units.Temperature(23), units.Temperature(300))
	piece, err := calc.NewPiecewiseStrain([]calc.Segment{
		{From: units.Celsius(20), To: units.Celsius(750), Coef: []float64{-2.416e-4, 1.2e-5, 0.4e-8}},
		{From: units.Celsius(750), To: units.Celsius(860), Coef: []float64{1.1e-2}},
		{From: units.Celsius(860), To: units.Celsius(1200), Coef: []float64{-6.2e-3, 2e-5}},
	}, 1, true, units.Celsius(20))
	if err != nil {
		tb.Fatal(err)
	}
	logPoly := calc.NewLogPolynomialAlpha([]float64{-17.9081289, 67.131914, -118.809316, 109.9845997, -53.8696089, 13.30247491, -1.30843441},
		1e-6, units.Temperature(293), units.Temperature(4), units.Temperature(300))
	table, err := calc.NewMeanTable(units.Celsius(20),
		[]units.Temperature{units.Celsius(100), units.Celsius(200), units.Celsius(300), units.Celsius(400), units.Celsius(500)},
		[]float64{11.1e-6, 12.1e-6, 12.9e-6, 13.5e-6, 13.9e-6})
	if err != nil {
		tb.Fatal(err)
	}
	return map[string]calc.StrainCurve{"polynomial": poly, "piecewise": piece, "log-polynomial": logPoly, "mean-table": table}
}

// curveInterval returns two temperatures inside the curve's range.
func curveInterval(c calc.StrainCurve) (units.Temperature, units.Temperature) {
	lo, hi := c.Range()
	return lo + (hi-lo)/4, lo + 3*(hi-lo)/4
}

// sink keeps results alive so that the compiler cannot drop the calls.
var sink float64

// TestAllocsCalculationCore checks that the calculation core allocates
// nothing per call (issue 7): every request runs these.
func TestAllocsCalculationCore(t *testing.T) {
	dT := units.TemperatureDifference(50)
	cases := map[string]func(){
		"LinearConst":  func() { sink += calc.LinearConst(48, 12e-6, dT).DeltaLengthM },
		"LinearStrain": func() { sink += calc.LinearStrain(48, 6e-4, dT).DeltaLengthM },
		"AreaStrain":   func() { sink += calc.AreaStrain(2.88, 1.2e-3, 1.1e-3).DeltaAreaM2 },
		"CircleArea":   func() { sink += calc.CircleArea(0.08) },
		"SolidVolume":  func() { sink += calc.SolidVolume(2.5, 6e-4).DeltaVolumeM3 },
		"VolumeBeta":   func() { sink += calc.VolumeBeta(2.5, 2.1e-4, dT).DeltaVolumeM3 },
		"VolumeDensity": func() {
			sink += calc.VolumeDensity(2.5, 999.7, 971.8).DeltaVolumeM3
		},
		"InVessel": func() { sink += calc.InVessel(2.5, 8e-4, 2.57).NetOverflowM3 },
		"WaterDensity": func() {
			rho, err := calc.WaterDensity(units.Celsius(80))
			if err != nil {
				t.Fatal(err)
			}
			sink += rho
		},
		// Differential movement, bonded layers, restraint, joints, bridges.
		"DifferentialMovement": func() { sink += calc.DifferentialMovement(6, 1.06e-3, 1.5e-4) },
		"Bilayer": func() {
			b := calc.Bilayer{ThicknessAM: 5e-4, ThicknessBM: 5e-4, ModulusAPa: 170e9, ModulusBPa: 170e9}
			k := b.Curvature(8.5e-4)
			sink += k + b.Stresses(k).AInterface + calc.CantileverTip(k, 0.06) + calc.MidspanRise(k, 0.06)
		},
		"Stoney": func() {
			sink += calc.StoneyStress(0.5, 1e-6, 5e-4, 130e9, 0.28) + calc.StoneyCurvature(1e8, 1e-6, 5e-4, 130e9, 0.28)
		},
		"Restraint": func() {
			r := calc.EffectiveRestraint(5e8, 210e9, 3.6e-3, 6)
			sink += calc.Restraint(4.8e-4, 210e9, r, 6).StressPa + calc.CriticalDeltaT(12e-6, 0.057, 1, 6, r)
		},
		"EulerLoad": func() { sink += calc.EulerLoad(210e9, 1.2e-5, 0.7, 6) + calc.GradientCurvature(12e-6, 20, 5, 0.4) },
		"JointAt": func() {
			j := calc.Joint{LengthM: 60, AlphaLow: 12e-6, AlphaHigh: 12e-6, TMin: units.Celsius(-36), TMax: units.Celsius(59)}
			sink += j.At(units.Celsius(12), 0.05).GapAtTMaxM + j.ForMinGap(units.Celsius(12), 0.02).GapInstallM
		},
		"SealantWidth": func() {
			sink += calc.SealantWidth(4.2e-3, 2.8e-3, calc.Sealant{Extension: 0.25, Compression: 0.25}, 3e-3)
		},
		"EN1991Bridge": func() {
			b, err := calc.EN1991Bridge(units.Celsius(-20), units.Celsius(35), 2, units.Celsius(10), false, false)
			if err != nil {
				t.Fatal(err)
			}
			sink += float64(b.TeMax)
		},
		"WaterDensityOutOfRange": func() {
			if _, err := calc.WaterDensity(units.Celsius(200)); err == nil {
				t.Fatal("WaterDensity(200 degC) err = nil, want ErrOutOfRange")
			}
		},
	}
	for name, c := range allocCurves(t) {
		t1, t2 := curveInterval(c)
		cases["IntervalStrain/"+name] = func() { sink += calc.IntervalStrain(c, t1, t2) }
		cases["InRange/"+name] = func() {
			if !calc.InRange(c, t1) {
				t.Fatalf("InRange(%v) = false, want true", t1)
			}
		}
	}
	for name, f := range cases {
		t.Run(name, func(t *testing.T) {
			if n := testing.AllocsPerRun(200, f); n != 0 {
				t.Errorf("%s: %v allocations per call, want 0", name, n)
			}
		})
	}
}
