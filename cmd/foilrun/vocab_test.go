package main

import (
	"encoding/json"
	"io"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/spf13/cobra"
)

// TestOldSpellingsRefused runs each word foilrun used to accept through the
// real command line: exit status 2 and a message naming the word to use
// (issue 12, "one vocabulary").
// The suggest and fit cases go through the kinetics parsers
// (kinetics.ParseTarget, the --vary list, kinetics.ParseMetric).
func TestOldSpellingsRefused(t *testing.T) {
	t.Parallel()
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
		{"suggest --vary time", []string{"suggest", lowPressure, "--target", "coverage>=0.9", "--vary", "temperature,CH4,time"}, "duration"},
		{"suggest --target domain-size", []string{"suggest", lowPressure, "--target", "domain-size>=5um"}, "domain_size"},
		{"suggest --target nuclei-density", []string{"suggest", lowPressure, "--target", "nuclei-density<=100/mm2"}, "nuclei_density"},
		{"fit --metric density", []string{db, "fit", "--metric", "coverage,density"}, "nuclei_density"},
		{"fit --metric nuclei-density", []string{db, "fit", "--metric", "nuclei-density"}, "nuclei_density"},
		{"fit --metric domain-size", []string{db, "fit", "--metric", "domain-size"}, "domain_size"},
		{"fit --metric size", []string{db, "fit", "--metric", "size"}, "domain_size"},
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
	t.Parallel()
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

// The kinetics library's messages name no flag; the command line puts the
// flag in front and keeps the library's hint line.
func TestLibraryErrorsNameTheFlag(t *testing.T) {
	t.Parallel()
	db := "--db=" + filepath.Join(t.TempDir(), "log.db")
	tests := []struct {
		name string
		args []string
		want string // stderr
	}{
		{"suggest --vary", []string{"suggest", lowPressure, "--target", "coverage>=0.9", "--vary", "temperature,time"},
			"foilrun: --vary: vary \"time\": unknown parameter \"time\"; use \"duration\"\n  hint: the name is now duration\n"},
		{"suggest --vary range", []string{"suggest", lowPressure, "--target", "coverage>=0.9", "--vary", "temperature=1000C:900C"},
			"foilrun: --vary: vary \"temperature=1000C:900C\": from must be below to\n"},
		{"suggest --target", []string{"suggest", lowPressure, "--target", "domain-size>=5um"},
			"foilrun: --target: target \"domain-size>=5um\": unknown metric \"domain-size\"; use \"domain_size\"\n  hint: the name is now domain_size\n"},
		{"fit --metric", []string{db, "fit", "--metric", "density"},
			"foilrun: --metric: metric \"density\": unknown metric \"density\"; use \"nuclei_density\"\n  hint: the name is now nuclei_density\n"},
		{"fit --metric domain_size", []string{db, "fit", "--metric", "coverage,domain_size"},
			"foilrun: --metric \"coverage,domain_size\": fit compares coverage and nuclei_density with the model, not domain_size\n" +
				"  hint: domain_size follows from the other two; write --metric coverage,nuclei_density\n"},
		{"fit --fix", []string{db, "fit", "--fix", "Eg"}, "foilrun: --fix: fix \"Eg\": want NAME=VALUE, e.g. Eg=1.9\n"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, errs := runCLI(t, tt.args...)
			if code != exitUsage || errs != tt.want {
				t.Errorf("got exit %d, stderr\n%q\nwant exit 2, stderr\n%q", code, errs, tt.want)
			}
		})
	}
}

// oldInHelp are the old spellings a help text must not teach, each as a
// pattern precise enough to pass prose such as "nuclei density" or "the
// time to each alarm".
var oldInHelp = []struct {
	name string
	re   *regexp.Regexp
}{
	{"nuclei-density", regexp.MustCompile(`nuclei-density`)},
	{"domain-size", regexp.MustCompile(`domain-size`)},
	{"time-to-99", regexp.MustCompile(`time-to-99`)},
	// density as a metric word: in a list with coverage, after a flag, in
	// quotes or in a target.
	{"density as a metric", regexp.MustCompile("(coverage, ?|--(metric|show|target)[ =]|[\"'`])density\\b|\\bdensity[<>]=")},
	{"size as a metric", regexp.MustCompile(`--(metric|show|target)[ =]size\b|\bsize[<>]=`)},
	// time as a varied parameter: with a range, or in a comma list.
	{"time as a parameter", regexp.MustCompile(`\btime=|\w,time\b|\btime,\w`)},
}

// The patterns trip on the old help texts and pass the prose of the new.
func TestOldInHelpPatterns(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		text string
		want string // pattern name, "" for none
	}{
		{"metrics to fit: coverage, density or both (comma-separated)", "density as a metric"},
		{`(default "coverage,density")`, "density as a metric"},
		{"Targets: coverage>=0.99, domain-size>=40um", "domain-size"},
		{"nuclei-density<=100/mm2", "nuclei-density"},
		{"(temperature=950C:1060C, CH4=2sccm:20sccm, time=1min:2h)", "time as a parameter"},
		{"default temperature,CH4,time.", "time as a parameter"},
		{"--show time-to-99", "time-to-99"},
		{"--metric size", "size as a metric"},
		{"Predict coverage, nuclei density and domain size for a recipe", ""},
		{"Coverage, domain count, density and sizes from a micrograph", ""},
		{"the time to each detector alarm, the oxygen left", ""},
		{"--minimize time (the grow step's duration, default) or methane", ""},
		{"pixel size on the sample, e.g. 0.25um", ""},
	} {
		got := ""
		for _, p := range oldInHelp {
			if p.re.MatchString(c.text) {
				got = p.name
				break
			}
		}
		if got != c.want {
			t.Errorf("%q: got pattern %q, want %q", c.text, got, c.want)
		}
	}
}

// No command's --help teaches an old spelling. The commands are found by
// walking the root command's tree, so a new command is covered too.
func TestHelpUsesOneVocabulary(t *testing.T) {
	t.Parallel()
	root := newRootCmd(&factory{io: &streams{In: strings.NewReader(""), Out: io.Discard, Err: io.Discard}, now: time.Now})
	var paths [][]string
	var walk func(c *cobra.Command, path []string)
	walk = func(c *cobra.Command, path []string) {
		paths = append(paths, path)
		for _, sub := range c.Commands() {
			walk(sub, append(slices.Clone(path), sub.Name()))
		}
	}
	walk(root, nil)
	if len(paths) < 25 {
		t.Fatalf("found %d commands, want the whole tree (at least 25)", len(paths))
	}
	for _, path := range paths {
		name := strings.Join(append([]string{"foilrun"}, path...), " ")
		code, out, errs := runPiped(t, append(path, "--help")...)
		if code != 0 || !strings.Contains(out, "Usage:") {
			t.Errorf("%s --help: got exit %d, stdout %q, stderr %q; want exit 0 and a usage text", name, code, out, errs)
			continue
		}
		for _, p := range oldInHelp {
			if m := p.re.FindString(out); m != "" {
				t.Errorf("%s --help: old spelling (%s) %q", name, p.name, m)
			}
		}
	}
}
