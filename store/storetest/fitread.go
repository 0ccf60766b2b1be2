package storetest

import (
	"context"
	"fmt"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// FitRuns checks a back end's store.FitReader against the records the
// test writes: for a filter and a choice of metrics it must give, oldest
// first, exactly the runs that pass the filter and have one of the
// metrics, each with its code, snapshot hash, outcomes of those metrics
// (metric, value, unit, in logging order) and actuals, and nothing else.
func FitRuns(t *testing.T, open Opener) {
	ctx := context.Background()
	l := open(t)
	fr, ok := l.(store.FitReader)
	if !ok {
		t.Fatalf("%T does not implement store.FitReader", l)
	}
	snap := store.NewSnapshot("demo", "demo.yaml", []byte("name: demo\n"))
	var recs []store.RunRecord
	for i := range 30 {
		rec := FullRecord(i, snap.SHA256)
		rec.Code = store.FormatCode("", T0, int64(i+1))
		if i%4 == 0 { // no coverage, a nuclei density twice
			rec.Outcomes = []store.Outcome{
				{Metric: "nuclei_density", Value: float64(100 + i), Unit: "1/mm2"},
				{Metric: "nuclei_density", Value: float64(200 + i), Unit: "1/mm2"},
			}
		}
		if i%5 == 0 {
			rec.Outcomes = rec.Outcomes[:0] // nothing measured
		}
		recs = append(recs, rec)
	}
	if _, err := l.Import(ctx, store.Bundle{Snapshots: []store.Snapshot{snap}, Runs: recs}, nil); err != nil {
		t.Fatal(err)
	}
	// The actuals as the full read gives them (ordered by step and
	// quantity, a missing planned value NaN).
	actuals := map[string][]store.Actual{}
	err := l.Export(ctx, store.Filter{}, func(r store.RunRecord) error {
		actuals[r.Code] = r.Actuals
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name    string
		where   []string
		metrics []string
	}{
		{"coverage", nil, []string{"coverage"}},
		{"density", nil, []string{"nuclei_density"}},
		{"both, filtered", []string{`operator = "op1"`}, []string{"coverage", "nuclei_density"}},
		{"none", nil, nil},
	} {
		t.Run(c.name, func(t *testing.T) {
			var want []store.RunRecord
			for _, rec := range recs {
				if len(c.where) > 0 && rec.Operator != "op1" {
					continue
				}
				w := store.RunRecord{Run: store.Run{Code: rec.Code, RecipeHash: rec.RecipeHash, FurnaceHash: rec.FurnaceHash}, Actuals: actuals[rec.Code]}
				for _, o := range rec.Outcomes {
					for _, m := range c.metrics {
						if o.Metric == m {
							w.Outcomes = append(w.Outcomes, store.Outcome{Metric: o.Metric, Value: o.Value, Unit: o.Unit})
						}
					}
				}
				if len(w.Outcomes) > 0 {
					want = append(want, w)
				}
			}
			var got []store.RunRecord
			err := fr.FitRuns(ctx, store.Filter{Where: c.where}, c.metrics, store.ProfileKey{}, func(r store.RunRecord, prof []byte) error {
				if prof != nil {
					t.Errorf("run %s: got a profile of %d bytes without asking for one", r.Code, len(prof))
				}
				got = append(got, r)
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != len(want) {
				t.Fatalf("got %d runs, want %d", len(got), len(want))
			}
			for i := range want {
				if g, w := fmt.Sprintf("%+v", got[i]), fmt.Sprintf("%+v", want[i]); g != w { // %v: NaN equals NaN
					t.Errorf("run %d: got %s, want %s", i, g, w)
				}
			}
		})
	}
}
