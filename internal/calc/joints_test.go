package calc_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand"
	"testing"

	"github.com/thermalmovement/service/internal/calc"
	"github.com/thermalmovement/service/internal/units"
)

func jointClose(got, want float64) bool {
	return math.Abs(got-want) <= 1e-12*math.Max(1, math.Abs(want))
}

// TestMovementAASHTO checks eq. 3.12.2.3-1 (AASHTO LRFD, from memory, not
// re-read): a 100 ft steel deck, 6.5e-6/degF (6.4.1, from memory), 0 to
// 120 degF moves 6.5e-6 x 1200 in x 120 = 0.936 in.
func TestMovementAASHTO(t *testing.T) {
	alphaPerK := 6.5e-6 * 1.8 // per degF interval = 5/9 K (NIST SP 811)
	dT := units.TemperatureDifference(120 / 1.8)
	got := calc.Movement(100*0.3048, alphaPerK, dT) / 0.0254
	if math.Abs(got-0.936) > 1e-12 {
		t.Errorf("Movement = %v in, want 0.936 in", got)
	}
}

// TestJointSetting checks the split of the movement at the installation
// temperature: closing + opening is the range, gap at t_max = gap - closing,
// gap at t_min = gap + opening (first principles).
func TestJointSetting(t *testing.T) {
	j := calc.Joint{LengthM: 60, AlphaLow: 12e-6, AlphaHigh: 12e-6, TMin: units.Celsius(-25), TMax: units.Celsius(50)}
	s := j.ForMinGap(units.Celsius(15), 0.020)
	want := calc.Setting{ClosingM: 0.0252, OpeningM: 0.0288, OpeningHighM: 0.0288, GapInstallM: 0.0452, GapAtTMaxM: 0.020, GapAtTMinM: 0.074, GapAtTMinHigh: 0.074}
	for _, c := range [][2]float64{{s.ClosingM, want.ClosingM}, {s.OpeningM, want.OpeningM}, {s.GapInstallM, want.GapInstallM}, {s.GapAtTMaxM, want.GapAtTMaxM}, {s.GapAtTMinM, want.GapAtTMinM}} {
		if math.Abs(c[0]-c[1]) > 1e-12 {
			t.Errorf("ForMinGap = %+v, want %+v", s, want)
			break
		}
	}
	if !jointClose(s.ClosingM+s.OpeningM, j.Range()) {
		t.Errorf("closing + opening = %v, want the range %v", s.ClosingM+s.OpeningM, j.Range())
	}
	e := j.EnvelopeForMinGap(0.020)
	if !jointClose(e.GapAtTMaxM, 0.020-0) || !jointClose(e.ClosingM, j.Range()) || !jointClose(e.OpeningM, j.Range()) {
		t.Errorf("EnvelopeForMinGap = %+v, want closing = opening = range %v", e, j.Range())
	}
}

// TestScheduleLinear is the property test: gap_install at the installation
// temperature t, with min_gap fixed, is linear in t with slope -alpha L.
func TestScheduleLinear(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	for i := 0; i < 200; i++ {
		alpha := (1 + 30*rng.Float64()) * 1e-6
		j := calc.Joint{LengthM: 1 + 300*rng.Float64(), AlphaLow: alpha, AlphaHigh: alpha, TMin: units.Celsius(-50 + 40*rng.Float64())}
		j.TMax = j.TMin.Add(units.TemperatureDifference(10 + 90*rng.Float64()))
		ts, err := calc.InstallTemperatures(j.TMin, j.TMax, units.TemperatureDifference(0.3+7*rng.Float64()), 1000)
		if err != nil {
			t.Fatal(err)
		}
		minGap := 0.05 * rng.Float64()
		g0 := j.ForMinGap(ts[0], minGap)
		for _, tt := range ts[1:] {
			g := j.ForMinGap(tt, minGap)
			slope := (g.GapInstallM - g0.GapInstallM) / float64(tt.Sub(ts[0]))
			if math.Abs(slope+alpha*j.LengthM) > 1e-9*alpha*j.LengthM {
				t.Fatalf("slope %v, want %v", slope, -alpha*j.LengthM)
			}
		}
	}
}

