package kinetics

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

// designVary are the ranges of the simulation and the benchmark: inside
// the template furnace's limits (CH4 line: 50 sccm of N2, 90 % share).
var designVary = []string{"temperature=950C:1060C", "CH4=2sccm:30sccm", "duration=1min:60min"}

// designTruth is the simulation's true model: the illustrative parameters,
// with the H2 order held (H2 is not varied, so no design can estimate it).
var designFixed = map[string]float64{"hydrogen_order": DefaultParams().B}

// simulated measures a run of the truth with noise σ on cloglog θ and on
// ln N (σ = 0.2, a model choice near the spread of micrograph counts).
func simulated(pr *Prepared, truth Params, rnd *rand.Rand, density bool) Observation {
	const sigma = 0.2
	theta, N := pr.Evaluate(truth)
	c := math.Log(-math.Log1p(-math.Min(math.Max(theta, 1e-12), 1-1e-12))) + sigma*rnd.NormFloat64()
	o := Observation{Label: "sim", Prepared: pr, Coverage: -math.Expm1(-math.Exp(c)), NucleiDensity: math.NaN()}
	if density {
		o.NucleiDensity = N * math.Exp(sigma*rnd.NormFloat64())
	}
	return o
}

// simSearcher is the design's searcher over designVary.
func simSearcher(t testing.TB, plan *recipe.Plan, truth Params, rnd *rand.Rand) (*searcher, DesignSpec) {
	t.Helper()
	spec, err := DesignSpec{Runs: 1, Vary: designVary, Params: truth, Rand: rnd}.withDefaults()
	if err != nil {
		t.Fatal(err)
	}
	s, err := newDesignSearcher(plan, spec)
	if err != nil {
		t.Fatal(err)
	}
	return s, spec
}

// randomRuns draws n feasible settings uniformly inside the ranges (the
// design's own candidate sampler) and measures them.
func randomRuns(t testing.TB, plan *recipe.Plan, n int, truth Params, rnd *rand.Rand, density bool) []Observation {
	t.Helper()
	s, spec := simSearcher(t, plan, truth, rnd)
	spec.Candidates = n
	pool, err := s.pool(spec)
	if err != nil {
		t.Fatal(err)
	}
	var out []Observation
	for _, p := range pool {
		out = append(out, simulated(p.pr, truth, rnd, density))
	}
	return out
}

// designed measures the runs Design proposes from the fit res.
func designed(t testing.TB, plan *recipe.Plan, obs []Observation, res *FitResult, truth Params, rnd *rand.Rand, density bool) []Observation {
	t.Helper()
	sc, sd := DesignScales(res)
	d, err := Design(plan, DesignSpec{Runs: 4, Vary: designVary, Density: density, Params: res.Params, Existing: obs, Fixed: designFixed,
		CoverageScale: sc, DensityScale: sd, Rand: rnd})
	if err != nil {
		t.Fatal(err)
	}
	var out []Observation
	for _, r := range d.Runs {
		for _, fd := range recipe.Check(recipe.Derive(r.Recipe, plan.Furnace)) {
			if fd.Severity == recipe.Error {
				t.Fatalf("designed run fails check: %s: %s", fd.Rule, fd.Message)
			}
		}
		pr, err := Prepare(NewProfile(recipe.Derive(r.Recipe, plan.Furnace)), truth, Options{})
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, simulated(pr, truth, rnd, density))
	}
	return out
}

