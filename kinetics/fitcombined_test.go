package kinetics

import (
	"math"
	"testing"
)

// Coverage alone identifies En+2Eg and ln(I·G²·κ at T_ref) (see
// fitCoord). Runs drawn from fitTruth (DefaultParams) with seeded noise
// σ = 0.1 on cloglog θ, coverage only: both combinations must lie within
// 3 SE of the truth (3 SE: a 99.7 % band for a normal estimate, common
// practice) at 50, 500 and 5,000 runs, the separate En, I0, Eg, G0 must
// be marked not identifiable with no standard error, and the same runs
// with nuclei density added must report them again.
func TestFitCoverageOnlyRecovery(t *testing.T) {
	for _, c := range []struct {
		name string
		n    int
		seed uint64
	}{
		{"50 runs", 50, 11},
		{"500 runs", 500, 12},
		{"5000 runs", 5000, 13},
	} {
		t.Run(c.name, func(t *testing.T) {
			runs := synthRuns(c.n, c.seed, fitTruth)
			obs := observations(t, runs, fitStart())
			res, err := Fit(obs, fitStart(), FitSettings{Coverage: true})
			if err != nil {
				t.Fatal(err)
			}
			u := 1 / (BoltzmannEV * res.ReferenceTemperature)
			tr := fitTruth
			want := map[string]float64{
				"En+2Eg":          tr.En + 2*tr.Eg,
				"I·G²·κ at T_ref": math.Log(tr.I0) - tr.En*u + 2*(math.Log(tr.G0)-tr.Eg*u) + math.Log(tr.Kappa()),
			}
			if len(res.Combined) != 2 {
				t.Fatalf("got combined %+v, want En+2Eg and I·G²·κ at T_ref", res.Combined)
			}
			for _, e := range res.Combined {
				w, ok := want[e.Name]
				if !ok {
					t.Fatalf("unexpected combination %q", e.Name)
				}
				got, se := e.Value, e.SE
				if !math.IsNaN(e.LogValue) {
					got, se = e.LogValue, e.LogSE
				}
				t.Logf("%s: got %.5g ± %.3g, truth %.5g (T_ref %.2f K)", e.Name, got, se, w, res.ReferenceTemperature)
				if !(se > 0) || !(math.Abs(got-w) <= 3*se) {
					t.Errorf("%s: got %.5g ± %.3g, truth %.5g (%.1f SE off), want within 3 SE", e.Name, got, se, w, math.Abs(got-w)/se)
				}
			}
			for _, e := range res.Estimates {
				separate := e.Short == "En" || e.Short == "I0" || e.Short == "Eg" || e.Short == "G0"
				if separate && (e.Identifiable || !math.IsNaN(e.SE)) {
					t.Errorf("%s: identifiable %v, SE %g; want not identifiable, SE NaN", e.Short, e.Identifiable, e.SE)
				}
				if !separate && !e.Identifiable {
					t.Errorf("%s: got not identifiable, want identifiable (the pressure orders are)", e.Short)
				}
			}
			if !res.Params.CoverageOnly {
				t.Errorf("params: got CoverageOnly false, want true")
			}
		})
	}
	runs := synthRuns(50, 11, fitTruth)
	res, err := Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Combined) != 0 || res.Params.CoverageOnly {
		t.Errorf("with density: got combined %+v, coverage only %v; want the separate parameters", res.Combined, res.Params.CoverageOnly)
	}
	for _, e := range res.Estimates {
		if !e.Identifiable || !(e.SE > 0) {
			t.Errorf("with density: %s identifiable %v SE %g, want identifiable with a standard error", e.Short, e.Identifiable, e.SE)
		}
	}
}

// Data drawn with a methane order of 4.8, past the default bound 4
// (DefaultBounds), must stop at 4 and say so; a bound given by the
// caller (En within −3 … −2, truth −1.5) likewise stops at −2.
func TestFitStopsAtBound(t *testing.T) {
	t.Parallel()
	truth := fitTruth
	truth.A = 4.8
	for _, c := range []struct {
		name   string
		bounds map[string][2]float64
		key    string
		want   float64
	}{
		{"default bound on a", nil, "methane_order", 4},
		{"given bound on En", map[string][2]float64{"nucleation_energy": {-3, -2}}, "nucleation_energy", -2},
	} {
		t.Run(c.name, func(t *testing.T) {
			tr := fitTruth
			if c.bounds == nil {
				tr = truth
			}
			runs := synthRuns(60, 21, tr)
			res, err := Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{Bounds: c.bounds})
			if err != nil {
				t.Fatal(err)
			}
			e := estimate(res, c.key)
			if !e.AtBound || math.Abs(e.Value-c.want) > 1e-9 {
				t.Errorf("%s: got %g at bound %v, want %g at its bound", c.key, e.Value, e.AtBound, c.want)
			}
			if !hasWarning(res, c.key+" ended on its bound") {
				t.Errorf("warnings %q, want one saying %s ended on its bound", res.Warnings, c.key)
			}
		})
	}
}

// A coverage-only fit of 5,000 runs: the 5,000-run case of the recovery
// test. Target under 1 s on 2 cores.
func BenchmarkFitCoverageOnly5000(b *testing.B) {
	obs := observations(b, synthRuns(5000, 13, fitTruth), fitStart())
	for b.Loop() {
		if _, err := Fit(obs, fitStart(), FitSettings{Coverage: true}); err != nil {
			b.Fatal(err)
		}
	}
}

func TestParseBound(t *testing.T) {
	for _, c := range []struct {
		in, key string
		lo, hi  float64
		bad     bool
	}{
		{in: "En=-3:6", key: "nucleation_energy", lo: -3, hi: 6},
		{in: "methane_order=0:5", key: "methane_order", lo: 0, hi: 5},
		{in: "G0=1e5:1e15", key: "growth_prefactor", lo: 1e5, hi: 1e15},
		{in: "En=6:-3", bad: true},
		{in: "En=-3", bad: true},
		{in: "Q=0:1", bad: true},
		{in: "I0=0:1", bad: true},
	} {
		t.Run(c.in, func(t *testing.T) {
			key, b, err := ParseBound(c.in)
			if c.bad {
				if err == nil {
					t.Fatalf("got %s %v, want an error", key, b)
				}
				return
			}
			if err != nil || key != c.key || b != [2]float64{c.lo, c.hi} {
				t.Errorf("got %s %v %v, want %s [%g %g]", key, b, err, c.key, c.lo, c.hi)
			}
		})
	}
}
