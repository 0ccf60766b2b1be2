package kinetics

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/foilrun/foilrun/recipe/gas"
)

// fitTruth are the parameters the synthetic runs are generated from
// (DefaultParams: illustrative, chosen by hand; see params.go).
var fitTruth = DefaultParams()

// Noise of the synthetic measurements: σ = 0.1 on cloglog θ and on ln N
// (a model choice for the tests, about 10 % in N).
const synthSigma = 0.1

// synthRun is one synthetic isothermal run: a single grow step at constant
// conditions from t = 0, with its measured coverage and nuclei density.
type synthRun struct {
	Label    string  `json:"label"`
	T        float64 `json:"T_K"`
	PC       float64 `json:"pC_Pa"`
	PH       float64 `json:"pH_Pa"`
	PCeq     float64 `json:"pCeq_Pa"` // from gas.EquilibriumMethanePressure, for the reference script
	Time     float64 `json:"t_s"`
	Coverage float64 `json:"coverage"`
	Density  float64 `json:"nuclei_density_m2"`
}

func (r synthRun) profile() Profile { return isothermal(r.T, r.PC, r.PH, r.Time) }

// synthRuns draws n isothermal runs from truth with noise σ on cloglog θ
// and ln N, from a fixed seed: temperatures 950–1050 °C, CH4 5–60 Pa, H2
// 10–100 Pa, and a time that gives a true coverage between about 5 and
// 98 %.
func synthRuns(n int, seed uint64, truth Params) []synthRun {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	runs := make([]synthRun, n)
	for i := range runs {
		T := 1223.15 + 100*rng.Float64()
		pC := 5 * math.Exp(rng.Float64()*math.Log(12))
		pH := 10 * math.Exp(rng.Float64()*math.Log(10))
		I, G, _ := truth.rates(T, pC, pH)
		X := math.Exp(math.Log(0.05) + rng.Float64()*(math.Log(4)-math.Log(0.05)))
		t := math.Cbrt(3 * X / (truth.Kappa() * I * G * G))
		r := synthRun{T: T, PC: pC, PH: pH, PCeq: gas.EquilibriumMethanePressure(T, pH), Time: t}
		res, err := PredictProfile(r.profile(), truth, Options{})
		if err != nil {
			panic(err)
		}
		Xt := -math.Log1p(-res.Coverage)
		r.Coverage = -math.Expm1(-Xt * math.Exp(synthSigma*rng.NormFloat64()))
		r.Density = res.NucleiDensity * math.Exp(synthSigma*rng.NormFloat64())
		r.Label = "R" + string(rune('A'+i%26)) + itoa(i)
		runs[i] = r
	}
	return runs
}

func itoa(i int) string {
	if i == 0 {
		return "0"
	}
	s := ""
	for ; i > 0; i /= 10 {
		s = string(rune('0'+i%10)) + s
	}
	return s
}

func observations(t testing.TB, runs []synthRun, start Params) []Observation {
	t.Helper()
	obs := make([]Observation, len(runs))
	for i, r := range runs {
		pr, err := Prepare(r.profile(), start, Options{})
		if err != nil {
			t.Fatal(err)
		}
		obs[i] = Observation{Label: r.Label, Prepared: pr, Coverage: r.Coverage, NucleiDensity: r.Density}
	}
	return obs
}

// fitStart is a start away from the truth.
func fitStart() Params {
	p := fitTruth
	p.En, p.Eg, p.A, p.B = -1.0, 4.0, 2.0, 1.5
	p.I0, p.G0 = 10, 5e9
	return p
}

