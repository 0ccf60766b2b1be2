package kinetics

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

func TestParseAxis(t *testing.T) {
	for _, c := range []struct {
		spec     string
		param    string
		from, to float64 // SI
		steps    int
	}{
		{"temperature=950C:1050C:11", "temperature", 1223.15, 1323.15, 11},
		{"CH4=1sccm:40sccm:10", "CH4", 1 * 7.435839e-7, 40 * 7.435839e-7, 10}, // 1 sccm = 7.435839e-7 mol/s (SEMI, recipe/gas)
		{"methane=1sccm:40sccm:10", "CH4", 1 * 7.435839e-7, 40 * 7.435839e-7, 10},
		{"duration=1min:30min:12", "duration", 60, 1800, 12},
		{"pressure=100mTorr:2Torr:8", "pressure", 101325.0 / 7600, 2 * 101325.0 / 760, 8}, // 1 Torr = 101325/760 Pa (definition)
	} {
		a, err := ParseAxis(c.spec)
		if err != nil {
			t.Errorf("%s: %v", c.spec, err)
			continue
		}
		if a.Param != c.param || relErr(a.From, c.from) > 1e-6 || relErr(a.To, c.to) > 1e-6 || a.Steps != c.steps {
			t.Errorf("%s: got %s %g..%g ×%d, want %s %g..%g ×%d", c.spec, a.Param, a.From, a.To, a.Steps, c.param, c.from, c.to, c.steps)
		}
	}
}

// Bad axes get exact messages, and every one wraps ErrAxis.
func TestBadAxis(t *testing.T) {
	for _, c := range []struct{ spec, want string }{
		{"tempreature=950C:1050C:11", `axis "tempreature=950C:1050C:11": unknown parameter "tempreature", want temperature, duration, pressure or a gas such as CH4`},
		{"temperature=950C:1050C:0", `axis "temperature=950C:1050C:0": want 2 to 10000 steps, got 0`},
		{"temperature=1000C:1000C:5", `axis "temperature=1000C:1000C:5": the range is empty (from equals to)`},
		{"temperature=950C:1050C", `axis "temperature=950C:1050C": want PARAM=FROM:TO:STEPS, e.g. "temperature=950C:1050C:11"`},
		{"temperature=950:1050C:3", `axis "temperature=950:1050C:3": from "950" has no unit, want a temperature such as "1000 C" (units: C, K)`},
		{"CH4=1sccm:5Torr:3", `axis "CH4=1sccm:5Torr:3": to "5Torr" is a pressure, want a flow such as "20 sccm"`},
		{"duration=1min:3min:x", `axis "duration=1min:3min:x": steps "x" is not a whole number`},
	} {
		_, err := ParseAxis(c.spec)
		if err == nil || err.Error() != c.want || !errors.Is(err, ErrAxis) {
			t.Errorf("%s:\ngot  %v\nwant %s", c.spec, err, c.want)
		}
	}
}

// Axis values hit both ends exactly and stay inside the range, and
// non-finite ends are refused: the inputs CI's fuzzing found (also in
// testdata/fuzz/FuzzParseAxis).
func TestAxisValuesExact(t *testing.T) {
	for _, c := range []struct{ name, spec, wantErr string }{
		{"falling to zero flow", "CH4=1sccm:0sccm:14", ""},
		{"falling temperature", "temperature=1050C:950C:7", ""},
		{"many steps", "duration=1s:1e7s:9999", ""},
		{"infinite from", "duration=1e308h:1h:2", "too large to hold"},
		{"too many steps", "duration=1min:2min:10001", "want 2 to 10000 steps"},
	} {
		t.Run(c.name, func(t *testing.T) {
			a, err := ParseAxis(c.spec)
			if c.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), c.wantErr) || !errors.Is(err, ErrAxis) {
					t.Errorf("got %v, want an ErrAxis containing %q", err, c.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if msg := checkAxisValues(a); msg != "" {
				t.Error(msg)
			}
		})
	}
}

