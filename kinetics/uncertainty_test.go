package kinetics

import (
	"errors"
	"math"
	"testing"
)

// Type-7 sample quantiles of 1..10 (Hyndman & Fan 1996, definition 7:
// h = (n−1)q, linear between order statistics; the default of R's
// quantile(), values worked by hand from the definition).
func TestQuantile(t *testing.T) {
	xs := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	for _, c := range []struct{ q, want float64 }{{0, 1}, {0.05, 1.45}, {0.5, 5.5}, {0.9, 9.1}, {0.95, 9.55}, {1, 10}} {
		if got := Quantile(xs, c.q); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("q=%g: got %g, want %g", c.q, got, c.want)
		}
	}
}

// The draws of SampleParams have the file's covariance: 20,000 draws, the
// sample covariance in fit coordinates within 5 % of each variance and
// 0.03 of each correlation (sampling error about 1 % and 0.007).
func TestSampleParamsCovariance(t *testing.T) {
	res, err := Fit(observations(t, synthRuns(30, 7, fitTruth), fitStart()), fitStart(), FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	p := res.Params
	idx, S, err := p.logCovariance()
	if err != nil {
		t.Fatal(err)
	}
	for i, k := range idx {
		e := estimate(res, FitParameters[k].Key)
		se := e.SE
		if e.Log {
			se = e.LogSE
		}
		if relErr(math.Sqrt(S.At(i, i)), se) > 1e-9 {
			t.Errorf("%s: file covariance gives SE %.6g, fit %.6g", e.Short, math.Sqrt(S.At(i, i)), se)
		}
	}
	draws, err := SampleParams(p, 20000, 3)
	if err != nil {
		t.Fatal(err)
	}
	d := len(idx)
	mean := make([]float64, d)
	vs := make([]fitVec, len(draws))
	for k, q := range draws {
		vs[k] = vecOf(q)
		for i, j := range idx {
			mean[i] += vs[k][j] / float64(len(draws))
		}
	}
	for a := range d {
		for b := range d {
			c := 0.0
			for k := range vs {
				c += (vs[k][idx[a]] - mean[a]) * (vs[k][idx[b]] - mean[b])
			}
			c /= float64(len(vs) - 1)
			if a == b {
				if relErr(c, S.At(a, a)) > 0.05 {
					t.Errorf("variance %s: got %.4g, want %.4g", FitParameters[idx[a]].Short, c, S.At(a, a))
				}
			} else {
				got := c / math.Sqrt(S.At(a, a)*S.At(b, b))
				want := S.At(a, b) / math.Sqrt(S.At(a, a)*S.At(b, b))
				if math.Abs(got-want) > 0.03 {
					t.Errorf("correlation %s,%s: got %.4f, want %.4f", FitParameters[idx[a]].Short, FitParameters[idx[b]].Short, got, want)
				}
			}
		}
	}
	if _, err := SampleParams(DefaultParams(), 10, 1); !errors.Is(err, ErrNoCovariance) {
		t.Errorf("no covariance: got %v, want ErrNoCovariance", err)
	}
}

// Frequentist coverage of the 90 % interval: over 100 synthetic data sets
// (seeds 1..100, 30 runs each, σ = 0.1) fitted back, the interval for the
// coverage at a held-out condition (1010 °C, 22 Pa CH4, 45 Pa H2, a time
// giving true θ ≈ 0.6) must contain the true value in 80–97 % of the sets
// (the bounds; binomial sampling error at 90 % is 3 %).
func TestIntervalCoverage(t *testing.T) {
	t.Parallel()
	const T, pC, pH = 1283.15, 22.0, 45.0
	I, G, _ := fitTruth.rates(T, pC, pH)
	tHeld := math.Cbrt(3 * -math.Log(0.4) / (fitTruth.Kappa() * I * G * G))
	held := isothermal(T, pC, pH, tHeld)
	truth, err := PredictProfile(held, fitTruth, Options{})
	if err != nil {
		t.Fatal(err)
	}
	sets := 100
	if testing.Short() {
		sets = 40
	}
	hits := 0
	for seed := 1; seed <= sets; seed++ {
		res, err := Fit(observations(t, synthRuns(30, uint64(1000+seed), fitTruth), fitStart()), fitStart(), FitSettings{})
		if err != nil {
			t.Fatal(err)
		}
		u, err := PredictInterval(held, res.Params, Options{}, IntervalSettings{Samples: 300})
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		if u.Coverage.Lo <= truth.Coverage && truth.Coverage <= u.Coverage.Hi {
			hits++
		}
	}
	share := float64(hits) / float64(sets)
	if share < 0.80 || share > 0.97 {
		t.Errorf("90 %% interval covered the truth in %d of %d sets (%.0f %%), want 80–97 %%", hits, sets, 100*share)
	}
	t.Logf("90 %% interval covered the truth in %d of %d sets", hits, sets)
}

// An interval is ordered around the best estimate and repeats with its
// seed.
func TestPredictIntervalRepeatable(t *testing.T) {
	res, err := Fit(observations(t, synthRuns(30, 7, fitTruth), fitStart()), fitStart(), FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	prof := isothermal(1273.15, 20, 40, 200)
	a, err := PredictInterval(prof, res.Params, Options{}, IntervalSettings{})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := PredictInterval(prof, res.Params, Options{}, IntervalSettings{})
	if a != b {
		t.Errorf("same seed, different intervals: %+v vs %+v", a, b)
	}
	best, _ := PredictProfile(prof, res.Params, Options{})
	for _, c := range []struct {
		name string
		iv   Interval
		v    float64
	}{{"coverage", a.Coverage, best.Coverage}, {"nuclei density", a.NucleiDensity, best.NucleiDensity}, {"domain size", a.DomainSize, best.DomainSize}} {
		if !(c.iv.Lo < c.v && c.v < c.iv.Hi) {
			t.Errorf("%s: best estimate %g outside its interval [%g, %g]", c.name, c.v, c.iv.Lo, c.iv.Hi)
		}
	}
}