// Prepared.Evaluate must reproduce PredictProfile (the same integration,
// with the parameter-independent parts computed once): tolerance 1e-12
// relative, rounding only.
func TestPreparedMatchesPredict(t *testing.T) {
	ramp, rp := rampProfile()
	multi := Profile{Segments: []Segment{
		{Label: "1 ramp", Duration: 600, T0: 300, T1: 1273.15, PH: 30},
		{Label: "2 grow", Start: 600, Duration: 200, T0: 1273.15, T1: 1273.15, PC: 30, PH: 30},
		{Label: "3 grow", Start: 800, Duration: 300, T0: 1293.15, T1: 1293.15, PC: 10, PH: 60},
		{Label: "4 etch", Start: 1100, Duration: 100, T0: 1293.15, T1: 1293.15, PC: 1e-9, PH: 100},
		{Label: "5 cool", Start: 1200, Duration: 300, T0: 1293.15, T1: 1200, PC: 5, PH: 30},
	}, Total: 1500}
	site := testParams
	site.Mode, site.SiteDensity = SiteSaturated, 1e9
	hex := DefaultParams()
	hex.Shape = Hexagonal
	for _, c := range []struct {
		name string
		prof Profile
		p    Params
	}{
		{"isothermal", isothermal(1273.15, 50, 30, 120), testParams},
		{"ramp", ramp, rp},
		{"multi-step", multi, DefaultParams()},
		{"hexagonal", multi, hex},
		{"site-saturated", multi, site},
	} {
		t.Run(c.name, func(t *testing.T) {
			pr, err := Prepare(c.prof, c.p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			want, err := PredictProfile(c.prof, c.p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			th, N := pr.Evaluate(c.p)
			if relErr(th, want.Coverage) > 1e-12 || relErr(N, want.NucleiDensity) > 1e-12 {
				t.Errorf("got θ %.15g N %.15g, want θ %.15g N %.15g", th, N, want.Coverage, want.NucleiDensity)
			}
		})
	}
}

// The Jacobian by channel differences must agree with plain central
// differences on the parameters (a finite-difference check of the
// derivatives): tolerance 1e-4 relative to the row's largest entry.
func TestFitJacobian(t *testing.T) {
	ramp, _ := rampProfile()
	for _, c := range []struct {
		name string
		prof Profile
	}{
		{"isothermal (closed form)", isothermal(1273.15, 30, 20, 150)},
		{"two grow steps (channels)", Profile{Segments: []Segment{
			{Label: "1 grow", Duration: 100, T0: 1273.15, T1: 1273.15, PC: 30, PH: 20},
			{Label: "2 grow", Start: 100, Duration: 100, T0: 1293.15, T1: 1293.15, PC: 10, PH: 40}}, Total: 200}},
		{"ramp", ramp},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := DefaultParams()
			pr, err := Prepare(c.prof, p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			th, N := pr.Evaluate(p)
			obs := []Observation{{Label: "a", Prepared: pr, Coverage: th * 0.9, NucleiDensity: N * 1.1}}
			f := &fitter{s: FitSettings{Epsilon: 1e-3, Workers: 1, Coverage: true, Density: true}, start: p, mode: Continuous,
				v0: vecOf(p), all: obs, obs: []int{0}, sc: 1, sd: 1, xlo: -math.Log1p(-1e-3), xhi: -math.Log(1e-3),
				free: []int{fitEn, fitLnI0, fitA, fitB, fitEg, fitLnG0}}
			f.rows = []fitRow{{obs: 0, y: f.cloglog(obs[0].Coverage)}, {obs: 0, density: true, y: math.Log(obs[0].NucleiDensity)}}
			f.idx = f.rowIndex()
			for _, i := range f.free {
				f.lo[i], f.hi[i] = -1e3, 1e3
			}
			for _, coverageOnly := range []bool{false, true} {
				f.absorbed, f.unidentified = [nFit]bool{}, [nFit]bool{}
				f.coordinates(coverageOnly)
				checkJacobian(t, f)
			}
		})
	}
}

// checkJacobian compares the fitter's Jacobian at its start with central
// differences of its residuals (h = 1e-5; tolerance 1e-4 of the row's
// largest entry, the forward-difference error of the fitter's own step).
func checkJacobian(t *testing.T, f *fitter) {
	t.Helper()
	x := f.x0
	J := mat.NewDense(2, len(x), nil)
	f.jacobian(J, x)
	if len(x) == 0 {
		t.Fatal("no coordinates to check")
	}
	for j := range x {
		h := 1e-5
		xp, xm := append([]float64(nil), x...), append([]float64(nil), x...)
		xp[j] += h
		xm[j] -= h
		rp, rm := make([]float64, 2), make([]float64, 2)
		f.residuals(rp, xp)
		f.residuals(rm, xm)
		for i := range 2 {
			want := (rp[i] - rm[i]) / (2 * h)
			scale := 0.0
			for k := range x {
				scale = math.Max(scale, math.Abs(J.At(i, k)))
			}
			if math.Abs(J.At(i, j)-want) > 1e-4*scale {
				t.Errorf("row %d %s: got %.8g, want %.8g", i, f.coords[j].Name, J.At(i, j), want)
			}
		}
	}
}

func estimate(res *FitResult, key string) Estimate {
	for _, e := range res.Estimates {
		if e.Key == key {
			return e
		}
	}
	panic("no estimate " + key)
}

// Recovery: runs generated from known parameters with noise (seed fixed)
// are fitted back from a start away from the truth. The true values must
// lie within 2.5 standard errors (about two; 2.5 keeps the chance of a
// false failure over six parameters below 8 %), and the standard errors
// must shrink as runs are added (by about √4 = 2 from 24 to 96 runs;
// accepted 1.5 to 2.7).
func TestFitRecovery(t *testing.T) {
	ses := map[int]map[string]float64{}
	for _, n := range []int{24, 96} {
		runs := synthRuns(n, 7, fitTruth)
		res, err := Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{})
		if err != nil {
			t.Fatal(err)
		}
		if res.Status != Converged {
			t.Fatalf("n=%d: status %s after %d iterations", n, res.Status, res.Iterations)
		}
		ses[n] = map[string]float64{}
		for _, e := range res.Estimates {
			if e.Fixed {
				continue
			}
			truth, got, se := siValue(fitTruth, fitIndex(e.Key)), e.Value, e.SE
			if e.Log {
				truth, got, se = math.Log(truth), e.LogValue, e.LogSE
			}
			if !(math.Abs(got-truth) <= 2.5*se) {
				t.Errorf("n=%d %s: got %.4g ± %.2g, truth %.4g (%.1f SE off)", n, e.Short, got, se, truth, math.Abs(got-truth)/se)
			}
			ses[n][e.Key] = se
		}
		if res.Params.Covariance == nil {
			t.Errorf("n=%d: no covariance", n)
		}
		// Referred to the median growth temperature, the prefactors are
		// nearly independent of their energies (raw ln I0 against En
		// correlates near ±1 over a 100 K range; a model property).
		if !(math.Abs(res.NucleationCorrelation) < 0.9) || !(math.Abs(res.GrowthCorrelation) < 0.9) {
			t.Errorf("n=%d: energy–prefactor correlations %.3f, %.3f; want weak (|r| < 0.9) with prefactors at T_ref", n, res.NucleationCorrelation, res.GrowthCorrelation)
		}
		// Reduced χ² with the estimated scales is 1 by construction of
		// the two-stage weights (to n/(n−p); 1 % since the scales come from the
		// first-stage residuals).
		if relErr(res.ReducedChiSq, float64(res.N)/float64(res.N-res.P)) > 0.01 {
			t.Errorf("n=%d: reduced χ² %.6g, want %.6g", n, res.ReducedChiSq, float64(res.N)/float64(res.N-res.P))
		}
		if math.Abs(res.CoverageScale-synthSigma) > 0.04 || math.Abs(res.DensityScale-synthSigma) > 0.04 {
			t.Errorf("n=%d: scales %.3g, %.3g; want about %g", n, res.CoverageScale, res.DensityScale, synthSigma)
		}
	}
	for key, se := range ses[24] {
		ratio := se / ses[96][key]
		if ratio < 1.5 || ratio > 2.7 {
			t.Errorf("%s: SE %.3g with 24 runs, %.3g with 96 (ratio %.2f), want about 2", key, se, ses[96][key], ratio)
		}
	}
}