// oneFactorRuns is round r of a one-factor-at-a-time plan: the recipe's
// own grow-step settings (clamped into the ranges) with one factor — the
// axes, then the grow time, in turn — moved to 4 levels evenly spread
// over its range (on the sampler's scale: log for flows and time), the
// others held; each setting is measured.
func oneFactorRuns(t testing.TB, plan *recipe.Plan, r int, truth Params, rnd *rand.Rand, density bool) []Observation {
	t.Helper()
	s, _ := simSearcher(t, plan, truth, rnd)
	st := plan.Recipe.Steps[s.grow]
	centre := make([]float64, len(s.axes))
	for i, a := range s.axes {
		v := st.Flows.Of(a.name)
		switch a.name {
		case ParamTemperature:
			v = st.Temperature.SI
		case ParamPressure:
			v = st.Pressure.Setpoint.SI
		}
		centre[i] = math.Min(math.Max(v, a.lo), a.hi)
	}
	t0 := math.Min(math.Max(s.fixedTime, s.tlo), s.thi)
	factor := r % (len(s.axes) + 1)
	var out []Observation
	for k := range 4 {
		f := float64(k) / 3
		x, dur := slices.Clone(centre), t0
		if factor < len(s.axes) {
			a := s.axes[factor]
			lo, hi := s.coord(a, a.lo), s.coord(a, a.hi)
			x[factor] = s.value(a, lo+f*(hi-lo))
		} else {
			dur = math.Min(roundTime(s.tlo*math.Pow(s.thi/s.tlo, f)), s.thi)
		}
		p, ok := s.feasible(s.quantise(x), dur)
		if !ok {
			t.Fatalf("one-factor run %d of round %d (x %v, %g s) fails check", k, r, x, dur)
		}
		out = append(out, simulated(p.pr, truth, rnd, density))
	}
	return out
}

// The arms of the simulation.
const (
	armDesign = iota
	armRandom
	armOneFactor
)

var armNames = []string{"design", "random", "one factor"}

// finalSE runs one arm of the simulation: 6 random starting runs, then 4
// rounds of 4 runs (designed, random or one factor at a time), re-fitted after each round. It
// returns the final estimate and SE of the quantity watched: Eg with
// density, En+2Eg (a combination) with coverage only.
func finalSE(t testing.TB, plan *recipe.Plan, seed uint64, arm int, density bool) (est, se float64) {
	truth := DefaultParams()
	rnd := rand.New(rand.NewPCG(seed, 20))
	obs := randomRuns(t, plan, 6, truth, rnd, density)
	var res *FitResult
	fit := func() {
		var err error
		res, err = Fit(obs, truth, FitSettings{Coverage: true, Density: density, Fixed: designFixed})
		if err != nil {
			t.Fatal(err)
		}
	}
	fit()
	for r := range 4 {
		switch arm {
		case armDesign:
			obs = append(obs, designed(t, plan, obs, res, truth, rnd, density)...)
		case armRandom:
			obs = append(obs, randomRuns(t, plan, 4, truth, rnd, density)...)
		default:
			obs = append(obs, oneFactorRuns(t, plan, r, truth, rnd, density)...)
		}
		fit()
	}
	if !density {
		for _, c := range res.Combined {
			if c.Name == "En+2Eg" {
				return c.Value, c.SE
			}
		}
		t.Fatalf("seed %d: no En+2Eg combination in %+v", seed, res.Combined)
	}
	for _, e := range res.Estimates {
		if e.Short == "Eg" {
			return e.Value, e.SE
		}
	}
	t.Fatal("no Eg estimate")
	return 0, 0
}

