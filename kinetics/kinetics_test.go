package kinetics

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

func loadTemplate(t testing.TB, name string) *recipe.Plan {
	t.Helper()
	r, err := recipe.LoadRecipe("../templates/recipe-" + name + ".yaml")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := recipe.Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	return recipe.Derive(r, f)
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// isothermal is a one-step profile at constant conditions from t = 0.
func isothermal(T, pC, pH, d float64) Profile {
	return Profile{Segments: []Segment{{Label: "1 grow", Kind: recipe.KindGrow, Duration: d, T0: T, T1: T, PC: pC, PH: pH}}, Total: d}
}

// testParams give coverage within minutes at 1273 K, 50 Pa CH4, 30 Pa H2.
var testParams = Params{En: 1, I0: 1e11, A: 1, B: 1, Eg: 2, G0: 0.1, P0: 100}

// The Avrami result for constant nucleation and growth rates from t = 0:
// θ = 1 − exp(−κ·I·G²·t³/3) (Avrami 1939–41; Christian, Theory of
// Transformations, ch. 1). Tolerance 1e-6 relative
// (the figure); the moments are closed-form, so far tighter holds.
func TestAvramiConstantConditions(t *testing.T) {
	const T, pC, pH = 1273.15, 50.0, 30.0
	for _, shape := range []Shape{Round, Hexagonal} {
		p := testParams
		p.Shape = shape
		I, G, _ := p.rates(T, pC, pH)
		tc := math.Cbrt(3 / (shape.Kappa() * I * G * G)) // X(tc) = 1
		for _, f := range []float64{0.05, 0.3, 1, 1.7, 2.5} {
			d := f * tc
			res, err := PredictProfile(isothermal(T, pC, pH, d), p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			want := -math.Expm1(-shape.Kappa() * I * G * G * d * d * d / 3)
			if e := relErr(res.Coverage, want); e > 1e-6 {
				t.Errorf("%s t=%.3g tc: got θ %.12g, want %.12g (rel %.2g)", shape, f, res.Coverage, want, e)
			}
			wantT50 := tc * math.Cbrt(math.Ln2)
			if d > wantT50 && relErr(res.T50, wantT50) > 1e-9 {
				t.Errorf("%s: got t50 %.12g s, want %.12g s", shape, res.T50, wantT50)
			}
		}
	}
}

// The final nuclei density at constant conditions, N∞ =
// Γ(4/3)·(3/κ)^(1/3)·(I/G)^(2/3), from ∫ I·exp(−κIG²t³/3) dt (Christian
// ch. 1). Tolerance 1e-6 relative.
func TestFinalNucleiDensity(t *testing.T) {
	const T, pC, pH = 1273.15, 50.0, 30.0
	for _, shape := range []Shape{Round, Hexagonal} {
		p := testParams
		p.Shape = shape
		I, G, _ := p.rates(T, pC, pH)
		k := shape.Kappa()
		tc := math.Cbrt(3 / (k * I * G * G))
		res, err := PredictProfile(isothermal(T, pC, pH, 10*tc), p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		want := math.Gamma(4.0/3) * math.Cbrt(3/k) * math.Pow(I/G, 2.0/3)
		if e := relErr(res.NucleiDensity, want); e > 1e-6 {
			t.Errorf("%s: got N∞ %.10g /m², want %.10g (rel %.2g)", shape, res.NucleiDensity, want, e)
		}
		wantD := math.Sqrt(4 / (math.Pi * want))
		if e := relErr(res.DomainSize, wantD); e > 1e-6 {
			t.Errorf("%s: got domain size %.10g m, want %.10g", shape, res.DomainSize, wantD)
		}
	}
}

// The Gauss–Legendre quadrature converges as the panels multiply: the
// error in N∞ (formula above) falls by at least 1000× from 2 to 4 panels and
// is below 1e-12 relative at the default 8.
func TestQuadratureConvergence(t *testing.T) {
	const T, pC, pH = 1273.15, 50.0, 30.0
	I, G, _ := testParams.rates(T, pC, pH)
	want := math.Gamma(4.0/3) * math.Cbrt(3/math.Pi) * math.Pow(I/G, 2.0/3)
	tc := math.Cbrt(3 / (math.Pi * I * G * G))
	var errs []float64
	for _, n := range []int{2, 4, 8, 16} {
		res, _ := PredictProfile(isothermal(T, pC, pH, 10*tc), testParams, Options{Panels: n})
		errs = append(errs, relErr(res.NucleiDensity, want))
	}
	if !(errs[1] < errs[0]/1000) || errs[2] > 1e-12 || errs[3] > 1e-12 {
		t.Errorf("got errors %.3g for 2, 4, 8, 16 panels; want a 1000× fall from 2 to 4 and < 1e-12 from 8", errs)
	}
}

// 8-point Gauss–Legendre integrates polynomials up to degree 15 exactly
// (Abramowitz & Stegun, Handbook of Mathematical Functions, 25.4.29): ∫x^14
// over [−1, 1] = 2/15. Tolerance 1e-14.
func TestGaussLegendreExact(t *testing.T) {
	sum := 0.0
	for j, x := range glNodes {
		sum += glWeights[j] * math.Pow(x, 14)
	}
	if math.Abs(sum-2.0/15) > 1e-14 {
		t.Errorf("got ∫x^14 %.16g, want %.16g", sum, 2.0/15)
	}
}

// slope returns the log-log slope of ln(−ln(1−θ)) against ln t between two
// growth times, the Avrami exponent.
func avramiSlope(t *testing.T, p Params, t1, t2 float64) float64 {
	t.Helper()
	x := func(d float64) float64 {
		res, err := PredictProfile(isothermal(1273.15, 50, 30, d), p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return -math.Log1p(-res.Coverage)
	}
	return math.Log(x(t2)/x(t1)) / math.Log(t2/t1)
}

// Avrami exponents: 3 for continuous nucleation, 2 for site saturation
// (site saturation: θ = 1 − exp(−π·N·G²·t²), Avrami 1939–41; Christian). Tolerance 1e-6.
func TestAvramiExponents(t *testing.T) {
	cont := testParams
	site := testParams
	site.Mode, site.SiteDensity = SiteSaturated, 1e9
	for _, c := range []struct {
		name string
		p    Params
		want float64
	}{{"continuous", cont, 3}, {"site-saturated", site, 2}} {
		if got := avramiSlope(t, c.p, 20, 200); math.Abs(got-c.want) > 1e-6 {
			t.Errorf("%s: got slope %.9f, want %g", c.name, got, c.want)
		}
	}
	// Site-saturated closed form θ = 1 − exp(−κ·N0·G²·t²), 1e-9 relative.
	_, G, _ := site.rates(1273.15, 50, 30)
	res, _ := PredictProfile(isothermal(1273.15, 50, 30, 100), site, Options{})
	want := -math.Expm1(-math.Pi * site.SiteDensity * G * G * 100 * 100)
	if relErr(res.Coverage, want) > 1e-9 || res.NucleiDensity != site.SiteDensity {
		t.Errorf("site-saturated: got θ %.12g N %g, want θ %.12g N %g", res.Coverage, res.NucleiDensity, want, site.SiteDensity)
	}
}

type rampReference struct {
	Params struct {
		En, I0, A, B, Eg, G0, P0 float64
	} `json:"-"`
	Ramp struct {
		T0, T1, D, PC float64
	} `json:"-"`
	Samples []struct {
		T        float64 `json:"t_s"`
		Coverage float64 `json:"coverage"`
		Extended float64 `json:"extended"`
		N        float64 `json:"nuclei_per_m2"`
		R        float64 `json:"radius_m"`
	} `json:"samples"`
	T50 float64 `json:"t50_s"`
	T90 float64 `json:"t90_s"`
	T99 float64 `json:"t99_s"`
}

// rampProfile is the ramp of testdata/ramp_reference.py (900 → 1050 °C in
// 1200 s, 50 Pa CH4, no H2), cut into four 300 s steps so that each step's
// result is a sample.
func rampProfile() (Profile, Params) {
	p := Params{En: 1, I0: 1e11, A: 1, B: 0, Eg: 2, G0: 0.1, P0: 100}
	var prof Profile
	for k := 0; k < 4; k++ {
		t0 := 300 * float64(k)
		prof.Segments = append(prof.Segments, Segment{Index: k, Label: "ramp", Start: t0, Duration: 300,
			T0: 1173.15 + 150*t0/1200, T1: 1173.15 + 150*(t0+300)/1200, PC: 50})
	}
	prof.Total = 1200
	return prof, p
}

func readRampReference(t *testing.T) rampReference {
	t.Helper()
	data, err := os.ReadFile("testdata/ramp_reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref rampReference
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Samples) != 4 {
		t.Fatalf("reference has %d samples, want 4", len(ref.Samples))
	}
	return ref
}

// A non-isothermal ramp against the reference values in
// testdata/ramp_reference.json, computed by direct nested
// scipy.integrate.quad of the double integrals (Debian python3-scipy 1.10.1;
// script beside it). Tolerances: coverage and nuclei density 1e-6 relative
// (1e-6 absolute for θ near 0 or 1), radius 1e-9, times 1e-3 s.
func TestRampAgainstScipy(t *testing.T) {
	ref := readRampReference(t)
	prof, p := rampProfile()
	res, err := PredictProfile(prof, p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for k, s := range ref.Samples {
		got := res.Steps[k]
		if math.Abs(got.Coverage-s.Coverage) > 1e-6*math.Min(s.Coverage, 1-s.Coverage)+1e-12 && math.Abs(got.Coverage-s.Coverage) > 1e-9 {
			t.Errorf("t=%g s: got θ %.12g, want %.12g", s.T, got.Coverage, s.Coverage)
		}
		if relErr(got.NucleiDensity, s.N) > 1e-6 {
			t.Errorf("t=%g s: got N %.10g, want %.10g (rel %.2g)", s.T, got.NucleiDensity, s.N, relErr(got.NucleiDensity, s.N))
		}
	}
	if relErr(res.Radius, ref.Samples[3].R) > 1e-9 {
		t.Errorf("got R %.12g m, want %.12g", res.Radius, ref.Samples[3].R)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"t50", res.T50, ref.T50}, {"t90", res.T90, ref.T90}, {"t99", res.T99, ref.T99}} {
		if math.Abs(c.got-c.want) > 1e-3 {
			t.Errorf("%s: got %.6f s, want %.6f s", c.name, c.got, c.want)
		}
	}
}

// The ramp integrator converges at fourth order as the sub-step shrinks:
// each halving of RampStep cuts the error in the extended coverage against
// the scipy reference by 8× to 32× (16× for RK4), while it is well above
// the reference's own accuracy (1e-12 relative).
func TestRampConvergence(t *testing.T) {
	ref := readRampReference(t)
	prof, p := rampProfile()
	seg := prof.Segments[0] // one ramp step to 600 s, where θ ≈ 0.43
	seg.Duration, seg.T1 = 600, prof.Segments[1].T1
	prof.Segments, prof.Total = []Segment{seg}, 600
	var errs []float64
	for _, h := range []float64{40, 20, 10} {
		res, _ := PredictProfile(prof, p, Options{RampStep: h})
		x := -math.Log1p(-res.Coverage)
		errs = append(errs, relErr(x, ref.Samples[1].Extended))
	}
	t.Logf("errors %.3g", errs)
	for i := 1; i < len(errs); i++ {
		if r := errs[i-1] / errs[i]; r < 8 || r > 32 {
			t.Errorf("halving the step cut the error %.3g → %.3g (×%.1f), want ×8 to ×32", errs[i-1], errs[i], r)
		}
	}
}

// Where the CH4 pressure is below equilibrium with graphite at the step's
// H2 pressure (NIST-JANAF ΔfG° via recipe/gas), hydrogen etches: no growth,
// no nuclei, and the step is flagged.
func TestEtching(t *testing.T) {
	const T, pH = 1273.15, 1e5
	eq := gas.EquilibriumMethanePressure(T, pH)
	res, err := PredictProfile(isothermal(T, eq/2, pH, 600), DefaultParams(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Etching || !res.Steps[0].Etching || res.Coverage != 0 || res.NucleiDensity != 0 {
		t.Errorf("got etching %v/%v θ %g N %g, want etching, θ 0, N 0", res.Etching, res.Steps[0].Etching, res.Coverage, res.NucleiDensity)
	}
	if G, etch := DefaultParams().GrowthRate(T, eq*2, pH); etch || !(G > 0) {
		t.Errorf("at twice the equilibrium pressure: got G %g etching %v, want growth", G, etch)
	}
}

// The Arrhenius rates against hand evaluation of the equations at 1000 °C
// (k = 1.380649e-23 J/K / 1.602176634e-19 C, exact SI 2019). Tolerance
// 1e-12 relative.
func TestRates(t *testing.T) {
	p := DefaultParams()
	const T, pC, pH = 1273.15, 51.0, 29.0
	kT := 1.380649e-23 / 1.602176634e-19 * T
	wantI := 50 * math.Exp(1.5/kT) * math.Pow(0.51, 2.5) * math.Pow(0.29, -2)
	wantG := 1.1e11 * math.Exp(-4.5/kT) * (pC - gas.EquilibriumMethanePressure(T, pH)) / 100 / math.Sqrt(0.29)
	if got := p.NucleationRate(T, pC, pH); relErr(got, wantI) > 1e-12 {
		t.Errorf("got I %.15g, want %.15g", got, wantI)
	}
	if got, _ := p.GrowthRate(T, pC, pH); relErr(got, wantG) > 1e-12 {
		t.Errorf("got G %.15g, want %.15g", got, wantG)
	}
	if got := p.NucleationRate(T, 0, pH); got != 0 {
		t.Errorf("without methane: got I %g, want 0", got)
	}
}

// Hexagon area with corners at R: 3√3/2·R² (elementary geometry).
func TestKappa(t *testing.T) {
	if got := Hexagonal.Kappa(); math.Abs(got-2.598076211353316) > 1e-15 {
		t.Errorf("got κ %.16g, want 2.598076211353316", got)
	}
	if got := Round.Kappa(); got != math.Pi {
		t.Errorf("got κ %g, want π", got)
	}
}