// fitReference is testdata/fit_reference.json, written by
// testdata/fit_reference.py (scipy.optimize.least_squares).
type fitReference struct {
	Scipy     string             `json:"scipy"`
	Sigma     float64            `json:"sigma"`
	Epsilon   float64            `json:"epsilon"`
	Estimates map[string]float64 `json:"estimates"`
	SE        map[string]float64 `json:"se"`
}

// The synthetic data of testdata/fit_data.json (synthRuns(40, 11,
// fitTruth); regenerate with FOILRUN_WRITE_FIT_DATA=1) fitted with
// scipy.optimize.least_squares (Debian python3-scipy; method "trf", the
// same closed-form model for isothermal steps, σ = 0.1 fixed on both
// residuals, ε = 1e-3; see testdata/fit_reference.py) must give the same
// estimates to 1 % (energies and orders relative, ln prefactors absolute
// 0.01) and the same standard errors to 2 %.
func TestFitAgainstScipy(t *testing.T) {
	if os.Getenv("FOILRUN_WRITE_FIT_DATA") != "" {
		data, _ := json.MarshalIndent(synthRuns(40, 11, fitTruth), "", " ")
		if err := os.WriteFile("testdata/fit_data.json", append(data, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var runs []synthRun
	raw, err := os.ReadFile("testdata/fit_data.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &runs); err != nil {
		t.Fatal(err)
	}
	var ref fitReference
	raw, err = os.ReadFile("testdata/fit_reference.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	for _, r := range runs {
		if e := relErr(gas.EquilibriumMethanePressure(r.T, r.PH), r.PCeq); e > 1e-12 {
			t.Fatalf("run %s: pCeq in the data file differs from gas.EquilibriumMethanePressure (rel %.2g)", r.Label, e)
		}
	}
	res, err := Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{CoverageScale: ref.Sigma, DensityScale: ref.Sigma, Epsilon: ref.Epsilon})
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range res.Estimates {
		want, ok := ref.Estimates[e.Short]
		if !ok {
			t.Fatalf("reference lacks %s", e.Short)
		}
		got, se := e.Value, e.SE
		if e.Log {
			got, se = e.LogValue, e.LogSE
			if math.Abs(got-want) > 0.01 {
				t.Errorf("ln %s: got %.6g, scipy %.6g", e.Short, got, want)
			}
		} else if relErr(got, want) > 0.01 {
			t.Errorf("%s: got %.6g, scipy %.6g", e.Short, got, want)
		}
		if relErr(se, ref.SE[e.Short]) > 0.02 {
			t.Errorf("SE %s: got %.6g, scipy %.6g", e.Short, se, ref.SE[e.Short])
		}
	}
}

// Fixing a parameter keeps it at its value and frees the others; a
// coverage-only fit of every parameter cannot separate nucleation from
// growth (X depends on ln I + 2 ln G only) and must say so.
func TestFitFixAndIdentifiability(t *testing.T) {
	runs := synthRuns(30, 3, fitTruth)
	res, err := Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{Fixed: map[string]float64{"Eg": 4.5, "methane_order": 2.5}})
	if err != nil {
		t.Fatal(err)
	}
	if e := estimate(res, "growth_energy"); !e.Fixed || e.Value != 4.5 || e.SE != 0 {
		t.Errorf("fixed Eg: got %+v, want fixed at 4.5 with SE 0", e)
	}
	if res.P != 4 {
		t.Errorf("got %d free parameters, want 4", res.P)
	}
	res, err = Fit(observations(t, runs, fitStart()), fitStart(), FitSettings{Coverage: true})
	if err != nil {
		t.Fatal(err)
	}
	if !hasWarning(res, "coverage alone identifies En+2Eg") {
		t.Errorf("coverage-only fit: warnings %q, want one naming the combinations coverage identifies", res.Warnings)
	}
	if hasWarning(res, "cannot identify") {
		t.Errorf("coverage-only fit: warnings %q, want no singular JᵀJ once the combinations are fitted", res.Warnings)
	}
	if res.Params.Covariance == nil || !res.Params.CoverageOnly {
		t.Errorf("coverage-only fit: covariance %v, coverage only %v; want the combinations' covariance, marked coverage only", res.Params.Covariance, res.Params.CoverageOnly)
	}
}

func hasWarning(res *FitResult, s string) bool {
	for _, w := range res.Warnings {
		if strings.Contains(w, s) {
			return true
		}
	}
	return false
}

// Bad input gets clear errors that wrap ErrFitInput.
func TestFitBadInput(t *testing.T) {
	runs := synthRuns(12, 5, fitTruth)
	oneT := make([]synthRun, len(runs))
	for i, r := range runs {
		r.T = 1273.15
		oneT[i] = r
	}
	noCarbon := []Observation{{Label: "dry", Prepared: mustPrepare(t, isothermal(1273.15, 0, 30, 60)), Coverage: 0.5, NucleiDensity: math.NaN()}}
	noMetric := observations(t, runs, fitStart())
	for i := range noMetric {
		noMetric[i].Coverage = math.NaN()
	}
	for _, c := range []struct {
		name string
		obs  []Observation
		s    FitSettings
		want string
	}{
		{"no runs", nil, FitSettings{}, "no run has a measured coverage or nuclei density"},
		{"no carbon", noCarbon, FitSettings{}, "no run has a measured"},
		{"no coverage measured", noMetric, FitSettings{Coverage: true}, "no run has a measured coverage"},
		{"one temperature", observations(t, oneT, fitStart()), FitSettings{}, "all 12 runs grow at 1000.0 °C"},
		{"unknown fix", observations(t, runs, fitStart()), FitSettings{Fixed: map[string]float64{"Ea": 1}}, `cannot fix unknown parameter "Ea"`},
		{"too few", observations(t, runs[:3], fitStart()), FitSettings{}, "6 measurements from 3 runs for 6 free parameters"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Fit(c.obs, fitStart(), c.s)
			if err == nil || !errors.Is(err, ErrFitInput) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want an ErrFitInput containing %q", err, c.want)
			}
		})
	}
	// One temperature is fine when both energies are fixed.
	if _, err := Fit(observations(t, oneT, fitStart()), fitStart(), FitSettings{Fixed: map[string]float64{"En": -1.5, "Eg": 4.5}}); err != nil {
		t.Errorf("one temperature with fixed energies: %v", err)
	}
}

