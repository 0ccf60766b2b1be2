package recipe

import (
	"fmt"
	"testing"
)

// loadTemplatePlan loads templates/recipe-NAME.yaml with its furnace and
// derives it.
func loadTemplatePlan(t *testing.T, name string) *Plan {
	t.Helper()
	r, err := LoadRecipe("../templates/recipe-" + name + ".yaml")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	return Derive(r, f)
}

// growEdit changes the first grow step of a copied recipe.
type growEdit struct {
	name string
	edit func(s *Step)
}

// setFlow sets (or adds) one gas's flow on a step, on a fresh Flows slice.
func setFlow(s *Step, symbol string, sccm float64) {
	q := Quantity{SI: sccm * molPerSCCMSecond, Dim: Flow, Text: fmt.Sprintf("%g sccm", sccm)}
	flows := append(Flows(nil), s.Flows...)
	for i := range flows {
		if flows[i].Gas == symbol {
			flows[i].Flow = q
			s.Flows = flows
			return
		}
	}
	s.Flows = append(flows, GasFlow{Gas: symbol, Flow: q})
}

// growEdits move every grow-step parameter a window varies, inside and
// outside the template furnace's limits (templates/furnace.yaml: heater and
// tube limits, the CH4 line's full scale, the pump), so that the plans
// after the grow step and the findings change.
var growEdits = []growEdit{
	{"unchanged", func(*Step) {}},
	{"temperature 960 C", func(s *Step) { s.Temperature = Quantity{SI: 1233.15, Dim: Temperature, Text: "960 C"} }},
	{"temperature 1080 C (copper melting)", func(s *Step) { s.Temperature = Quantity{SI: 1353.15, Dim: Temperature, Text: "1080 C"} }},
	{"duration 1 min", func(s *Step) { s.Duration = Quantity{SI: 60, Dim: Duration, Text: "1 min"} }},
	{"duration 600 min (copper loss)", func(s *Step) { s.Duration = Quantity{SI: 36000, Dim: Duration, Text: "600 min"} }},
	{"pressure 1 mTorr (below the pump limit)", func(s *Step) {
		s.Pressure = PressureSetting{Setpoint: Quantity{SI: torr / 1000, Dim: Pressure, Text: "1 mTorr"}}
	}},
	{"pressure 500 Torr", func(s *Step) {
		s.Pressure = PressureSetting{Setpoint: Quantity{SI: 500 * torr, Dim: Pressure, Text: "500 Torr"}}
	}},
	{"CH4 0.2 sccm (MFC low end)", func(s *Step) { setFlow(s, "CH4", 0.2) }},
	{"CH4 80 sccm (above full scale)", func(s *Step) { setFlow(s, "CH4", 80) }},
	{"H2 0 sccm", func(s *Step) { setFlow(s, "H2", 0) }},
	{"H2 200 sccm", func(s *Step) { setFlow(s, "H2", 200) }},
}

// Derive and Check on a Prefix give exactly what Derive and Check give on
// the whole changed recipe, for every template, every prefix length up to
// the grow step and every edit of the grow step. The slow path is the
// reference. Exactly: %#v prints every float64 in its shortest form that
// reads back to the same bits (strconv 'g', −1), so equal text is equal
// values; pointers print as addresses, so the plans' Step fields must point
// at the same recipe steps too.
func TestPrefixMatchesDerive(t *testing.T) {
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		base := loadTemplatePlan(t, name)
		grow := base.Recipe.FirstStep(KindGrow)
		if grow < 0 {
			t.Fatalf("%s: no grow step", name)
		}
		for k := 0; k <= grow; k++ {
			px := NewPrefix(base, k)
			if px.Step() != k {
				t.Fatalf("%s: got prefix step %d, want %d", name, px.Step(), k)
			}
			for _, e := range growEdits {
				r := *base.Recipe
				r.Steps = append([]Step(nil), base.Recipe.Steps...)
				e.edit(&r.Steps[grow])
				want, got := Derive(&r, base.Furnace), px.Derive(&r)
				where := fmt.Sprintf("%s, prefix %d, %s", name, k, e.name)
				if g, w := fmt.Sprintf("%#v", *got), fmt.Sprintf("%#v", *want); g != w {
					t.Errorf("%s: plans differ: %s", where, firstDifference(g, w))
				}
				if g, w := fmt.Sprintf("%#v", px.Check(got)), fmt.Sprintf("%#v", Check(want)); g != w {
					t.Errorf("%s: findings differ: %s", where, firstDifference(g, w))
				}
			}
		}
	}
}

