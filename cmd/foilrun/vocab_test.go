package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"
)

// TestOldSpellingsRefused runs each word foilrun used to accept through the
// real command line: exit status 2 and a message naming the word to use
// (issue 12, "one vocabulary").
//
// The suggest cases depend on the kinetics package refusing its old
// spellings (kinetics.ParseTarget and the --vary list); they fail until
// that change is merged. fit --metric is parsed in fit.go and is not
// covered here.
func TestOldSpellingsRefused(t *testing.T) {
	db := "--db=" + filepath.Join(t.TempDir(), "log.db")
	window := []string{"window", lowPressure, "--vary", "temperature=960C:1040C:3", "--vary", "CH4=5sccm:35sccm:2"}
	tests := []struct {
		name string
		args []string
		want string // in stderr
	}{
		{"window --show density", append(window, "--show", "density"), "nuclei_density"},
		{"window --show domain-size", append(window, "--show", "domain-size"), "domain_size"},
		{"window --show size", append(window, "--show", "size"), "domain_size"},
		{"window --show time-to-99", append(window, "--show", "time-to-99"), "time_to_99"},
		{"window --vary time", []string{"window", lowPressure, "--vary", "time=1min:5min:3", "--vary", "CH4=5sccm:35sccm:2"}, "duration"},
		{"runs best --metric nuclei-density", []string{db, "runs", "best", "--metric", "nuclei-density", "--by", "growth_temperature_c"}, "nuclei_density"},
		{"runs best --metric density", []string{db, "runs", "best", "--metric", "density", "--by", "growth_temperature_c"}, "nuclei_density"},
		{"runs rank --metric domain-size", []string{db, "runs", "rank", "--metric", "domain-size"}, "domain_size"},
		// Until the kinetics vocabulary change is merged:
		{"suggest --vary time", []string{"suggest", lowPressure, "--target", "coverage>=0.9", "--vary", "temperature,CH4,time"}, "duration"},
		{"suggest --target domain-size", []string{"suggest", lowPressure, "--target", "domain-size>=5um"}, "domain_size"},
		{"suggest --target nuclei-density", []string{"suggest", lowPressure, "--target", "nuclei-density<=100/mm2"}, "nuclei_density"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, out, errs := runCLI(t, tt.args...)
			if code != exitUsage || !strings.Contains(errs, tt.want) {
				t.Errorf("got exit %d, stderr %q; want exit 2 and a message naming %q", code, errs, tt.want)
			}
			if first, _, _ := strings.Cut(out, "\n"); out != "" {
				t.Errorf("got stdout starting %q, want none", first)
			}
		})
	}
}

// runs best --min takes a fraction metric's bound as a fraction or a
// percentage: 90% and 0.9 give the same table; a non-fraction metric
// takes a number in its canonical unit only.
func TestRunsBestPercentages(t *testing.T) {
	db := "--db=" + filepath.Join(t.TempDir(), "log.db")
	for _, cov := range []string{"0.95", "80%", "97%"} {
		if code, _, errs := runPiped(t, db, "run", "add", tmplDir+"recipe-lowpressure.yaml", "--outcome", "coverage="+cov, "--outcome", "domain_size=12um"); code != 0 {
			t.Fatalf("run add: exit %d: %s", code, errs)
		}
	}
	best := func(args ...string) (int, string, string) {
		return runPiped(t, append([]string{db, "runs", "best", "--by", "growth_temperature_c", "--bins", "1", "--output", "json"}, args...)...)
	}
	_, asFraction, _ := best("--metric", "coverage", "--min", "0.9")
	for _, min := range []string{"90%", "90 %"} {
		code, got, errs := best("--metric", "coverage", "--min", min)
		if code != 0 || got != asFraction {
			t.Errorf("--min %q: exit %d %s, got\n%s\nwant the table of --min 0.9\n%s", min, code, errs, got, asFraction)
		}
	}
	var res bestJSON
	if err := json.Unmarshal([]byte(asFraction), &res); err != nil {
		t.Fatal(err)
	}
	// Two of the three runs (0.95 and 0.97) are at least 0.9.
	if len(res.Bins) != 1 || res.Bins[0].Meeting != 2 || res.Goal != "≥ 0.9" {
		t.Errorf("got goal %q, bins %+v; want ≥ 0.9 and one bin with 2 runs meeting it", res.Goal, res.Bins)
	}
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"max as a percentage", []string{"--metric", "coverage", "--max", "96%"}, ""},
		{"not a fraction", []string{"--metric", "coverage", "--min", "lots"}, "--min: "},
		{"percentage of a length", []string{"--metric", "domain_size", "--min", "30%"}, `--min "30%": want a number in um`},
	} {
		code, _, errs := best(c.args...)
		if wantCode := map[bool]int{true: 0, false: 2}[c.want == ""]; code != wantCode || !strings.Contains(errs, c.want) {
			t.Errorf("%s: got exit %d, stderr %q; want exit %d and %q", c.name, code, errs, wantCode, c.want)
		}
	}
}
