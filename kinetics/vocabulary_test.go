package kinetics

import (
	"errors"
	"strings"
	"testing"
)

// Every old spelling is refused by every parser that once took it, with
// an *InputError of ReasonRenamed whose message quotes the old name and
// names the new one, wrapping the parser's sentinel.
func TestOldSpellingsRefused(t *testing.T) {
	plan := loadTemplate(t, "lowpressure")
	suggestVary := func(v string) error {
		_, err := Suggest(plan, SuggestSpec{Params: DefaultParams(), Targets: []Target{mustTarget(t, "coverage>=0.9")}, Vary: []string{v}})
		return err
	}
	parseMetric := func(s string) error { _, err := ParseMetric(s); return err }
	parseTarget := func(s string) error { _, err := ParseTarget(s); return err }
	parseAxis := func(s string) error { _, err := ParseAxis(s); return err }
	for _, c := range []struct {
		name     string
		parse    func(string) error
		in       string
		sentinel error
		kind     InputKind
		want     string
	}{
		{"axis time", parseAxis, "time=1min:5min:3", ErrAxis, KindAxis, `axis "time=1min:5min:3": unknown parameter "time"; use "duration"`},
		{"axis Time", parseAxis, "Time=1min:5min:3", ErrAxis, KindAxis, `axis "Time=1min:5min:3": unknown parameter "Time"; use "duration"`},
		{"vary time", suggestVary, "time", ErrSuggest, KindVary, `vary "time": unknown parameter "time"; use "duration"`},
		{"vary time range", suggestVary, "time=1min:2h", ErrSuggest, KindVary, `vary "time=1min:2h": unknown parameter "time"; use "duration"`},
		{"target density", parseTarget, "density<=100/mm2", ErrSuggest, KindTarget, `target "density<=100/mm2": unknown metric "density"; use "nuclei_density"`},
		{"target nuclei-density", parseTarget, "nuclei-density<=100/mm2", ErrSuggest, KindTarget, `target "nuclei-density<=100/mm2": unknown metric "nuclei-density"; use "nuclei_density"`},
		{"target domain-size", parseTarget, "domain-size>=40um", ErrSuggest, KindTarget, `target "domain-size>=40um": unknown metric "domain-size"; use "domain_size"`},
		{"target size", parseTarget, "size>=40um", ErrSuggest, KindTarget, `target "size>=40um": unknown metric "size"; use "domain_size"`},
		{"metric density", parseMetric, "density", ErrMetric, KindMetric, `metric "density": unknown metric "density"; use "nuclei_density"`},
		{"metric nuclei-density", parseMetric, "nuclei-density", ErrMetric, KindMetric, `metric "nuclei-density": unknown metric "nuclei-density"; use "nuclei_density"`},
		{"metric domain-size", parseMetric, "domain-size", ErrMetric, KindMetric, `metric "domain-size": unknown metric "domain-size"; use "domain_size"`},
		{"metric size", parseMetric, "size", ErrMetric, KindMetric, `metric "size": unknown metric "size"; use "domain_size"`},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.parse(c.in)
			var ie *InputError
			if !errors.As(err, &ie) || err.Error() != c.want {
				t.Fatalf("got %v, want %s", err, c.want)
			}
			if ie.Kind != c.kind || ie.Reason != ReasonRenamed || !errors.Is(err, c.sentinel) || ie.Advice == "" {
				t.Errorf("got kind %s reason %q hint %q (wraps %v: %v), want kind %s, reason %q, a hint", ie.Kind, ie.Reason, ie.Advice, c.sentinel, errors.Is(err, c.sentinel), c.kind, ReasonRenamed)
			}
		})
	}
}

// The current names parse, and the exported vocabulary lists them.
func TestVocabulary(t *testing.T) {
	for _, m := range Metrics() {
		got, err := ParseMetric(" " + strings.ToUpper(m.Name) + " ")
		if err != nil || got != m.Name {
			t.Errorf("ParseMetric(%q): got %q, %v, want %q", m.Name, got, err, m.Name)
		}
		if m.Description == "" {
			t.Errorf("metric %s has no description", m.Name)
		}
	}
	for _, p := range Parameters()[:3] {
		a, err := ParseAxis(p.Name + "=1" + p.Unit + ":2" + p.Unit + ":2")
		if err != nil || a.Param != p.Name {
			t.Errorf("ParseAxis with %s: got %+v, %v", p.Name, a, err)
		}
	}
	_, err := ParseMetric("layers")
	var ie *InputError
	if !errors.As(err, &ie) || ie.Reason != ReasonUnknownName || err.Error() != `metric "layers": unknown metric, want coverage, nuclei_density or domain_size` {
		t.Errorf("unknown metric: got %v", err)
	}
}

// InputError unwraps to the sentinel of its kind and prints only its
// message; the kinds have names.
func TestInputError(t *testing.T) {
	for _, c := range []struct {
		kind     InputKind
		sentinel error
		name     string
	}{
		{KindAxis, ErrAxis, "axis"}, {KindTarget, ErrSuggest, "target"}, {KindVary, ErrSuggest, "vary"},
		{KindSuggest, ErrSuggest, "suggest"}, {KindFix, ErrFitInput, "fix"}, {KindFit, ErrFitInput, "fit"},
		{KindMetric, ErrMetric, "metric"}, {KindParams, ErrParams, "params"},
	} {
		err := error(&InputError{Kind: c.kind, Msg: "m", Advice: "h"})
		if !errors.Is(err, c.sentinel) || err.Error() != "m" || c.kind.String() != c.name {
			t.Errorf("%s: Is(%v) %v, Error %q, String %q", c.name, c.sentinel, errors.Is(err, c.sentinel), err.Error(), c.kind.String())
		}
	}
	if got := InputKind(0).String(); got != "InputKind(0)" {
		t.Errorf("zero kind: got %q", got)
	}
}