func mustPrepare(t testing.TB, prof Profile) *Prepared {
	t.Helper()
	pr, err := Prepare(prof, fitStart(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	return pr
}

func TestParseFix(t *testing.T) {
	for _, c := range []struct {
		in      string
		key     string
		value   float64
		wantErr string
	}{
		{"Eg=1.9", "growth_energy", 1.9, ""},
		{"growth_energy=1.9 eV", "growth_energy", 1.9, ""},
		{"en=-150 meV", "nucleation_energy", -0.15, ""},
		{"I0=5 /cm2/s", "nucleation_prefactor", 5e4, ""},
		{"b=2", "hydrogen_order", 2, ""},
		{"Ea=1", "", 0, `unknown parameter "Ea"`},
		{"Eg", "", 0, "want NAME=VALUE"},
		{"G0=-1", "", 0, "greater than zero"},
		{"a=x", "", 0, "not a number"},
	} {
		key, v, err := ParseFix(c.in)
		if c.wantErr != "" {
			if err == nil || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%q: got %v, want error %q", c.in, err, c.wantErr)
			}
			continue
		}
		if err != nil || key != c.key || math.Abs(v-c.value) > 1e-12*math.Abs(c.value) {
			t.Errorf("%q: got %s %g %v, want %s %g", c.in, key, v, err, c.key, c.value)
		}
	}
}

// A fitted file round-trips through FormatParams and ParseParams with its
// covariance.
func TestFitParamsFile(t *testing.T) {
	res, err := Fit(observations(t, synthRuns(24, 7, fitTruth), fitStart()), fitStart(), FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	res.Params.Date = "2026-03-02"
	back, err := ParseParams("fit.yaml", FormatParams(res.Params))
	if err != nil {
		t.Fatal(err)
	}
	if back.Covariance == nil || len(back.Covariance.Names) != 6 || back.Runs != 24 || back.Date != "2026-03-02" {
		t.Errorf("read back %+v", back)
	}
	if relErr(back.Eg, res.Params.Eg) > 1e-15 {
		t.Errorf("Eg: got %g, want %g", back.Eg, res.Params.Eg)
	}
}

func benchFit(b *testing.B, n int) {
	runs := synthRuns(n, 1, fitTruth)
	obs := observations(b, runs, fitStart())
	for b.Loop() {
		res, err := Fit(obs, fitStart(), FitSettings{})
		if err != nil {
			b.Fatal(err)
		}
		if res.Status != Converged {
			b.Fatal(res.Status)
		}
	}
}

// Fit of 500 runs, both metrics, six free parameters, two-stage weights.
// Target under 0.2 s on 2 cores.
func BenchmarkFit500(b *testing.B) { benchFit(b, 500) }

// Fit of 5,000 runs. Target under 1 s on 2 cores.
func BenchmarkFit5000(b *testing.B) { benchFit(b, 5000) }