// TestSealantWidth: W = max(closing/compression, opening/extension) +
// tolerance from first principles (the sealant's strain is the change of
// width over the width at installation), the ASTM C1472 approach (scope
// read); classes from memory of ASTM C920.
func TestSealantWidth(t *testing.T) {
	for _, c := range []struct {
		name             string
		closing, opening float64
		s                calc.Sealant
		tol, want        float64
	}{
		{"class 25, closing governs", 5.52e-3, 3.68e-3, calc.Sealant{Extension: 0.25, Compression: 0.25}, 3e-3, 25.08e-3},
		{"class 25, opening governs", 2e-3, 4e-3, calc.Sealant{Extension: 0.25, Compression: 0.25}, 0, 16e-3},
		{"class 100/50", 5.52e-3, 3.68e-3, calc.Sealant{Extension: 1, Compression: 0.5}, 3e-3, 14.04e-3},
		{"unknown day: full range both ways", 9.2e-3, 9.2e-3, calc.Sealant{Extension: 0.25, Compression: 0.25}, 3e-3, 39.8e-3},
	} {
		t.Run(c.name, func(t *testing.T) {
			w := calc.SealantWidth(c.closing, c.opening, c.s, c.tol)
			if math.Abs(w-c.want) > 1e-15 {
				t.Errorf("SealantWidth = %v, want %v", w, c.want)
			}
			ext, comp := calc.SealantStrains(c.closing, c.opening, w, c.tol)
			if ext > c.s.Extension*(1+1e-12) || comp > c.s.Compression*(1+1e-12) || (math.Abs(ext-c.s.Extension) > 1e-12 && math.Abs(comp-c.s.Compression) > 1e-12) {
				t.Errorf("strains at the required width = %v, %v; want one at its capability, neither above", ext, comp)
			}
		})
	}
	if e, _ := calc.SealantStrains(1e-3, 1e-3, 3e-3, 3e-3); !math.IsInf(e, 1) {
		t.Errorf("width at the tolerance gives %v, want +Inf", e)
	}
}

func TestInstallTemperatures(t *testing.T) {
	c := units.Celsius
	for _, tc := range []struct {
		from, to, step float64
		n              int
		last           float64
	}{{-25, 50, 5, 16, 50}, {0, 12, 5, 4, 12}, {10, 10, 1, 1, 10}, {-25, 50, 75, 2, 50}} {
		ts, err := calc.InstallTemperatures(c(tc.from), c(tc.to), units.TemperatureDifference(tc.step), 401)
		if err != nil || len(ts) != tc.n || !jointClose(ts[len(ts)-1].Celsius(), tc.last) {
			t.Errorf("InstallTemperatures(%v, %v, %v) = %d rows ending %v (%v), want %d ending %v", tc.from, tc.to, tc.step, len(ts), ts[len(ts)-1].Celsius(), err, tc.n, tc.last)
		}
	}
	if _, err := calc.InstallTemperatures(c(-25), c(50), 0.01, 401); !errors.Is(err, calc.ErrTooManyRows) {
		t.Errorf("7501 rows: error %v, want ErrTooManyRows", err)
	}
	if _, err := calc.InstallTemperatures(c(-25), c(50), 0, 401); err == nil {
		t.Error("step 0 accepted")
	}
	if _, err := calc.InstallTemperatures(c(50), c(-25), 5, 401); err == nil {
		t.Error("from above to accepted")
	}
}

// TestSlabJointSpacing: ACI 302.1R, 24 to 36 times the slab thickness
// ([read, secondary] in verification.md): 150 mm gives 3.6 to 5.4 m.
func TestSlabJointSpacing(t *testing.T) {
	lo, hi := calc.SlabJointSpacing(0.150)
	if !jointClose(lo, 3.6) || !jointClose(hi, 5.4) {
		t.Errorf("SlabJointSpacing(0.150) = %v, %v, want 3.6, 5.4", lo, hi)
	}
}

// Example: a 60 m steel footbridge deck (demo data) set at 15 degC so that
// 20 mm is left at 50 degC.
func ExampleJoint_ForMinGap() {
	j := calc.Joint{LengthM: 60, AlphaLow: 12e-6, AlphaHigh: 12e-6, TMin: units.Celsius(-25), TMax: units.Celsius(50)}
	s := j.ForMinGap(units.Celsius(15), 0.020)
	fmt.Printf("set %.1f mm; %.1f mm at t_max, %.1f mm at t_min\n", s.GapInstallM*1000, s.GapAtTMaxM*1000, s.GapAtTMinM*1000)
	// Output: set 45.2 mm; 20.0 mm at t_max, 74.0 mm at t_min
}

// Example: a facade panel joint (demo data) with a class 25 sealant.
func ExampleSealantWidth() {
	w := calc.SealantWidth(5.52e-3, 3.68e-3, calc.Sealant{Extension: 0.25, Compression: 0.25}, 3e-3)
	fmt.Printf("%.2f mm\n", w*1000)
	// Output: 25.08 mm
}
