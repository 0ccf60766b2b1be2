package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/kinetics"
)

// snapLab lays out a lab folder with the template furnace (as name, at
// file) and logs n runs of the low-pressure template on it with run add
// (outcomes with it): grow step at 960–1060 °C, CH4 5–35 sccm, H2 10–90
// sccm, 0.3–3.3 min (seeded), outcomes the model's prediction with
// DefaultParams, without noise (the tests compare fits, not statistics).
func snapLab(t *testing.T, dir, db, furnace, name string, seed uint64, n int) {
	t.Helper()
	fb, err := os.ReadFile("../../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	ftext := strings.Replace(string(fb), "name: tube-1", "name: "+name, 1)
	if err := os.WriteFile(filepath.Join(dir, furnace), []byte(ftext), 0o644); err != nil {
		t.Fatal(err)
	}
	copyTemplates(t, dir, "site.yaml")
	tmpl, err := os.ReadFile("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 3))
	for i := range n {
		T, ch4, h2, minutes := 960+100*rng.Float64(), 5+30*rng.Float64(), 10+80*rng.Float64(), 0.3+3*rng.Float64()
		text := strings.Replace(string(tmpl), "    temperature: 1000 C\n    duration: 15 min\n    flows: {H2: 20 sccm, CH4: 35 sccm}",
			fmt.Sprintf("    temperature: %.1f C\n    duration: %.2f min\n    flows: {H2: %.1f sccm, CH4: %.1f sccm}", T, minutes, h2, ch4), 1)
		text = strings.Replace(text, "furnace: furnace.yaml", "furnace: "+furnace, 1)
		path := filepath.Join(dir, fmt.Sprintf("%s-r%02d.yaml", name, i))
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		plan, _, err := (&recipeFlags{}).loadPlan(path)
		if err != nil {
			t.Fatal(err)
		}
		res, err := kinetics.Predict(plan, kinetics.DefaultParams(), kinetics.Options{})
		if err != nil {
			t.Fatal(err)
		}
		code, out, errs := runArgs(t, "--db", db, "run", "add", path, "--outcome", fmt.Sprintf("coverage=%.12g", res.Coverage),
			"--outcome", fmt.Sprintf("nuclei_density=%.12g/mm2", res.NucleiDensity*1e-6))
		if code != 0 {
			t.Fatalf("run add %s: exit %d, %s %s", path, code, out, errs)
		}
	}
}

// halvePump halves the pump speed of a furnace file written by snapLab
// (the template's 5.5 m3/h).
func halvePump(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := strings.Replace(string(b), "pump_speed: 5.5 m3/h", "pump_speed: 2.75 m3/h", 1)
	if s == string(b) {
		t.Fatal("template furnace has no 'pump_speed: 5.5 m3/h' line")
	}
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
}

func fitEstimates(t *testing.T, args ...string) (map[string]float64, string) {
	t.Helper()
	code, out, errs := runArgs(t, append(args, "fit", "--output", "json", "--fix", "b=0.5")...)
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, errs)
	}
	var res fitResultJSON
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	got := map[string]float64{}
	for _, e := range res.Estimates {
		if e.Value != nil { // a parameter the data cannot identify has none
			got[e.Short] = *e.Value
		}
	}
	return got, errs
}

func sameEstimates(t *testing.T, what string, got, want map[string]float64) {
	t.Helper()
	for k, w := range want {
		if g := got[k]; math.Abs(g-w) > 1e-9*math.Abs(w) {
			t.Errorf("%s: %s got %.12g, want %.12g (the logged furnace, unchanged)", what, k, g, w)
		}
	}
}

// A run keeps its furnace: after the furnace file's pump speed is halved,
// fit and run show still read the furnace the runs were logged with; the
// log alone, in another folder with the lab's files gone, fits the same;
// --furnace overrides and says so.
func TestFurnaceSnapshotKept(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "runs.db")
	snapLab(t, dir, db, "furnace.yaml", "tube-1", 7, 14)
	before, errs := fitEstimates(t, "--db", db)
	if !strings.Contains(errs, `furnace "tube-1" from snapshot `) || strings.Contains(errs, "note:") {
		t.Errorf("fit status: got %q, want the furnace from its snapshot and no note", errs)
	}
	_, show1, _ := runArgs(t, "--db", db, "run", "show", "G26-0001")
	halvePump(t, filepath.Join(dir, "furnace.yaml"))

	after, _ := fitEstimates(t, "--db", db)
	sameEstimates(t, "fit after the pump change", after, before)
	_, show2, _ := runArgs(t, "--db", db, "run", "show", "G26-0001")
	if show2 != show1 {
		t.Errorf("run show after the pump change:\n%s\nwant as before:\n%s", show2, show1)
	}

	// the override reads the edited file: the pump, open in the grow step,
	// now holds a higher pressure, so the plan and the fit change
	code, show3, errs := runArgs(t, "--db", db, "run", "show", "G26-0001", "--furnace", filepath.Join(dir, "furnace.yaml"))
	if code != 0 || show3 == show1 || !strings.Contains(errs, "overrides the furnace each run was logged with") {
		t.Errorf("run show --furnace (pump halved): exit %d, stderr %q; want a different plan and the override said", code, errs)
	}
	over, _ := fitEstimates(t, "--db", db, "--furnace", filepath.Join(dir, "furnace.yaml"))
	if math.Abs(over["En"]-before["En"]) < 1e-6 && math.Abs(over["Eg"]-before["Eg"]) < 1e-6 {
		t.Errorf("fit --furnace (pump halved): got En %g Eg %g, the same as on the logged furnace; want the override used", over["En"], over["Eg"])
	}

	// the log alone, elsewhere, with the lab's folder gone
	other := t.TempDir()
	moved := filepath.Join(other, "runs.db")
	if err := os.Rename(db, moved); err != nil {
		t.Fatal(err)
	}
	if err := os.RemoveAll(dir); err != nil {
		t.Fatal(err)
	}
	t.Chdir(other)
	away, _ := fitEstimates(t, "--db", "runs.db")
	sameEstimates(t, "fit from another folder", away, before)
}

// Two furnaces, one fit: runs logged on tube-1 and tube-2 (each its own
// furnace file) fit together, each on its own snapshot.
func TestFurnaceSnapshotTwoFurnaces(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	db := filepath.Join(dir, "runs.db")
	snapLab(t, dir, db, "furnace.yaml", "tube-1", 7, 8)
	snapLab(t, dir, db, "furnace-2.yaml", "tube-2", 8, 8)
	halvePump(t, filepath.Join(dir, "furnace-2.yaml")) // after logging: must not matter
	got, errs := fitEstimates(t, "--db", db)
	for _, name := range []string{"tube-1", "tube-2"} {
		if !strings.Contains(errs, fmt.Sprintf("furnace %q from snapshot ", name)) || !strings.Contains(errs, "for 8 runs") {
			t.Errorf("fit status: got %q, want %s from its snapshot for 8 runs", errs, name)
		}
	}
	// with both furnace files gone the fit is the same: each run's plan
	// came from its own snapshot
	for _, f := range []string{"furnace.yaml", "furnace-2.yaml"} {
		if err := os.Remove(filepath.Join(dir, f)); err != nil {
			t.Fatal(err)
		}
	}
	gone, _ := fitEstimates(t, "--db", db)
	sameEstimates(t, "two-furnace fit with the furnace files gone", gone, got)
}
