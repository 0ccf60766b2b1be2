package main

import (
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestInputsNotRegular: /dev/zero and a FIFO as recipe, furnace (from the
// flag and from the recipe), site, params, image, furnace log and import
// give an error naming the path within 1 s, having allocated under 100 MB
// (issue 16: /dev/zero ran out of memory, a FIFO hung). Each command runs
// in a goroutine so that a hang fails the test after 5 s instead of
// blocking it.
func TestInputsNotRegular(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	fifo := filepath.Join(l.dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	named := func(name, furnace string) string {
		data, err := os.ReadFile(l.recipe)
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(l.dir, name)
		text := strings.Replace(string(data), "furnace: furnace.yaml", "furnace: "+furnace, 1)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	names := map[string]string{"/dev/zero": named("zero.yaml", "/dev/zero"), fifo: named("fifo.yaml", fifo)}
	for _, bad := range []string{"/dev/zero", fifo} {
		what := "a character device"
		if bad == fifo {
			what = "a named pipe (FIFO)"
		}
		tests := []struct {
			name string
			args []string
		}{
			{"recipe", []string{"check", bad}},
			{"furnace flag", []string{"check", l.recipe, "--furnace", bad}},
			{"furnace in the recipe", []string{"check", names[bad]}},
			{"site", []string{"check", l.recipe, "--site", bad}},
			{"params", []string{"predict", l.recipe, "--params", bad}},
			{"image", []string{"measure", "image", bad, "--pixel", "1um"}},
			{"outcome image", []string{"--db", l.db, "outcome", "measure", l.code, "--image", bad, "--pixel", "1um"}},
			{"furnace log", []string{"--db", l.db, "run", "add", l.recipe, "--furnace-log", bad}},
			{"import", []string{"--db", l.db, "runs", "import", bad}},
		}
		for _, tt := range tests {
			t.Run(filepath.Base(bad)+"/"+tt.name, func(t *testing.T) {
				var before, after runtime.MemStats
				runtime.ReadMemStats(&before)
				start := time.Now()
				type result struct {
					code int
					errs string
				}
				done := make(chan result, 1)
				go func() {
					code, _, errs := runArgs(t, tt.args...)
					done <- result{code, errs}
				}()
				var r result
				select {
				case r = <-done:
				case <-time.After(5 * time.Second):
					t.Fatalf("foilrun %s: no answer after 5 s", strings.Join(tt.args, " "))
				}
				took := time.Since(start)
				runtime.ReadMemStats(&after)
				if took > time.Second {
					t.Errorf("took %v, want under 1 s", took)
				}
				if mb := float64(after.TotalAlloc-before.TotalAlloc) / 1e6; mb > 100 {
					t.Errorf("allocated %.0f MB, want under 100 MB", mb)
				}
				want := `"` + bad + `" is ` + what + ", not a regular file"
				if r.code != 2 || !strings.Contains(r.errs, want) || !strings.Contains(r.errs, "hint: give the path of a") {
					t.Errorf("got exit %d, %q; want exit 2, %q and a hint", r.code, r.errs, want)
				}
			})
		}
	}
}

// TestControlCharactersEscaped: escape sequences and other control
// characters in an operator's name, a lot and a note are shown escaped in
// run show, in runs list tables (aligned and piped) and CSV, and kept as
// they were in JSON (issue 16: run show printed them raw).
func TestControlCharactersEscaped(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	const operator, note, lot = "eve\x1b[2J\x1b[31m", "ring\x07 the bell\r, reversed \u202egnirts", "L\x7f-1"
	code, out, errs := runArgs(t, "--db", l.db, "run", "add", l.recipe, "--operator", operator, "--note", note, "--lot", lot)
	if code != 0 {
		t.Fatalf("run add: exit %d: %s", code, errs)
	}
	run := strings.TrimSpace(strings.SplitN(out, "\n", 2)[0])
	shown := []string{`eve\x1b[2J\x1b[31m`, `ring\x07 the bell\x0d, reversed \u202egnirts`, `L\x7f-1`}
	raw := []string{"\x1b", "\x07", "\r", "\u202e", "\x7f"}
	views := []struct {
		name string
		run  func(t *testing.T, args ...string) (int, string, string)
		args []string
		want []string
	}{
		{"run show", runCLI, []string{"--db", l.db, "run", "show", run}, shown},
		{"runs list on a terminal", runCLI, []string{"--db", l.db, "runs", "list"}, shown[0:1]},
		{"runs list piped", runPiped, []string{"--db", l.db, "runs", "list"}, []string{shown[0], shown[2]}},
		{"runs list csv", runPiped, []string{"--db", l.db, "runs", "list", "--output", "csv"}, []string{shown[0], shown[2]}},
	}
	for _, v := range views {
		t.Run(v.name, func(t *testing.T) {
			code, out, errs := v.run(t, v.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			for _, w := range v.want {
				if !strings.Contains(out, w) {
					t.Errorf("output lacks %q:\n%s", w, out)
				}
			}
			for _, c := range raw {
				if strings.Contains(out, c) {
					t.Errorf("output holds the raw character %q", c)
				}
			}
		})
	}
	code, out, errs = runPiped(t, "--db", l.db, "run", "show", run, "--output", "json")
	if code != 0 {
		t.Fatalf("run show --output json: exit %d: %s", code, errs)
	}
	for _, w := range []string{`"eve\u001b[2J\u001b[31m"`, `ring\u0007 the bell\r, reversed ` + "\u202e" + `gnirts`, `"L` + "\x7f" + `-1"`} {
		if !strings.Contains(out, w) {
			t.Errorf("JSON lacks the verbatim text %q:\n%s", w, out)
		}
	}
}

// TestWindowGridBound: a grid over --max-points is refused before any
// work, with its memory estimate; at the limit it runs. The default
// limit is 1,000 × 1,000.
func TestWindowGridBound(t *testing.T) {
	t.Parallel()
	recipe := "../../templates/recipe-lowpressure.yaml"
	vary := []string{"--vary", "temperature=950C:1000C:3", "--vary", "CH4=5sccm:10sccm:3"}
	tests := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"default limit", []string{"window", recipe, "--vary", "temperature=950C:1050C:1001", "--vary", "CH4=1sccm:40sccm:1000"}, 2,
			"window: a 1001 × 1000 grid is 1001000 points, over the limit of 1000000 (it would take about 435.3 MiB of memory)"},
		{"huge", []string{"window", recipe, "--vary", "temperature=950C:1050C:10000", "--vary", "CH4=1sccm:40sccm:10000"}, 2,
			"is 100000000 points, over the limit of 1000000 (it would take about 42.5 GiB of memory)"},
		{"over a lowered limit", append([]string{"window", recipe, "--max-points", "8"}, vary...), 2, "a 3 × 3 grid is 9 points, over the limit of 8"},
		{"at the limit", append([]string{"window", recipe, "--max-points", "9", "--output", "csv"}, vary...), 0, "feasible"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, out, errs := runArgs(t, tt.args...)
			if code != tt.code || !strings.Contains(out+errs, tt.want) {
				t.Errorf("got exit %d, %q; want exit %d and %q", code, out+errs, tt.code, tt.want)
			}
			if tt.code == 2 && !strings.Contains(errs, "--max-points") {
				t.Errorf("the refusal %q does not name --max-points", errs)
			}
		})
	}
}
