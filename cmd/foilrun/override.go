package main

import (
	"errors"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
	"github.com/foilrun/foilrun/store"
)

// refusal is what stops a recipe from being logged: its check errors and,
// when it has a site, its stop-level safety findings.
type refusal struct {
	check  []recipe.Finding
	safety []safety.Finding
	noSite bool // the recipe names no site, so safety was not assessed
}

// refuse runs check and, with a site, the safety analysis, and keeps the
// findings that refuse the recipe.
func refuse(plan *recipe.Plan, site *recipe.Site) (refusal, error) {
	var r refusal
	for _, f := range recipe.Check(plan) {
		if f.Severity == recipe.Error {
			r.check = append(r.check, f)
		}
	}
	if site == nil {
		r.noSite = true
		return r, nil
	}
	rep, err := safety.Analyze(plan, site, safety.Options{})
	if err != nil {
		return r, err
	}
	for _, f := range rep.Findings {
		if f.Severity == safety.Stop {
			r.safety = append(r.safety, f)
		}
	}
	return r, nil
}

func (r refusal) refused() bool { return len(r.check)+len(r.safety) > 0 }

// print writes the refusing findings with the check and safety renderers.
func (r refusal) print(w io.Writer) error {
	if len(r.check) > 0 {
		if err := section(w, "Check errors", checkFindingsTable(r.check)); err != nil {
			return err
		}
	}
	if len(r.safety) > 0 {
		if err := section(w, "Safety stops", findingsTable(r.safety, true)); err != nil {
			return err
		}
		fmt.Fprintln(w, safety.Disclaimer)
	}
	return nil
}

// summary is "2 check errors and 1 safety stop".
func (r refusal) summary() string {
	var parts []string
	if n := len(r.check); n > 0 {
		parts = append(parts, plural(n, "check error"))
	}
	if n := len(r.safety); n > 0 {
		parts = append(parts, plural(n, "safety stop"))
	}
	return strings.Join(parts, " and ")
}

func plural(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return fmt.Sprintf("%d %ss", n, what)
}

// override is the record of logging the refused recipe anyway.
func (r refusal) override(reason, operator string, at time.Time) *store.Override {
	o := &store.Override{Reason: reason, Operator: operator, At: at}
	for _, f := range r.check {
		o.Findings = append(o.Findings, store.OverrideFinding{Source: "check", Severity: f.Severity.String(), Step: f.StepName, Rule: f.Rule, Message: f.Message})
	}
	for _, f := range r.safety {
		o.Findings = append(o.Findings, store.OverrideFinding{Source: "safety", Severity: f.Severity.String(), Step: f.StepName, Rule: f.Rule, Message: f.Message})
	}
	return o
}

// gate decides whether a run of the plan may be logged: a recipe with
// check errors or safety stops is refused (the findings printed on out,
// exit status 1) unless reason is given, in which case rec carries the
// override (made now) and the findings and a status line go to errw.
func gate(plan *recipe.Plan, site *recipe.Site, reason string, now time.Time, rec *store.RunRecord, out, errw io.Writer) error {
	r, err := refuse(plan, site)
	if err != nil {
		return err
	}
	if r.noSite {
		fmt.Fprintf(errw, "recipe %q names no site file: safety not assessed before logging (pass --site)\n", plan.Recipe.Name)
	}
	if !r.refused() {
		return nil
	}
	if reason != "" { // the run's code is the result; the findings are status
		out = errw
	}
	if err := r.print(out); err != nil {
		return err
	}
	if reason != "" {
		rec.Override = r.override(reason, rec.Operator, now)
		fmt.Fprintf(errw, "recipe %q has %s: logged anyway by %s with --override %q\n", plan.Recipe.Name, r.summary(), rec.Operator, reason)
		return nil
	}
	fmt.Fprintf(errw, "foilrun: run not logged: recipe %q has %s\n  hint: fix the recipe (foilrun check, foilrun safety), or log it anyway with --override \"REASON\"\n",
		plan.Recipe.Name, r.summary())
	return &cliError{kind: kindFindings, err: errors.New("run not logged: the recipe has check errors or safety stops")}
}

// overrideTable shows an override's findings for people.
func overrideTable(o *store.Override) table {
	t := table{Header: []string{"from", "severity", "step", "rule", "finding"}}
	for _, f := range o.Findings {
		step := f.Step
		if step == "" {
			step = "recipe"
		}
		t.add(f.Source, f.Severity, step, f.Rule, f.Message)
	}
	return t
}