func median(xs []float64) float64 {
	s := slices.Clone(xs)
	for i := range s {
		if math.IsNaN(s[i]) {
			s[i] = math.Inf(1) // not identified counts as worst
		}
	}
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// TestDesignSimulation is the simulation of issue 20 on 20 seeds: the
// median final standard error of Eg (with nuclei density) and of En+2Eg
// (coverage only) must be lower with designed runs than with random ones
// and than with a one-factor-at-a-time plan inside the same ranges, by
// the least fall each case states, and every designed arm's estimate
// within 3 SE of the truth (the other arms' misses are logged: with runs
// that saturate, their fits are the comparison, not the product under
// test; the truth is the simulation's own; 3 SE is the usual check,
// failing by chance with probability 0.3 % per estimate for a normal
// error). The table of medians is in the log (go test -v). The two cases
// and the seeds run in parallel on one template plan, which Design only
// reads; the medians are taken when every seed is done.
func TestDesignSimulation(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	truth := DefaultParams()
	const seeds = 20
	for _, c := range []struct {
		name    string
		density bool
		want    float64    // true value of the quantity watched, eV
		gain    [3]float64 // least fall of the median SE below each arm, asserted
	}{
		// Measured (20 seeds, 600 candidates): with density 35 % below
		// random and 35 % below one factor; coverage only 34 % and 50 %.
		{"Eg with density", true, truth.Eg, [3]float64{0, 0.30, 0.30}},
		{"En+2Eg coverage only", false, truth.En + 2*truth.Eg, [3]float64{0, 0.30, 0.30}},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			var est, se [3][seeds]float64
			t.Run("seeds", func(t *testing.T) {
				for seed := range seeds {
					t.Run(fmt.Sprint("seed ", seed+1), func(t *testing.T) {
						t.Parallel()
						for arm := range se {
							est[arm][seed], se[arm][seed] = finalSE(t, plan, uint64(seed)+1, arm, c.density)
						}
					})
				}
			})
			if t.Failed() {
				return
			}
			var missed [3]int // estimates beyond 3 SE
			for arm := range se {
				for seed := range seeds {
					if off := math.Abs(est[arm][seed]-c.want) / se[arm][seed]; !(off <= 3) {
						missed[arm]++
						if arm == armDesign {
							t.Errorf("seed %d designed: estimate %.4g eV is %.2g SE from the truth %.4g eV, want within 3 SE", seed+1, est[arm][seed], off, c.want)
						}
					}
				}
			}
			md := median(se[armDesign][:])
			t.Logf("%s, median final SE over %d seeds:", c.name, seeds)
			t.Logf("  %-10s %.4g eV; estimates beyond 3 SE: %d of %d", armNames[armDesign], md, missed[armDesign], seeds)
			for arm := armRandom; arm < len(se); arm++ {
				m := median(se[arm][:])
				t.Logf("  %-10s %.4g eV (design %.0f %% lower); estimates beyond 3 SE: %d of %d", armNames[arm], m, 100*(1-md/m), missed[arm], seeds)
				if !(md <= (1-c.gain[arm])*m) {
					t.Errorf("median final SE: designed %.4g eV, %s %.4g eV; want designed at least %.0f %% lower", md, armNames[arm], m, 100*c.gain[arm])
				}
			}
		})
	}
}

// TestDesignErrors checks the refusals: the run count, an empty range, a
// range outside the furnace's limits and the criterion's mistakes.
func TestDesignErrors(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	size, err := ParseTarget("domain_size>=40um")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		runs      int
		vary      []string
		criterion string
		targets   []Target
		want      string
	}{
		{"no runs", 0, nil, "", nil, "0 runs asked for, want 1 to 50"},
		{"too many runs", 51, nil, "", nil, "51 runs asked for, want 1 to 50"},
		{"empty range", 4, []string{"temperature=1000C:1000C"}, "", nil, "from must be below to"},
		{"above the ceiling", 4, []string{"temperature=950C:1100C"}, "", nil, "beyond the"},
		{"flow above the line", 4, []string{"CH4=1sccm:60sccm"}, "", nil, "beyond the"},
		{"target criterion without a target", 4, nil, DesignTarget, nil, "the target criterion needs a target"},
		{"domain size watched", 4, nil, DesignTarget, []Target{size}, "not domain_size"},
		{"unknown criterion", 4, nil, "a", nil, `criterion "a": want d or target`},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Design(plan, DesignSpec{Runs: c.runs, Vary: c.vary, Criterion: c.criterion, Targets: c.targets, Params: DefaultParams(), Rand: rand.New(rand.NewPCG(1, 2))})
			var ie *InputError
			if !errors.As(err, &ie) || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("got %v, want an InputError containing %q", err, c.want)
			}
			if c.runs != 4 && (ie.Reason != ReasonRunCount || ie.Hint() == "") {
				t.Errorf("got reason %q hint %q, want %q with a hint", ie.Reason, ie.Hint(), ReasonRunCount)
			}
		})
	}
}

