package runfig

import (
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

var update = flag.Bool("update", false, "rewrite the controller log, furnace and recipe under testdata/furnacelog/run")

// dir holds a furnace file, a recipe and the controller's log of one run
// of it: the demo lab's short run (demolab.WriteShortRun: 10 s samples,
// 1 K thermocouple noise, 1 % pressure noise, CH4 8 % low), rewritten with
// go test -update.
const dir = "../../../../testdata/furnacelog/run"

func files(t *testing.T) (furnace, recipeFile, logFile string) {
	t.Helper()
	furnace, recipeFile, logFile = filepath.Join(dir, "tube-a.yaml"), filepath.Join(dir, "recipe.yaml"), filepath.Join(dir, "tube-a-run.csv")
	if !*update {
		return furnace, recipeFile, logFile
	}
	paths, err := demolab.Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	sr, err := demolab.WriteShortRun(paths)
	if err != nil {
		t.Fatal(err)
	}
	for from, to := range map[string]string{paths.FurnaceA: furnace, sr.Recipe: recipeFile, sr.FurnaceLog: logFile} {
		data, err := os.ReadFile(from)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(to, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return furnace, recipeFile, logFile
}

// logRun logs a finished run of the testdata recipe on the testdata
// furnace (both as snapshots) with the controller log at logPath attached
// under the hash sum, and returns its record.
func logRun(t *testing.T, l store.RunLog, logPath, sum string) store.RunRecord {
	t.Helper()
	furnacePath, recipePath, _ := files(t)
	f, err := recipe.LoadFurnace(furnacePath)
	if err != nil {
		t.Fatal(err)
	}
	text, err := os.ReadFile(recipePath)
	if err != nil {
		t.Fatal(err)
	}
	rs := store.NewSnapshot("lowpressure-nucleation", recipePath, text)
	fs := store.NewFileSnapshot(store.SnapshotFurnace, f.Name, furnacePath, f.Content)
	t0 := time.Date(2026, 10, 1, 9, 0, 0, 0, time.UTC)
	rec := store.RunRecord{Run: store.Run{Status: store.Done, RecipeName: "lowpressure-nucleation", Furnace: f.Name, Started: t0, Ended: t0.Add(3 * time.Hour)}}
	if logPath != "" {
		rec.Attachments = []store.Attachment{{Path: logPath, SHA256: sum, Kind: KindFurnaceLog, Added: t0}}
	}
	code, err := l.CreateRun(context.Background(), rec, &rs, &fs)
	if err != nil {
		t.Fatal(err)
	}
	got, err := l.Record(context.Background(), code)
	if err != nil {
		t.Fatal(err)
	}
	return got
}

func openLog(t *testing.T) store.RunLog {
	t.Helper()
	l, err := sqlite.Open(context.Background(), filepath.Join(t.TempDir(), "runs.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { l.Close() })
	return l
}

func hashOf(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := sha256.Sum256(data)
	return hex.EncodeToString(s[:])
}

// column reads one column of the controller CSV as numbers, independently
// of store/furnacelog.
func column(t *testing.T, path, name string) []float64 {
	t.Helper()
	fh, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	rows, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	at := -1
	for i, h := range rows[0] {
		if h == name {
			at = i
		}
	}
	if at < 0 {
		t.Fatalf("%s has no column %q", path, name)
	}
	var out []float64
	for _, r := range rows[1:] {
		v, err := strconv.ParseFloat(r[at], 64)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, v)
	}
	return out
}

func series(t *testing.T, r chart.Row, name string) chart.Series {
	t.Helper()
	for _, s := range r.Series {
		if s.Name == name {
			return s
		}
	}
	t.Fatalf("row %q has no series %q", r.YLabel, name)
	return chart.Series{}
}

// TestLoggedSeriesAreTheFile: every logged series holds the file's values
// in the row's unit: °C as written, Torr × 101325/760 Pa (the definition
// of the torr, 1 atm = 760 Torr = 101325 Pa exactly), sccm as written
// (the demo lines are calibrated for their own gas, so no correction
// factor applies); times keep the file's spacing, in minutes.
func TestLoggedSeriesAreTheFile(t *testing.T) {
	_, _, logPath := files(t)
	abs, err := filepath.Abs(logPath)
	if err != nil {
		t.Fatal(err)
	}
	l := openLog(t)
	fig, notes, err := PlanFigure(context.Background(), l, logRun(t, l, abs, hashOf(t, logPath)))
	if err != nil {
		t.Fatal(err)
	}
	if len(notes) != 0 {
		t.Errorf("got notes %q, want none", notes)
	}
	labels := []string{"temperature (°C)", "pressure (Pa)", "Ar flow (sccm)", "H2 flow (sccm)", "CH4 flow (sccm)"}
	var got []string
	for _, r := range fig.Rows {
		got = append(got, r.YLabel)
	}
	if strings.Join(got, "|") != strings.Join(labels, "|") {
		t.Fatalf("got rows %q, want %q", got, labels)
	}
	elapsed := column(t, logPath, "elapsed_s")
	checks := []struct {
		row, col string
		scale    float64
	}{
		{"temperature (°C)", "T_zone", 1},
		{"pressure (Pa)", "P_tube", 101325.0 / 760},
		{"Ar flow (sccm)", "MFC1_Ar", 1},
		{"H2 flow (sccm)", "MFC2_H2", 1},
		{"CH4 flow (sccm)", "MFC3_CH4", 1},
	}
	for i, c := range checks {
		t.Run(c.col, func(t *testing.T) {
			s := series(t, fig.Rows[i], LoggedSeries)
			want := column(t, logPath, c.col)
			if len(s.Y) != len(want) {
				t.Fatalf("got %d points, want the file's %d rows", len(s.Y), len(want))
			}
			for k := range want {
				// Tolerance: 1e-9 relative, the round trip through SI
				// (recipe's unit table) in float64.
				if w := want[k] * c.scale; math.Abs(s.Y[k]-w) > 1e-9*math.Max(1, math.Abs(w)) {
					t.Fatalf("row %d (line %d): got %g, want %g", k, k+2, s.Y[k], w)
				}
				if d, w := s.X[k]-s.X[0], (elapsed[k]-elapsed[0])/60; math.Abs(d-w) > 1e-9 {
					t.Fatalf("row %d: got %g min after the first sample, want %g", k, d, w)
				}
			}
		})
	}
	// The plan row: the grow step holds 1000 °C (demolab.WriteShortRun's
	// recipe) and CH4 flows NucleationCH4 sccm only in the grow step.
	plan := series(t, fig.Rows[0], PlanSeries)
	ch4 := series(t, fig.Rows[4], PlanSeries)
	grows := 0
	for k, st := range fig.Steps {
		if !st.Carbon {
			continue
		}
		grows++
		// Tolerance 1e-9: °C → K → °C in float64.
		if math.Abs(plan.Y[2*k]-1000) > 1e-9 || math.Abs(ch4.Y[2*k]-demolab.NucleationCH4) > 1e-9 {
			t.Errorf("step %s: got %g °C and %g sccm CH4 planned, want 1000 and %d", st.Name, plan.Y[2*k], ch4.Y[2*k], demolab.NucleationCH4)
		}
	}
	if grows != 1 {
		t.Errorf("got %d steps with methane, want the one grow step", grows)
	}
}

// TestNotes: what cannot be drawn is said, and the plan is drawn alone.
func TestNotes(t *testing.T) {
	_, _, logPath := files(t)
	data, err := os.ReadFile(logPath)
	if err != nil {
		t.Fatal(err)
	}
	changed := filepath.Join(t.TempDir(), "changed.csv")
	if err := os.WriteFile(changed, data, 0o644); err != nil {
		t.Fatal(err)
	}
	sum := hashOf(t, changed)
	if err := os.WriteFile(changed, append(data, []byte("99999,20,1,0,0,0\n")...), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name, path, sum, want string
	}{
		{"no attachment", "", "", "no controller log is attached to the run"},
		{"file gone", filepath.Join(t.TempDir(), "gone.csv"), sum, "gone.csv is no longer there"},
		{"file changed", changed, sum, "has changed since it was logged (sha256 "},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l := openLog(t)
			fig, notes, err := PlanFigure(context.Background(), l, logRun(t, l, tc.path, tc.sum))
			if err != nil {
				t.Fatal(err)
			}
			if len(notes) != 1 || !strings.Contains(notes[0], tc.want) {
				t.Errorf("got notes %q, want one containing %q", notes, tc.want)
			}
			for _, r := range fig.Rows {
				if len(r.Series) != 1 || r.Series[0].Name != PlanSeries {
					t.Errorf("row %q: got %d series, want the plan alone", r.YLabel, len(r.Series))
				}
			}
		})
	}
	if _, _, err := PlanFigure(context.Background(), openLog(t), store.RunRecord{Run: store.Run{Code: "X-1"}}); err == nil || !strings.Contains(err.Error(), "run X-1: logged without a recipe snapshot") {
		t.Errorf("a run without a recipe snapshot: got %v, want an error naming it", err)
	}
}

func TestThin(t *testing.T) {
	tests := []struct {
		name   string
		n, max int
		want   string
	}{
		{"short: all", 4, 10, "0 1 2 3"},
		{"exactly max", 5, 5, "0 1 2 3 4"},
		{"every 3rd and the last", 10, 4, "0 3 6 9"},
		{"last added", 11, 4, "0 4 8 10"},
		{"empty", 0, 4, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got []string
			for _, i := range Thin(tc.n, tc.max) {
				got = append(got, strconv.Itoa(i))
			}
			if g := strings.Join(got, " "); g != tc.want || len(got) > max(tc.max, 2) {
				t.Errorf("Thin(%d, %d): got %q, want %q", tc.n, tc.max, g, tc.want)
			}
		})
	}
}