// A prefix of the whole plan copies every step: the plan and findings are
// the base's own.
func TestPrefixWholePlan(t *testing.T) {
	base := loadTemplatePlan(t, "lowpressure")
	px := NewPrefix(base, len(base.Steps))
	if g, w := fmt.Sprintf("%#v", *px.Derive(base.Recipe)), fmt.Sprintf("%#v", *base); g != w {
		t.Errorf("plans differ: %s", firstDifference(g, w))
	}
	if g, w := fmt.Sprintf("%#v", px.Check(base)), fmt.Sprintf("%#v", Check(base)); g != w {
		t.Errorf("findings differ: %s", firstDifference(g, w))
	}
}

// firstDifference shows where two printed values first differ.
func firstDifference(got, want string) string {
	i := 0
	for i < len(got) && i < len(want) && got[i] == want[i] {
		i++
	}
	from := max(0, i-120)
	return fmt.Sprintf("at byte %d:\ngot  …%.240s\nwant …%.240s", i, got[from:], want[from:])
}

// A Deriver over the prefix up to the grow step gives exactly what Derive
// and Check give (compared as in TestPrefixMatchesDerive), the first time
// a step after the grow step is seen and when it comes from the memo: every
// edit is made twice, in two rounds. An error Deriver gives the same plan
// and exactly the errors among Check's findings, in Check's order, and so
// does CheckErrors.
func TestDeriverMatchesDerive(t *testing.T) {
	for _, name := range []string{"lowpressure", "atmospheric", "largedomain"} {
		base := loadTemplatePlan(t, name)
		grow := base.Recipe.FirstStep(KindGrow)
		px := NewPrefix(base, grow)
		d, de := px.NewDeriver(), px.NewErrorDeriver()
		for round := range 2 {
			for _, e := range growEdits {
				r := *base.Recipe
				r.Steps = append([]Step(nil), base.Recipe.Steps...)
				e.edit(&r.Steps[grow])
				want := Derive(&r, base.Furnace)
				wantFs := Check(want)
				var wantErrs []Finding
				for _, fd := range wantFs {
					if fd.Severity == Error {
						wantErrs = append(wantErrs, fd)
					}
				}
				where := fmt.Sprintf("%s, round %d, %s", name, round+1, e.name)
				if g, w := fmt.Sprintf("%#v", CheckErrors(want)), fmt.Sprintf("%#v", wantErrs); g != w {
					t.Errorf("%s: CheckErrors differs from the errors of Check: %s", where, firstDifference(g, w))
				}
				for _, c := range []struct {
					deriver string
					d       *Deriver
					wantFs  []Finding
				}{{"deriver", d, wantFs}, {"error deriver", de, wantErrs}} {
					got, fs := c.d.DeriveCheck(&r)
					if g, w := fmt.Sprintf("%#v", *got), fmt.Sprintf("%#v", *want); g != w {
						t.Errorf("%s, %s: plans differ: %s", where, c.deriver, firstDifference(g, w))
					}
					if len(fs) == 0 && len(c.wantFs) == 0 {
						continue // nil and empty print differently
					}
					if g, w := fmt.Sprintf("%#v", fs), fmt.Sprintf("%#v", c.wantFs); g != w {
						t.Errorf("%s, %s: findings differ: %s", where, c.deriver, firstDifference(g, w))
					}
				}
			}
		}
		if len(d.memo) == 0 || len(de.memo) == 0 {
			t.Errorf("%s: got memos of %d and %d steps after %d recipes, want some", name, len(d.memo), len(de.memo), 2*len(growEdits))
		}
	}
}
