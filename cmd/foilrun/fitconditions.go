package main

import (
	"fmt"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
)

// addConditions records which conditions the fit's runs were prepared on:
// the --conditions choice, the counts of runs on logged conditions and on
// the plan, and each residual's run's.
func (r *fitResultJSON) addConditions(src lab.Source, col lab.Observations) {
	r.Conditions = src.String()
	r.RunsLogged, r.RunsPlanned = col.Counts()
	logged := map[string]bool{}
	for i, o := range col.Observations {
		logged[o.Label] = col.Logged[i]
	}
	for i := range r.Residuals {
		r.Residuals[i].Conditions = lab.Planned.String()
		if logged[r.Residuals[i].Run] {
			r.Residuals[i].Conditions = lab.Logged.String()
		}
	}
}

// conditionsLine is "N runs on logged conditions, M on the plan", and
// what --conditions asked for.
func (r fitResultJSON) conditionsLine() string {
	s := fmt.Sprintf("%d runs on logged conditions, %d on the plan", r.RunsLogged, r.RunsPlanned)
	if r.Conditions == lab.Planned.String() {
		return s + " (--conditions planned)"
	}
	return s + " (furnace log where a run has one)"
}