// TestDesignDeterministic: the same seed gives the same design, every
// proposed recipe passes check, and the K runs shrink every expected SE.
func TestDesignDeterministic(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	run := func() *DesignResult {
		d, err := Design(plan, DesignSpec{Runs: 4, Vary: designVary, Density: true, Params: DefaultParams(), Fixed: designFixed,
			Candidates: 80, Restarts: 3, Rand: rand.New(rand.NewPCG(7, 7))})
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	a, b := run(), run()
	for i := range a.Runs {
		if !sameCandidate(a.Runs[i].Candidate, b.Runs[i].Candidate) {
			t.Errorf("run %d: got %+v then %+v, want the same", i, a.Runs[i].Candidate, b.Runs[i].Candidate)
		}
		for _, fd := range recipe.Check(recipe.Derive(a.Runs[i].Recipe, plan.Furnace)) {
			if fd.Severity == recipe.Error {
				t.Errorf("run %d fails check: %s", i, fd.Message)
			}
		}
	}
	for j, name := range a.Names {
		if !math.IsNaN(a.SENow[j]) {
			t.Errorf("%s: got SE now %g with no existing run, want NaN (not identified)", name, a.SENow[j])
		}
		if !(a.SEAfter[j] > 0) {
			t.Errorf("%s: got SE after %g, want a positive number", name, a.SEAfter[j])
		}
	}
}

// BenchmarkDesign500 designs 4 runs from a log of 500 runs.
func BenchmarkDesign500(b *testing.B) {
	plan := loadTemplate(b, "lowpressure")
	truth := DefaultParams()
	obs := randomRuns(b, plan, 500, truth, rand.New(rand.NewPCG(3, 3)), true)
	b.ResetTimer()
	for range b.N {
		if _, err := Design(plan, DesignSpec{Runs: 4, Vary: designVary, Density: true, Params: truth, Existing: obs, Fixed: designFixed,
			Rand: rand.New(rand.NewPCG(1, 1))}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestDesignTargetCriterion: on seeded cases (6 random logged runs, the
// illustrative parameters as calibration), the runs the target criterion
// chooses give a lower expected SE of the target quantity at the recipe
// suggest chooses for coverage>=0.99 than the D-optimal runs do, and the
// D-optimal runs a higher ln det: each criterion wins on its own measure,
// both as computed by Design (the property holds by construction only if
// the exchange search works; a broken criterion or search fails it).
func TestDesignTargetCriterion(t *testing.T) {
	t.Parallel()
	plan := loadTemplate(t, "lowpressure")
	truth := DefaultParams()
	target, err := ParseTarget("coverage>=0.99")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name    string
		density bool
		seed    uint64
	}{
		{"coverage only", false, 5},
		{"with density", true, 6},
	} {
		t.Run(c.name, func(t *testing.T) {
			obs := randomRuns(t, plan, 6, truth, rand.New(rand.NewPCG(c.seed, 1)), c.density)
			run := func(criterion string) *DesignResult {
				d, err := Design(plan, DesignSpec{Runs: 4, Vary: designVary, Density: c.density, Params: truth, Existing: obs, Fixed: designFixed,
					Criterion: criterion, Targets: []Target{target}, Candidates: 200, Restarts: 4, Rand: rand.New(rand.NewPCG(c.seed, 2))})
				if err != nil {
					t.Fatal(err)
				}
				return d
			}
			dopt, tgt := run(DesignD), run(DesignTarget)
			t.Logf("target SE (%s) now %.4g; after D-optimal %.4g, after target %.4g; ln det D-optimal %.4g, target %.4g",
				tgt.TargetQuantity, tgt.TargetSENow, dopt.TargetSEAfter, tgt.TargetSEAfter, dopt.LogDetAfter, tgt.LogDetAfter)
			if tgt.Target == nil || dopt.Target == nil || !(tgt.Target.Coverage >= 0.99) {
				t.Fatalf("got target settings %+v, want suggest's choice meeting coverage >= 0.99", tgt.Target)
			}
			if !(tgt.TargetSEAfter < dopt.TargetSEAfter) {
				t.Errorf("target SE after: target criterion %.4g, D-optimal %.4g; want the target criterion lower", tgt.TargetSEAfter, dopt.TargetSEAfter)
			}
			if !(dopt.LogDetAfter > tgt.LogDetAfter) {
				t.Errorf("ln det after: D-optimal %.4g, target criterion %.4g; want D-optimal higher", dopt.LogDetAfter, tgt.LogDetAfter)
			}
			if !(tgt.TargetSEAfter > 0) || tgt.TargetSEAfter >= tgt.TargetSENow {
				t.Errorf("target SE: now %.4g, after %.4g; want the runs to identify it (NaN now: not yet) or shrink it", tgt.TargetSENow, tgt.TargetSEAfter)
			}
		})
	}
}
