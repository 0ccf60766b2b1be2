package main

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestDemoEndToEnd builds the foilrun binary, runs `foilrun demo` in a
// fresh folder, and checks each step's heading and key figures, and that
// the files it promises exist. The walk-through itself fails the demo when
// any step's exit status differs from the expected one.
func TestDemoEndToEnd(t *testing.T) {
	dir := t.TempDir()
	bin := filepath.Join(dir, "foilrun")
	build := exec.Command("go", "build", "-o", bin, ".")
	build.Env = append(os.Environ(), "CGO_ENABLED=1")
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	lab := filepath.Join(dir, "lab")
	cmd := exec.Command(bin, "demo", lab)
	cmd.Env = append(os.Environ(), "HOME="+dir, "XDG_DATA_HOME="+filepath.Join(dir, "xdg"))
	began := time.Now()
	out, err := cmd.CombinedOutput()
	elapsed := time.Since(began)
	if err != nil {
		t.Fatalf("foilrun demo: %v\n%s", err, out)
	}
	text := string(out)
	for i := 1; i <= 13; i++ {
		if !strings.Contains(text, "\n"+strconv.Itoa(i)+". ") {
			t.Errorf("demo output lacks step %d", i)
		}
	}
	for _, want := range []string{"seeded", "0 errors", "no stop-level findings", "outcomes stored", "wrote " + filepath.Join(lab, "params-fitted.yaml"), "suggested:", "does not replace"} {
		if !strings.Contains(text, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
	if strings.Contains(strings.ToLower(text), "is safe") {
		t.Error("the demo must never call a set-up safe")
	}
	// The micrograph's measured coverage is close to what was drawn
	// (the model's prediction for the short run, about 20 %). The output
	// is piped here, so its tables are tab-separated.
	m := regexp.MustCompile(`\ncoverage\t([0-9.]+)\t`).FindStringSubmatch(text)
	if m == nil {
		t.Fatal("no measured coverage in the demo output")
	}
	if c, _ := strconv.ParseFloat(m[1], 64); c < 0.15 || c > 0.25 {
		t.Errorf("measured coverage %v, want about 0.2", c)
	}
	for _, f := range []string{"runlog.db", "checklist.md", "plots/predict.png", "plots/parity.png", "params-fitted.yaml", "lab/recipes/suggested.yaml", "images/foil-nucleation-overlay.png"} {
		if _, err := os.Stat(filepath.Join(lab, f)); err != nil {
			t.Errorf("demo file missing: %v", err)
		}
	}
	// The suggested recipe passes check, and the log holds the seeded runs
	// plus the one the walk-through logged.
	if out, err := exec.Command(bin, "check", filepath.Join(lab, "lab/recipes/suggested.yaml")).CombinedOutput(); err != nil {
		t.Errorf("check of the suggested recipe: %v\n%s", err, out)
	}
	list, err := exec.Command(bin, "--db", filepath.Join(lab, "runlog.db"), "runs", "list", "--output", "json").Output()
	if err != nil {
		t.Fatal(err)
	}
	var runs []map[string]any
	if err := json.Unmarshal(list, &runs); err != nil {
		t.Fatal(err)
	}
	if len(runs) != 61 {
		t.Errorf("run log holds %d runs, want 61 (60 seeded + 1 logged)", len(runs))
	}
	t.Logf("demo took %v", elapsed)
	if elapsed > 10*time.Second {
		t.Errorf("demo took %v, target under 10 s", elapsed)
	}
	// A second run into the same folder needs --force.
	if err := exec.Command(bin, "demo", lab).Run(); err == nil {
		t.Error("demo into a non-empty folder should refuse without --force")
	}
}
