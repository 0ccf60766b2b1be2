package kinetics

import (
	"math"
	"slices"
	"sort"
	"testing"
)

// exactRuns are n synthetic runs (synthRuns' conditions) whose measured
// values are fitTruth's predictions by PredictProfile's quadrature,
// without noise.
func exactRuns(t *testing.T, n int, seed uint64) []synthRun {
	t.Helper()
	runs := synthRuns(n, seed, fitTruth)
	for i, r := range runs {
		res, err := PredictProfile(r.profile(), fitTruth, Options{})
		if err != nil {
			t.Fatal(err)
		}
		runs[i].Coverage, runs[i].Density = res.Coverage, res.NucleiDensity
	}
	return runs
}

// startFitter is a fitter set up as Fit sets it up before minimising,
// with unit scales.
func startFitter(t *testing.T, obs []Observation, s FitSettings) *fitter {
	t.Helper()
	f, err := newFitter(fitStart(), s)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.addRows(obs); err != nil {
		t.Fatal(err)
	}
	if err := f.identifiable(); err != nil {
		t.Fatal(err)
	}
	f.sc, f.sd = 1, 1
	return f
}

// On runs without noise, predicted by PredictProfile's Gauss–Legendre
// quadrature from fitTruth (DefaultParams), the linear start must land on
// the truth in every coordinate: the coverage rows are exact and the
// density rows exact once X is the measured one. Tolerance 1e-6 absolute
// (the quadrature agrees with the closed form to about 1e-10 relative,
// amplified by the conditioning of the system).
func TestLinearStartExact(t *testing.T) {
	for _, c := range []struct {
		name string
		s    FitSettings
	}{
		{"both metrics", FitSettings{}},
		{"coverage only", FitSettings{Coverage: true}},
		{"Eg fixed", FitSettings{Fixed: map[string]float64{"Eg": fitTruth.Eg}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			f := startFitter(t, observations(t, exactRuns(t, 40, 3), fitStart()), c.s)
			x, ok := f.linearStart()
			if !ok {
				t.Fatal("linear start not available, want it for closed-form runs")
			}
			truth := vecOf(fitTruth)
			for j, co := range f.coords {
				want := co.w.dot(truth) + co.c
				if math.Abs(x[j]-want) > 1e-6 {
					t.Errorf("%s: got %.10g, want %.10g (truth)", co.Name, x[j], want)
				}
			}
		})
	}
}

// Where the runs cannot give a linear start the fitter keeps the given
// one: a density-only fit (no measured X for the incomplete-gamma term),
// ramps (no closed form), and too few usable runs (coverage clipped).
func TestLinearStartUnavailable(t *testing.T) {
	ramp, _ := rampProfile()
	rampObs := make([]Observation, 12)
	for i := range rampObs {
		p := ramp
		p.Segments = slices.Clone(ramp.Segments)
		for k := range p.Segments {
			p.Segments[k].T0 += float64(10 * i)
			p.Segments[k].T1 += float64(10 * i)
		}
		rampObs[i] = Observation{Label: "ramp", Prepared: mustPrepare(t, p), Coverage: 0.5, NucleiDensity: 1e12}
	}
	clipped := observations(t, exactRuns(t, 12, 5), fitStart())
	for i := range clipped[2:] {
		clipped[2+i].Coverage = 1
	}
	for _, c := range []struct {
		name string
		obs  []Observation
		s    FitSettings
	}{
		{"density only", observations(t, exactRuns(t, 20, 3), fitStart()), FitSettings{Density: true}},
		{"ramps", rampObs, FitSettings{}},
		{"coverage clipped", clipped, FitSettings{Coverage: true}},
	} {
		t.Run(c.name, func(t *testing.T) {
			f := startFitter(t, c.obs, c.s)
			if x, ok := f.linearStart(); ok {
				t.Errorf("got a linear start %v, want none", x)
			}
			if got := f.startPoint(); !slices.Equal(got, f.x0) {
				t.Errorf("start point %v, want the given start %v", got, f.x0)
			}
		})
	}
}

// selectMedian must give the median a full sort gives (the mean of the
// two middle values for an even count), on hand-checked cases and on
// random draws checked against sort.Float64s.
func TestSelectMedian(t *testing.T) {
	for _, c := range []struct {
		name string
		xs   []float64
		want float64
	}{
		{"one", []float64{3}, 3},
		{"two", []float64{4, 1}, 2.5},
		{"odd", []float64{5, 1, 4, 2, 3}, 3},
		{"even", []float64{6, 1, 5, 2, 4, 3}, 3.5},
		{"ties", []float64{2, 2, 1, 2, 3, 2}, 2},
		{"sorted", []float64{1, 2, 3, 4, 5, 6, 7}, 4},
		{"reversed", []float64{8, 7, 6, 5, 4, 3, 2, 1}, 4.5},
	} {
		t.Run(c.name, func(t *testing.T) {
			if got := selectMedian(slices.Clone(c.xs)); got != c.want {
				t.Errorf("got %g, want %g", got, c.want)
			}
		})
	}
	runs := synthRuns(1001, 9, fitTruth)
	for _, n := range []int{1000, 1001} {
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = math.Round(runs[i].T) // with ties
		}
		s := slices.Clone(xs)
		sort.Float64s(s)
		want := s[n/2]
		if n%2 == 0 {
			want = (s[n/2-1] + s[n/2]) / 2
		}
		if got := selectMedian(xs); got != want {
			t.Errorf("n=%d: got %g, want %g (full sort)", n, got, want)
		}
	}
}
