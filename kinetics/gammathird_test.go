package kinetics

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

// TestGammaIncThird checks P(1/3, x) against scipy.special.gammainc(1/3, x)
// (Debian python3-scipy 1.10.1, made with
// testdata/scipyfit/gammainc_third.py; printed with repr, so every digit is
// scipy's), relative 4e-15. The points straddle the switch from the
// series to the continued fraction at x = 4/3 and reach past the coverage
// clip (−ln 0.001 = 6.9) to where P rounds to 1.
func TestGammaIncThird(t *testing.T) {
	for _, c := range []struct {
		name string
		x, p float64
	}{
		{"tiny", 1e-300, 1.1198465217222083e-100},
		{"1e-12", 1e-12, 0.0001119846521721906},
		{"1e-6", 1e-06, 0.011198462417606362},
		{"1e-3", 0.001, 0.11195666400621326},
		{"0.1", 0.1, 0.5071548203210647},
		{"0.5", 0.5, 0.7919045865417255},
		{"1", 1.0, 0.9042885885708817},
		{"just below 4/3", 1.3333333323333332, 0.9397354109352858},
		{"4/3", 1.3333333333333333, 0.9397354110165101},
		{"just above 4/3", 1.3333333343333333, 0.9397354110977338},
		{"2", 2.0, 0.9745658910950368},
		{"3.5", 3.5, 0.9957740548912151},
		{"coverage clip", 6.907755278982137, 0.9999052432651345},
		{"10", 10.0, 0.999996559781517},
		{"30", 30.0, 0.9999999999999964},
		{"just below the cut to 1", 36.9, 1.0},
		{"the cut to 1", 37.0, 1.0},
		{"100", 100.0, 1.0},
		{"1e4", 1e4, 1.0},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := gammaIncThird(c.x)
			if rel := math.Abs(got-c.p) / c.p; rel > 4e-15 {
				t.Errorf("P(1/3, %g): got %.17g, want %.17g (relative %.1e, tolerance 4e-15)", c.x, got, c.p, rel)
			}
		})
	}
	for _, c := range []struct {
		name string
		x    float64
		want float64
	}{
		{"zero", 0, 0},
		{"infinity", math.Inf(1), 1},
	} {
		if got := gammaIncThird(c.x); got != c.want {
			t.Errorf("%s: got P(1/3, %g) = %g, want %g", c.name, c.x, got, c.want)
		}
	}
	for _, x := range []float64{math.NaN(), -1} {
		if got := gammaIncThird(x); !math.IsNaN(got) {
			t.Errorf("P(1/3, %g): got %g, want NaN", x, got)
		}
	}
}

// BenchmarkGammaIncThird is P(1/3, x) over the range a fit sees, by
// gammaIncThird and by gonum's mathext.GammaIncReg it replaces.
func BenchmarkGammaIncThird(b *testing.B) {
	for _, c := range []struct {
		name string
		p    func(x float64) float64
	}{
		{"own", gammaIncThird},
		{"gonum", func(x float64) float64 { return mathext.GammaIncReg(1.0/3, x) }},
	} {
		b.Run(c.name, func(b *testing.B) {
			s := 0.0
			for b.Loop() {
				for x := 1e-4; x < 20; x *= 1.5 {
					s += c.p(x)
				}
			}
			if !(s > 0) {
				b.Fatal(s)
			}
		})
	}
}
