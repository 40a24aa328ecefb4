package calc_test

import (
	"testing"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

// Benchmarks of every calculation in package calc, with allocations
// reported (issue 7). The inputs are the demo scenarios of the service: a
// 48 m footbridge girder, a 2.88 m2 facade panel, a 2.5 m3 heat-exchanger
// shell.

func BenchmarkLinearConst(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.LinearConst(48, 12e-6, 50).DeltaLengthM
	}
}

func BenchmarkLinearStrain(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.LinearStrain(48, 6e-4, 50).DeltaLengthM
	}
}

func BenchmarkAreaStrain(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.AreaStrain(2.88, 1.2e-3, 1.1e-3).DeltaAreaM2
	}
}

func BenchmarkCircleArea(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.CircleArea(0.08)
	}
}

func BenchmarkSolidVolume(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.SolidVolume(2.5, 6e-4).DeltaVolumeM3
	}
}

func BenchmarkVolumeBeta(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.VolumeBeta(2.5, 2.1e-4, 70).DeltaVolumeM3
	}
}

func BenchmarkVolumeDensity(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.VolumeDensity(2.5, 999.7, 971.8).DeltaVolumeM3
	}
}

func BenchmarkInVessel(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		sink += calc.InVessel(2.5, 8e-4, 2.57).NetOverflowM3
	}
}

func BenchmarkWaterDensity(b *testing.B) {
	b.ReportAllocs()
	t := units.Celsius(80)
	for b.Loop() {
		rho, err := calc.WaterDensity(t)
		if err != nil {
			b.Fatal(err)
		}
		sink += rho
	}
}

func BenchmarkIntervalStrain(b *testing.B) {
	for name, c := range allocCurves(b) {
		t1, t2 := curveInterval(c)
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				sink += calc.IntervalStrain(c, t1, t2)
			}
		})
	}
}

// BenchmarkNewLogPolynomialAlpha measures the one-off tabulation done
// when the catalogue loads (not per request).
func BenchmarkNewLogPolynomialAlpha(b *testing.B) {
	b.ReportAllocs()
	coef := []float64{-17.9081289, 67.131914, -118.809316, 109.9845997, -53.8696089, 13.30247491, -1.30843441}
	for b.Loop() {
		_ = calc.NewLogPolynomialAlpha(coef, 1e-6, 293, 4, 300)
	}
}
