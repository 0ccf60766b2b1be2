package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"

	"github.com/foilrun/foilrun/store"
)

// repeatedTable sums up the metrics a run has measured more than once
// (two micrographs, two positions): count, mean and spread, the sample
// standard deviation
//
//	s = √( Σ (xᵢ − x̄)² / (n − 1) ),
//
// in the metric's stored unit. fit uses the mean. It is empty when every
// metric was measured once.
func repeatedTable(ocs []store.Outcome) table {
	type acc struct {
		unit string
		xs   []float64
	}
	byMetric := map[string]*acc{}
	var order []string
	for _, o := range ocs {
		a, ok := byMetric[o.Metric]
		if !ok {
			a = &acc{unit: o.Unit}
			byMetric[o.Metric] = a
			order = append(order, o.Metric)
		}
		a.xs = append(a.xs, o.Value)
	}
	t := table{Header: []string{"metric", "n", "mean", "spread (s)", "unit"}, Numeric: []bool{false, true, true, true}}
	for _, m := range order {
		a := byMetric[m]
		if len(a.xs) < 2 {
			continue
		}
		mean, sd := meanSD(a.xs)
		t.add(m, num(float64(len(a.xs)), 6), num(mean, 4), num(sd, 3), a.unit)
	}
	return t
}

// meanSD returns the mean and sample standard deviation of xs (n ≥ 2).
func meanSD(xs []float64) (mean, sd float64) {
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	ss := 0.0
	for _, x := range xs {
		ss += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(ss / float64(len(xs)-1))
}

// printRepeated prints the repeated-measurement summary of a run, when
// it has one.
func printRepeated(w io.Writer, ocs []store.Outcome) error {
	t := repeatedTable(ocs)
	if len(t.Rows) == 0 {
		return nil
	}
	return section(w, "Repeated measurements (fit uses the mean)", t)
}

// replaceOutcomes is outcome add --replace.
func replaceOutcomes(ctx context.Context, o *outcomeAddOptions, l store.RunLog, ocs []store.Outcome) error {
	who := o.who
	if who == "" {
		who = os.Getenv("USER")
	}
	if err := l.ReplaceOutcomes(ctx, o.code, ocs, who); err != nil {
		return err
	}
	fmt.Fprintf(o.f.io.Err, "run %s: %d outcomes replaced; run show %s --history lists the old values\n", o.code, len(ocs), o.code)
	return nil
}

// correctionTable is a run's audit trail of corrected measurements.
func correctionTable(cs []store.Correction) table {
	t := table{Header: []string{"when", "who", "metric", "old", "new", "unit"}}
	for _, c := range cs {
		t.add(when(c.At), c.Who, c.Metric, c.OldEntered+" ("+num(c.OldValue, 6)+")", c.NewEntered+" ("+num(c.NewValue, 6)+")", c.Unit)
	}
	return t
}
