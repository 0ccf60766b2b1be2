package kinetics

import (
	"errors"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

// A coverage-only calibration (runs from fitTruth, coverage only, as in
// TestFitCoverageOnlyRecovery) plans for coverage with --confidence: the
// lower bound of the 90 % interval at the suggested recipe, computed
// independently by PredictInterval, meets the target (to the Monte Carlo
// error of 200 draws, 0.1 % of 1 − θ, as in TestSuggestConfidence), while
// targets on nuclei density or domain size are refused, with a hint, since
// coverage alone fixes only I·G² (Params.Predicts).
func TestSuggestCoverageOnly(t *testing.T) {
	t.Parallel()
	plan := loadTemplate(t, "lowpressure")
	res, err := Fit(observations(t, synthRuns(50, 11, fitTruth), fitStart()), fitStart(), FitSettings{Coverage: true})
	if err != nil {
		t.Fatal(err)
	}
	p := res.Params
	if !p.CoverageOnly || !p.HasCovariance() {
		t.Fatalf("coverage-only fit: got CoverageOnly %v, covariance %v; want both", p.CoverageOnly, p.HasCovariance())
	}
	sug, err := Suggest(plan, SuggestSpec{Params: p, Targets: []Target{mustTarget(t, "coverage>=0.99")}, Confidence: 0.9})
	if err != nil {
		t.Fatal(err)
	}
	if !sug.Met {
		t.Fatalf("coverage>=0.99 at 90 %%: got no recipe (binding %q), want one", sug.Binding)
	}
	u, err := PredictInterval(NewProfile(recipe.Derive(sug.Recipe, plan.Furnace)), p, Options{}, IntervalSettings{Samples: 200})
	if err != nil {
		t.Fatal(err)
	}
	if u.Coverage.Lo < 0.99-1e-3*0.01 {
		t.Errorf("lower bound of coverage %.6f at the suggested recipe, want ≥ 0.99", u.Coverage.Lo)
	}
	for _, c := range []struct {
		name, target string
	}{
		{"domain size", "domain_size>=20um"},
		{"nuclei density", "nuclei_density<=100/mm2"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Suggest(plan, SuggestSpec{Params: p, Targets: []Target{mustTarget(t, "coverage>=0.9"), mustTarget(t, c.target)}, Confidence: 0.9})
			var ie *InputError
			if !errors.As(err, &ie) || ie.Kind != KindTarget || ie.Reason != ReasonNotPredicted || ie.Hint() == "" {
				t.Fatalf("got %v, want a target InputError, reason not predicted, with a hint", err)
			}
			if !strings.Contains(err.Error(), `target "`+c.target+`"`) || !strings.Contains(err.Error(), "coverage only") {
				t.Errorf("got %q, want it to quote the target and say coverage only", err)
			}
		})
	}
}

// Params.Predicts: a coverage-only calibration predicts coverage, not
// nuclei density or domain size; a full one predicts all three.
func TestParamsPredicts(t *testing.T) {
	only := DefaultParams()
	only.CoverageOnly = true
	for _, c := range []struct {
		name   string
		p      Params
		metric string
		ok     bool
	}{
		{"coverage from coverage only", only, MetricCoverage, true},
		{"density from coverage only", only, MetricNucleiDensity, false},
		{"size from coverage only", only, MetricDomainSize, false},
		{"density from a full calibration", DefaultParams(), MetricNucleiDensity, true},
		{"size from a full calibration", DefaultParams(), MetricDomainSize, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.p.Predicts(c.metric)
			if got := err == nil; got != c.ok {
				t.Fatalf("got %v, want predicted %v", err, c.ok)
			}
			if err != nil && (!errors.Is(err, ErrMetric) || hintOfErr(err) == "") {
				t.Errorf("got %v, want an ErrMetric with a hint", err)
			}
		})
	}
}

func hintOfErr(err error) string {
	var ie *InputError
	if errors.As(err, &ie) {
		return ie.Hint()
	}
	return ""
}
