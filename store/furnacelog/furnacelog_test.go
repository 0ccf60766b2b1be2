package furnacelog

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

// editedPlan derives, on furnace f, a copy of p's recipe whose step
// (0-based) edit has changed.
func editedPlan(p *recipe.Plan, f *recipe.Furnace, step int, edit func(*recipe.Step)) *recipe.Plan {
	r := *p.Recipe
	r.Steps = append([]recipe.Step(nil), p.Recipe.Steps...)
	edit(&r.Steps[step])
	return recipe.Derive(&r, f)
}

func loadPlan(t testing.TB) *recipe.Plan {
	t.Helper()
	r, err := recipe.LoadRecipe("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	f, _, err := recipe.Resolve(r, "", "")
	if err != nil {
		t.Fatal(err)
	}
	return recipe.Derive(r, f)
}

// synth writes a controller log (the column layout of
// templates/furnace.yaml: elapsed_s, T_zone in C, P_tube in Torr, flows
// in sccm) that follows the plan every 10 s; change may alter each
// sample (step index, time into step) and stretch each step's duration.
func synth(p *recipe.Plan, stretch map[int]float64, change func(step int, into float64, T, P *float64, flows map[string]float64), stopAt float64) string {
	var b strings.Builder
	b.WriteString("elapsed_s,T_zone [C],P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n")
	t := 0.0
	for j, sp := range p.Steps {
		dur := sp.Duration
		if s, ok := stretch[j]; ok {
			dur *= s
		}
		for into := 0.0; into < dur; into += 10 {
			if stopAt > 0 && t >= stopAt {
				return b.String()
			}
			T := sp.T0 + (sp.T1-sp.T0)*into/dur
			P := sp.Pressure
			fl := map[string]float64{}
			for _, f := range sp.Flows {
				fl[f.Gas.Symbol] = f.SCCM
			}
			if change != nil {
				change(j, into, &T, &P, fl)
			}
			fmt.Fprintf(&b, "%g,%.3f,%.6g,%g,%g,%g\n", t, recipe.Celsius(T), P/(101325.0/760), fl["Ar"], fl["H2"], fl["CH4"])
			t += 10
		}
	}
	return b.String()
}

func matchText(t *testing.T, p *recipe.Plan, csv string) Result {
	t.Helper()
	lg, err := Read(strings.NewReader(csv), "log.csv", p.Furnace, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Match(p, lg, MatchOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func devs(r Result) []string {
	var out []string
	for _, d := range r.Deviations {
		out = append(out, fmt.Sprintf("%d %s", d.Step, d.Quantity))
	}
	return out
}

// The synthetic logs differ from the plan by amounts chosen beyond or
// within the tolerance constants; the steps are those of the template
// (5 anneal, 6 grow).
func TestMatch(t *testing.T) {
	p := loadPlan(t)
	grow, anneal := 5, 4
	tests := []struct {
		name    string
		stretch map[int]float64
		change  func(int, float64, *float64, *float64, map[string]float64)
		stop    float64
		want    string
	}{
		{"as planned", nil, nil, 0, ""},
		{"long anneal", map[int]float64{anneal: 1.3}, nil, 0, "5 duration"},
		{"slightly long growth", map[int]float64{grow: 1.05}, nil, 0, ""},
		{"overshoot", nil, func(j int, into float64, T, P *float64, fl map[string]float64) {
			if j == grow && into > 300 && into < 400 {
				*T += 15
			}
		}, 0, "6 temperature"},
		{"small wobble", nil, func(j int, into float64, T, P *float64, fl map[string]float64) {
			if j == grow {
				*T += 5 * math.Sin(into/60)
			}
		}, 0, ""},
		{"low methane", nil, func(j int, into float64, T, P *float64, fl map[string]float64) {
			if j == grow {
				fl["CH4"] *= 0.9
			}
		}, 0, "6 flow:CH4"},
		{"methane leak in cool", nil, func(j int, into float64, T, P *float64, fl map[string]float64) {
			if j == grow+1 {
				fl["CH4"] = 2
			}
		}, 0, "7 flow:CH4"},
		{"aborted in growth", nil, nil, p.Steps[grow].Start + 200, "7 reached"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := matchText(t, p, synth(p, tt.stretch, tt.change, tt.stop))
			if got := strings.Join(devs(r), ", "); got != tt.want {
				t.Errorf("deviations %q, want %q\n%+v", got, tt.want, r.Deviations)
			}
		})
	}
	// a stretched anneal moves the growth start; the growth is found where
	// the methane comes on
	r := matchText(t, p, synth(p, map[int]float64{anneal: 1.3}, nil, 0))
	wantStart := 0.0 // synth writes whole 10 s samples per step
	for j := 0; j < grow; j++ {
		d := p.Steps[j].Duration
		if j == anneal {
			d *= 1.3
		}
		wantStart += math.Ceil(d/10) * 10
	}
	for _, a := range r.Actuals {
		if a.Step == grow+1 && a.Quantity == "start" && math.Abs(a.Mean-wantStart) > 10 {
			t.Errorf("growth starts at %g s, want %g s ± 10 s (one sample)", a.Mean, wantStart)
		}
	}
}

func TestReadErrors(t *testing.T) {
	furnace := loadPlan(t).Furnace
	head := "elapsed_s,T_zone,P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n"
	tests := []struct{ name, in, want string }{
		{"empty", "", `furnace log "log.csv": the file is empty`},
		{"header only", head, "line 1: the log has a heading line but no rows"},
		{"missing column", "elapsed_s,T_zone,P_tube,MFC1_Ar,MFC2_H2\n0,25,760,0,0\n", `line 1: no column "MFC3_CH4" (the flow CH4 column`},
		{"unit mismatch", "elapsed_s,T_zone [K],P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n0,298,760,0,0,0\n", `line 1 col 2: column "T_zone" is in K, the furnace file's controller_log says C`},
		{"non-numeric", head + "0,25,760,0,0,0\n10,hot,760,0,0,0\n", `line 3 col 2: temperature "T_zone": "hot" is not a number`},
		{"non-monotonic", head + "0,25,760,0,0,0\n10,25,760,0,0,0\n5,25,760,0,0,0\n", `line 4 col 1: time 5 s is not after the previous row's 10 s`},
		{"repeated time", head + "0,25,760,0,0,0\n0,25,760,0,0,0\n", `line 3 col 1: time 0 s is not after`},
		{"short row", head + "0,25,760\n", "line 2: 3 cells, the heading line has 6"},
		{"bad quote", head + "0,\"25,760,0,0,0\n", "line 2"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(tt.in), "log.csv", furnace, ReadOptions{})
			if err == nil || !strings.Contains(err.Error(), tt.want) || !errors.Is(err, recipe.ErrInvalid) {
				t.Errorf("got %v, want error containing %q", err, tt.want)
			}
		})
	}
	if _, err := Read(strings.NewReader(head), "log.csv", nil, ReadOptions{}); err == nil || !strings.Contains(err.Error(), "no controller_log") {
		t.Errorf("nil layout: %v", err)
	}
}

func TestReadUnits(t *testing.T) {
	furnace := loadPlan(t).Furnace
	// semicolon-separated, comment line, units in brackets that agree
	lg, err := Read(strings.NewReader("# exported\nelapsed_s (s);T_zone [C];P_tube [Torr];MFC1_Ar;MFC2_H2;MFC3_CH4\n100;1000;0.5;0;20;35\n110;1001;0.5;0;20;35\n"), "log.csv", furnace, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// 1000 C = 1273.15 K (ITS-90 offset); 0.5 Torr = 0.5·101325/760 Pa; time re-based to the first row
	if lg.Time[1] != 10 || math.Abs(lg.T[0]-1273.15) > 1e-9 || math.Abs(lg.P[0]-0.5*101325/760) > 1e-9 {
		t.Errorf("got t %v T %v P %v", lg.Time, lg.T, lg.P)
	}
	if want := recipe.MustParse("35 sccm", recipe.Flow).SI; math.Abs(lg.Flows["CH4"][0]-want) > 1e-15 {
		t.Errorf("CH4 %g mol/s, want %g", lg.Flows["CH4"][0], want)
	}
}

// FuzzRead: never panics; what reads has increasing time from 0 and
// finite values.
func FuzzRead(f *testing.F) {
	furnace := loadPlan(f).Furnace
	f.Add("elapsed_s,T_zone,P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n0,25,760,0,0,0\n10,26,760,0,1,0\n")
	f.Add("elapsed_s;T_zone [C];P_tube;MFC1_Ar;MFC2_H2;MFC3_CH4\n0;25;1;2;3;4\n")
	f.Add("")
	f.Fuzz(func(t *testing.T, in string) {
		lg, err := Read(strings.NewReader(in), "fuzz.csv", furnace, ReadOptions{})
		if err != nil {
			return
		}
		if lg.Time[0] != 0 {
			t.Fatalf("first time %g", lg.Time[0])
		}
		for i := 1; i < len(lg.Time); i++ {
			if !(lg.Time[i] > lg.Time[i-1]) {
				t.Fatalf("time not increasing at %d", i)
			}
		}
		for _, v := range lg.T {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatal("non-finite temperature")
			}
		}
	})
}

func BenchmarkMatch(b *testing.B) {
	p := loadPlan(b)
	lg, err := Read(strings.NewReader(synth(p, nil, nil, 0)), "log.csv", p.Furnace, ReadOptions{})
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Match(p, lg, MatchOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestMatchShortStepWithNoise: a 2-minute grow step between a long anneal
// and a long cool, with thermocouple noise of ±1 K (well inside the 10 K
// tolerance). The boundaries must stay where the methane comes on and
// goes off; before the fix a short step was charged for the samples of
// the cool after it, and noise pulled the ramp's end into the anneal.
func TestMatchShortStepWithNoise(t *testing.T) {
	p := loadPlan(t)
	const grow = 5
	// Shorten the grow step to 2 minutes in a copy of the plan.
	short := editedPlan(p, p.Furnace, grow, func(s *recipe.Step) { s.Duration = recipe.MustParse("2 min", recipe.Duration) })
	k := 0
	noise := func(j int, into float64, T, P *float64, fl map[string]float64) {
		k++
		*T += math.Sin(float64(k) * 1.7) // deterministic ±1 K
	}
	res := matchText(t, short, synth(short, nil, noise, 0))
	if got := strings.Join(devs(res), ", "); got != "" {
		t.Errorf("deviations %q, want none\n%+v", got, res.Deviations)
	}
	for _, a := range res.Actuals {
		if a.Step == grow+1 && a.Quantity == "duration" && math.Abs(a.Mean-120) > 10 {
			t.Errorf("grow step lasted %g s in the log, want 120 s ± one sample", a.Mean)
		}
	}
}