func mustAxis(t testing.TB, spec string) Axis {
	t.Helper()
	a, err := ParseAxis(spec)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// Ranges outside the template furnace's limits (templates/furnace.yaml:
// tube service limit 1100 C, CH4 line 50 sccm full scale calibrated for N2,
// base pressure 5 mTorr) are errors before anything is computed.
func TestWindowLimits(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	dur := mustAxis(t, "duration=5min:15min:3")
	for _, c := range []struct{ spec, want string }{
		{"temperature=950C:1150C:5", `axis "temperature=950C:1150C:5": 1150 C is above the tube's service limit 1100 C on furnace "tube-1"`},
		{"CH4=1sccm:80sccm:5", `axis "CH4=1sccm:80sccm:5": 80 sccm is above the CH4 line's full scale 36 sccm on furnace "tube-1"`},
		{"C2H2=1sccm:5sccm:3", `axis "C2H2=1sccm:5sccm:3": furnace "tube-1" has no gas line for C2H2`},
		{"pressure=1mTorr:1Torr:3", `axis "pressure=1mTorr:1Torr:3": 0.1333 Pa is below the base pressure 0.6666 Pa on furnace "tube-1"`},
		{"pressure=1Torr:2atm:3", `axis "pressure=1Torr:2atm:3": 202650 Pa is above one atmosphere (101325 Pa)`},
	} {
		_, err := Window(plan, WindowSpec{X: mustAxis(t, c.spec), Y: dur, Params: DefaultParams()})
		if err == nil || err.Error() != c.want || !errors.Is(err, ErrAxis) {
			t.Errorf("%s:\ngot  %v\nwant %s", c.spec, err, c.want)
		}
	}
	_, err := Window(plan, WindowSpec{X: dur, Y: mustAxis(t, "duration=1min:2min:2"), Params: DefaultParams()})
	if want := `axes "duration=5min:15min:3" and "duration=1min:2min:2" vary the same parameter duration`; err == nil || err.Error() != want {
		t.Errorf("same parameter twice:\ngot  %v\nwant %s", err, want)
	}
}

// Points the recipe checks reject are marked with the first error's rule:
// 1080 C plus the furnace's 10 K thermocouple margin reaches copper's
// melting point, 1084.62 C (ITS-90), an error in recipe.Check. The map's
// middle point equals a direct prediction of the changed recipe.
func TestWindowFeasibility(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	var calls, last int
	m, err := Window(plan, WindowSpec{
		X: mustAxis(t, "temperature=960C:1080C:3"), Y: mustAxis(t, "CH4=5sccm:35sccm:3"),
		Params: DefaultParams(), Workers: 2,
		Progress: func(done, total int) {
			calls++
			if done != last+1 || total != 9 {
				t.Errorf("progress %d/%d after %d", done, total, last)
			}
			last = done
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	if calls != 9 {
		t.Errorf("got %d progress calls, want 9", calls)
	}
	for iy := range m.Ys {
		if !m.Points[iy][0].Feasible || !m.Points[iy][1].Feasible {
			t.Errorf("row %d: got 960/1020 C infeasible (%s), want feasible", iy, m.Points[iy][0].Rule)
		}
		if p := m.Points[iy][2]; p.Feasible || p.Rule != "temperature.copper-melting" {
			t.Errorf("row %d: got 1080 C feasible=%v rule %q, want infeasible by temperature.copper-melting", iy, p.Feasible, p.Rule)
		}
	}
	// More methane, more nuclei (methane order a > 0).
	if !(m.Points[2][1].NucleiDensity > m.Points[0][1].NucleiDensity) {
		t.Errorf("N at 35 sccm %g not above N at 5 sccm %g", m.Points[2][1].NucleiDensity, m.Points[0][1].NucleiDensity)
	}
	// The template's own grow step is 1000 C, 35 sccm: the window at
	// 1020 C must differ from it and the base recipe must be untouched.
	base, _ := Predict(loadTemplate(t, "lowpressure"), DefaultParams(), Options{})
	again, _ := Predict(plan, DefaultParams(), Options{})
	if base.NucleiDensity != again.NucleiDensity || math.Abs(m.Points[2][1].NucleiDensity-base.NucleiDensity) == 0 {
		t.Errorf("base recipe changed by the window: N %g vs %g", again.NucleiDensity, base.NucleiDensity)
	}
}

// slowPoint is the reference for a window point: the whole changed recipe
// derived with recipe.Derive, checked with recipe.Check and predicted with
// Predict, as Window did before it kept the steps before the grow step.
func slowPoint(t *testing.T, plan *recipe.Plan, spec WindowSpec, x, y float64) (*recipe.Plan, []recipe.Finding, Result) {
	t.Helper()
	grow := plan.Recipe.FirstStep(recipe.KindGrow)
	r := *plan.Recipe
	r.Steps = append([]recipe.Step(nil), plan.Recipe.Steps...)
	setParam(&r.Steps[grow], spec.X, x)
	setParam(&r.Steps[grow], spec.Y, y)
	p := recipe.Derive(&r, plan.Furnace)
	res, err := Predict(p, spec.Params, spec.Options)
	if err != nil {
		t.Fatal(err)
	}
	return p, recipe.Check(p), res
}

// Every cell of a window gives exactly the plan and the point (first
// error, coverage, nuclei density, domain size, T99, etching) of the slow
// path (slowPoint), for the three templates and a grid over each parameter
// --vary takes, inside and at the edges of the template furnace's limits
// (templates/furnace.yaml). Exactly: %#v prints every float64 in its
// shortest form that reads back to the same bits (strconv 'g', −1), so
// equal text is equal values (==, NaN as NaN); the plans' Step pointers
// point into different recipe copies, so the steps are compared by value.
// One worker evaluates every cell, so its reused buffers and memo are
// tested from point to point.
func TestWindowMatchesSlowPath(t *testing.T) {
	t.Parallel()
	axes := []string{
		"temperature=950C:1075C:6", "duration=1min:600min:5", "pressure=1Torr:1atm:5",
		"CH4=0.2sccm:36sccm:5", "H2=0sccm:200sccm:5",
	}
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		plan := loadTemplate(t, name)
		grow := plan.Recipe.FirstStep(recipe.KindGrow)
		for i, xs := range axes {
			spec := WindowSpec{X: mustAxis(t, xs), Y: mustAxis(t, axes[(i+1)%len(axes)]), Params: DefaultParams()}
			base, err := newWindowBase(plan.Recipe, plan.Furnace, grow, spec)
			if err != nil {
				t.Fatal(err)
			}
			w := base.newWorker()
			for iy, y := range spec.Y.Values() {
				for ix, x := range spec.X.Values() {
					where := fmt.Sprintf("%s, %s=%g, %s=%g", name, spec.X.Param, x, spec.Y.Param, y)
					wp, wfs, wres := slowPoint(t, plan, spec, x, y)
					gp, gpt, err := w.point(ix, iy)
					if err != nil {
						t.Fatalf("%s: %v", where, err)
					}
					compareWindowPoint(t, where, gp, wp, gpt, pointOf(x, y, wfs, wres, nil, grow))
				}
			}
		}
	}
}

// compareWindowPoint reports where a window's plan or point differs from
// the slow path's (see TestWindowMatchesSlowPath). It clears the plans'
// Step and Recipe pointers.
func compareWindowPoint(t *testing.T, where string, gp, wp *recipe.Plan, got, want Point) {
	t.Helper()
	for j := range gp.Steps {
		if g, w := fmt.Sprintf("%#v", *gp.Steps[j].Step), fmt.Sprintf("%#v", *wp.Steps[j].Step); g != w {
			t.Errorf("%s: step %d differs:\ngot  %s\nwant %s", where, j, g, w)
		}
		gp.Steps[j].Step, wp.Steps[j].Step = nil, nil
	}
	gp.Recipe, wp.Recipe = nil, nil
	for _, c := range []struct {
		what      string
		got, want any
	}{{"plan", *gp, *wp}, {"point", got, want}} {
		if g, w := fmt.Sprintf("%#v", c.got), fmt.Sprintf("%#v", c.want); g != w {
			t.Errorf("%s: %s differs:\ngot  %.300s\nwant %.300s", where, c.what, g, w)
		}
	}
}

// The map does not depend on how many workers fill it: a 23 × 17 grid
// (several chunks of windowChunk points) on 1, 2 and 3 workers gives the
// same points, compared as in TestWindowMatchesSlowPath, and progress
// counts every point once, in order.
func TestWindowWorkersAgree(t *testing.T) {
	t.Parallel()
	plan := loadTemplate(t, "lowpressure")
	var want [][]Point
	for _, workers := range []int{1, 2, 3} {
		last := 0
		m, err := Window(plan, WindowSpec{
			X: mustAxis(t, "temperature=960C:1080C:23"), Y: mustAxis(t, "CH4=1sccm:36sccm:17"),
			Params: DefaultParams(), Workers: workers,
			Progress: func(done, total int) {
				if done != last+1 || total != 23*17 {
					t.Errorf("%d workers: progress %d/%d after %d", workers, done, total, last)
				}
				last = done
			},
		})
		if err != nil {
			t.Fatal(err)
		}
		if last != 23*17 {
			t.Errorf("%d workers: progress ended at %d, want %d", workers, last, 23*17)
		}
		if workers == 1 {
			want = m.Points
			continue
		}
		for iy := range want {
			for ix := range want[iy] {
				if g, w := fmt.Sprintf("%#v", m.Points[iy][ix]), fmt.Sprintf("%#v", want[iy][ix]); g != w {
					t.Fatalf("%d workers, point %d, %d:\ngot  %s\nwant %s", workers, ix, iy, g, w)
				}
			}
		}
	}
}
