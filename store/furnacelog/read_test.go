package furnacelog

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/recipe"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/furnacelog")

// templateFurnace is templates/furnace.yaml up to its controller_log.
func templateFurnace(t testing.TB) string {
	t.Helper()
	data, err := os.ReadFile("../../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	i := strings.Index(s, "controller_log:")
	if i < 0 {
		t.Fatal("templates/furnace.yaml has no controller_log")
	}
	return s[:i]
}

// furnaceWith is the template furnace with the given controller_log
// block; edit rewrites the text before the block (old, new pairs).
func furnaceWith(t testing.TB, log string, edit ...string) *recipe.Furnace {
	t.Helper()
	text := strings.NewReplacer(edit...).Replace(templateFurnace(t)) + log
	f, err := recipe.ParseFurnace("furnace.yaml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestReadFormats reads logs in the layouts labs write. The expected SI
// values are arithmetic on the cells: 60 s per min, 3600 s per h, 86400 s
// per day (a 24-hour clock), K = °C + 273.15 (ITS-90 offset), 1 Torr =
// 101325/760 Pa; the Ar-calibrated CH4 line's factor is the ratio of the
// makers' tabulated factors relative to N2, CH4 0.72 and Ar 1.39 (common
// practice; another maker lists Ar 1.40, so the tolerance is 1 %).
func TestReadFormats(t *testing.T) {
	sccm := recipe.MustParse("1 sccm", recipe.Flow).SI
	tests := []struct {
		name, layout, log string
		edit              []string
		want              func(lg *Log) (got, want float64, what string)
		tol               float64
	}{
		{"elapsed minutes heading with unit in brackets", `controller_log:
  time: {column: "Time [min]", unit: min}
  temperature: {column: "T [°C]", unit: C}
`, "Time [min],T [°C]\n0,25\n1.5,26\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Time[1], 90, "time s" }, 1e-12},
		{"clock past midnight", `controller_log:
  time: {column: Time, format: clock}
  temperature: {column: TC, unit: C}
`, "Time,TC\n23:59:50,25\n00:00:10,25\n00:01:10,25\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Time[2], 80, "time s" }, 1e-12},
		{"clock with fractions of a second", `controller_log:
  time: {column: Time, format: clock}
  temperature: {column: TC, unit: C}
`, "Time,TC\n9:31:07.25,25\n09:31:09.75,25\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Time[1], 2.5, "time s" }, 1e-9},
		{"date-time over midnight", `controller_log:
  time: {column: Stamp, format: datetime}
  temperature: {column: TC, unit: C}
`, "Stamp,TC\n2026-03-05 23:59:59,25\n2026-03-06T00:00:01,25\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Time[1], 2, "time s" }, 1e-9},
		{"dotted date-time", `controller_log:
  time: {column: Stamp, format: datetime}
  temperature: {column: TC, unit: C}
`, "Stamp;TC\n28.02.2026 23:00:00;25\n01.03.2026 01:00:00;25\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Time[1], 7200, "time s" }, 1e-9},
		{"decimal comma, semicolons detected", `controller_log:
  time: {column: t, unit: s}
  temperature: {column: T, unit: C}
  decimal: comma
`, "t;T\n0;1000,5\n10;1000,5\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.T[0], 1273.65, "temperature K" }, 1e-9},
		{"tab declared", `controller_log:
  time: {column: t, unit: s}
  temperature: {column: T, unit: C}
  pressure: {column: P, unit: Torr}
  delimiter: tab
`, "t\tT\tP\n0\t25\t0.5\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.P[0], 0.5 * 101325 / 760, "pressure Pa" }, 1e-9},
		{"calibration-gas reading", `controller_log:
  time: {column: t, unit: s}
  temperature: {column: T, unit: C}
  flows:
    CH4: {column: "MFC3_CH4 [sccm Ar-eq]", unit: sccm, reading: calibration-gas}
`, "t,T,MFC3_CH4 [sccm Ar-eq]\n0,25,9.653\n", []string{"calibrated_for: N2", "calibrated_for: Ar"},
			func(lg *Log) (float64, float64, string) {
				return lg.Flows["CH4"][0] / sccm, 9.653 * 0.72 / 1.39, "CH4 sccm"
			}, 0.01},
		{"zero offset of an MFC read as 0", `controller_log:
  time: {column: t, unit: s}
  temperature: {column: T, unit: C}
  flows: {H2: {column: H2, unit: sccm}}
`, "t,T,H2\n0,25,-0.3\n", nil,
			func(lg *Log) (float64, float64, string) { return lg.Flows["H2"][0], 0, "H2 mol/s" }, 0},
		{"second thermocouple is the control one", `controller_log:
  time: {column: t, unit: s}
  temperature: [{column: TC1, unit: C, role: upstream}, {column: TC2, unit: C, role: control}]
`, "t,TC1,TC2\n0,990,1000\n", nil,
			func(lg *Log) (float64, float64, string) {
				return lg.T[0] - lg.Thermocouples[0].T[0], 10, "control − upstream K"
			}, 1e-9},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := furnaceWith(t, tt.layout, tt.edit...)
			lg, err := Read(strings.NewReader(tt.log), "log.csv", f, ReadOptions{})
			if err != nil {
				t.Fatal(err)
			}
			got, want, what := tt.want(lg)
			if math.Abs(got-want) > tt.tol*math.Max(1, math.Abs(want)) {
				t.Errorf("%s: got %.9g, want %.9g", what, got, want)
			}
		})
	}
}

// TestReadLimit: a log longer than the byte limit is refused, one of
// exactly the limit is read.
func TestReadLimit(t *testing.T) {
	f := loadPlan(t).Furnace
	log := "elapsed_s,T_zone,P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n0,25,760,0,0,0\n10,25,760,0,0,0\n"
	if _, err := Read(strings.NewReader(log), "log.csv", f, ReadOptions{MaxBytes: int64(len(log))}); err != nil {
		t.Errorf("log of exactly the limit: %v", err)
	}
	_, err := Read(strings.NewReader(log), "log.csv", f, ReadOptions{MaxBytes: int64(len(log) - 1)})
	if err == nil || !strings.Contains(err.Error(), "larger than the limit") || !errors.Is(err, recipe.ErrInvalid) {
		t.Errorf("got %v, want the log refused as larger than the limit", err)
	}
}

// TestBadLogs: each testdata/furnacelog/bad/<case>/ holds a furnace file
// and a log; the message of the first step that refuses them (loading the
// furnace, reading the log, matching it to templates/recipe-lowpressure.yaml)
// is pinned in want.txt. Rewrite with go test ./store/furnacelog -update.
func TestBadLogs(t *testing.T) {
	dirs, err := filepath.Glob("../../testdata/furnacelog/bad/*")
	if err != nil || len(dirs) == 0 {
		t.Fatalf("no bad cases: %v", err)
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			got := badLogMessage(t, dir)
			wantFile := filepath.Join(dir, "want.txt")
			if *update {
				if err := os.WriteFile(wantFile, []byte(got+"\n"), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(wantFile)
			if err != nil {
				t.Fatal(err)
			}
			if got+"\n" != string(want) {
				t.Errorf("got\n%s\nwant\n%s", got, want)
			}
		})
	}
}

func badLogMessage(t *testing.T, dir string) string {
	t.Helper()
	rel := "furnacelog/bad/" + filepath.Base(dir) + "/"
	data, err := os.ReadFile(filepath.Join(dir, "furnace.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	f, err := recipe.ParseFurnace(rel+"furnace.yaml", data)
	if err != nil {
		return message(err)
	}
	fh, err := os.Open(filepath.Join(dir, "log.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	lg, err := Read(fh, rel+"log.csv", f, ReadOptions{})
	if err != nil {
		return message(err)
	}
	r, err := recipe.LoadRecipe("../../templates/recipe-lowpressure.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Match(recipe.Derive(r, f), lg, MatchOptions{}); err != nil {
		return message(err)
	}
	t.Fatalf("%s: furnace, log and match all succeeded; a bad case must fail", dir)
	return ""
}

// message is the error and its hint line, as the command line prints them.
func message(err error) string {
	var h interface{ Hint() string }
	if errors.As(err, &h) && h.Hint() != "" {
		return err.Error() + "\n  hint: " + h.Hint()
	}
	return err.Error()
}

// millionRows is a six-column log of n rows, one every second.
func millionRows(n int) string {
	var b strings.Builder
	b.Grow(n * 40)
	b.WriteString("elapsed_s,T_zone [C],P_tube,MFC1_Ar,MFC2_H2,MFC3_CH4\n")
	for i := range n {
		fmt.Fprintf(&b, "%d,%.2f,%.4f,%d,%.1f,%.2f\n", i, 25+float64(i%1000)*0.975, 0.5+float64(i%7)*0.001, i%500, 20.0, float64(i%35))
	}
	return b.String()
}

// BenchmarkRead1M reads a 1,000,000-row log (about 40 MB); the issue asks
// for under 3 s.
func BenchmarkRead1M(b *testing.B) {
	f := loadPlan(b).Furnace
	text := millionRows(1_000_000)
	b.SetBytes(int64(len(text)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		lg, err := Read(strings.NewReader(text), "big.csv", f, ReadOptions{})
		if err != nil {
			b.Fatal(err)
		}
		if len(lg.Time) != 1_000_000 {
			b.Fatalf("read %d rows, want 1000000", len(lg.Time))
		}
	}
}

// TestReadmeExample keeps README's controller-log example real: its
// mapping loads on the template furnace with the CH4 line calibrated for
// Ar, and its log reads with the clock rolled past midnight (23:59:50 to
// 00:00:10 is 20 s) and 9,65 sccm Ar-equivalent as 9.65 × 0.72/1.39 =
// 5.0 sccm of CH4 (makers' factor tables, common practice; ±1 %).
func TestReadmeExample(t *testing.T) {
	data, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	_, section, ok := strings.Cut(string(data), "### Controller logs")
	if !ok {
		t.Fatal(`README.md has no "### Controller logs" section`)
	}
	block := func(fence string) string {
		_, rest, ok := strings.Cut(section, "```"+fence+"\n")
		body, _, ok2 := strings.Cut(rest, "```")
		if !ok || !ok2 {
			t.Fatalf("no ```%s block in README's controller-log section", fence)
		}
		return body
	}
	f := furnaceWith(t, block("yaml"), "calibrated_for: N2", "calibrated_for: Ar")
	lg, err := Read(strings.NewReader(block("csv")), "README.md", f, ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	ch4 := lg.Flows["CH4"][0] / recipe.MustParse("1 sccm", recipe.Flow).SI
	if got := lg.Time[len(lg.Time)-1]; got != 20 || math.Abs(ch4-5) > 0.05 || len(lg.Thermocouples) != 1 {
		t.Errorf("got last time %g s, CH4 %.4g sccm, %d other thermocouples; want 20 s, 5 sccm ± 1 %%, 1", got, ch4, len(lg.Thermocouples))
	}
}

// FuzzParseClock: never panics; a clock time read back from its own
// HH:MM:SS.fff writing is the same number of seconds.
func FuzzParseClock(f *testing.F) {
	for _, s := range []string{"09:31:07", "9:31", "23:59:59.999", "24:00:00", "12:60", "1:2:3", "", "::", "00:00:00,5"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		sod, ok := parseClock(s, strings.Contains(s, ","))
		if !ok {
			return
		}
		if sod < 0 || sod >= secondsPerDay {
			t.Fatalf("%q read as %g s, outside one day", s, sod)
		}
		whole := math.Floor(sod)
		back := fmt.Sprintf("%02d:%02d:%02d%s", int(whole)/3600, int(whole)%3600/60, int(whole)%60,
			strings.TrimPrefix(strconv.FormatFloat(sod-whole, 'f', -1, 64), "0"))
		again, ok := parseClock(back, false)
		if !ok || math.Abs(again-sod) > 1e-9 {
			t.Fatalf("%q read as %g s, written %q, read back %g s (ok %v)", s, sod, back, again, ok)
		}
	})
}

// FuzzReadLayouts: Read on a furnace with clock time, decimal comma and
// two thermocouples never panics, and what it reads has time rising from
// 0, every temperature above 0 K and no negative flow.
func FuzzReadLayouts(f *testing.F) {
	furnace := furnaceWith(f, `controller_log:
  time: {column: Time, format: clock}
  temperature: [{column: TC1, unit: C, role: control}, {column: TC2, unit: C}]
  flows: {H2: {column: H2, unit: sccm}}
  decimal: comma
`)
	f.Add("Time;TC1;TC2;H2\n23:59:50;1000,5;990;20\n00:00:10;1000;991,5;-0,2\n")
	f.Add("Time\tTC1\tTC2\tH2\n10:00\t25\t25\t0\n")
	f.Fuzz(func(t *testing.T, in string) {
		lg, err := Read(strings.NewReader(in), "fuzz.csv", furnace, ReadOptions{MaxBytes: 1 << 16})
		if err != nil {
			return
		}
		for i := range lg.Time {
			if i == 0 && lg.Time[0] != 0 || i > 0 && !(lg.Time[i] > lg.Time[i-1]) {
				t.Fatalf("time %v not rising from 0", lg.Time)
			}
			if !(lg.T[i] > 0) || !(lg.Thermocouples[0].T[i] > 0) || lg.Flows["H2"][i] < 0 {
				t.Fatalf("row %d: T %g, TC2 %g, H2 %g", i, lg.T[i], lg.Thermocouples[0].T[i], lg.Flows["H2"][i])
			}
		}
	})
}
