package lab

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/benchdata/fitlog"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// benchLog is a demo lab with n finished runs of the fit benchmark log
// (fitlog.Bundle) in SQLite.
func benchLog(b *testing.B, n int) (store.RunLog, demolab.Paths) {
	b.Helper()
	ctx := context.Background()
	paths, err := demolab.Lay(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	l, err := sqlite.Open(ctx, filepath.Join(paths.Dir, "bench.db"))
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { l.Close() })
	if err := fitlog.Write(ctx, l, paths, n); err != nil {
		b.Fatal(err)
	}
	return l, paths
}

// Collect of 5,000 logged runs of 300 recipes, both metrics, on the
// logged conditions where there are any: what fit reads before fitting.
func BenchmarkCollect5000(b *testing.B) {
	l, _ := benchLog(b, 5000)
	ctx := context.Background()
	for b.Loop() {
		rb, err := NewRebuilder(l, "")
		if err != nil {
			b.Fatal(err)
		}
		col, err := Collect(ctx, rb, store.Filter{}, Metrics{Coverage: true, Density: true}, demolab.Truth(), Logged)
		if err != nil {
			b.Fatal(err)
		}
		if len(col.Observations) != 5000 {
			b.Fatalf("got %d observations, want 5000", len(col.Observations))
		}
	}
}

// BenchmarkFitLogged5000 is kinetics.Fit on what Collect gives for the
// 5,000-run fit benchmark log (the `seconds.fit` part of `foilrun fit`),
// with its iterations and residual evaluations. Target (issue 18): not
// slower than scipy's least_squares on the same observations
// (kinetics/testdata/scipyfit/time_fit.py).
func BenchmarkFitLogged5000(b *testing.B) {
	l, _ := benchLog(b, 5000)
	rb, err := NewRebuilder(l, "")
	if err != nil {
		b.Fatal(err)
	}
	col, err := Collect(context.Background(), rb, store.Filter{}, Metrics{Coverage: true, Density: true}, kinetics.DefaultParams(), Logged)
	if err != nil {
		b.Fatal(err)
	}
	var res *kinetics.FitResult
	for b.Loop() {
		if res, err = kinetics.Fit(col.Observations, kinetics.DefaultParams(), kinetics.FitSettings{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(res.Iterations), "iterations")
	b.ReportMetric(float64(res.Evaluations), "evaluations")
}
