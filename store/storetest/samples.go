package storetest

import (
	"context"
	"math"
	"strconv"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// testSamplesMean checks the metric of Samples on runs measured more than
// once: the mean of the run's values, against exact arithmetic where the
// mean is a binary fraction and against the database's own AVG otherwise,
// and that a filter keeps runs in run order.
func testSamplesMean(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	recs := Records(6, "")
	repeat := map[int][]float64{
		1: {0.5, 0.75, 1}, // mean 0.75 exactly (binary fractions, exact sums)
		3: {0.1, 0.2, 0.7},
		4: {0.3, 0.3},
	}
	for i, vs := range repeat {
		o := recs[i].Outcomes[0]
		recs[i].Outcomes = recs[i].Outcomes[1:]
		for _, v := range vs {
			o.Value, o.Entered = v, strconv.FormatFloat(v, 'g', -1, 64)
			recs[i].Outcomes = append(recs[i].Outcomes, o)
		}
	}
	importRecords(t, l, recs)
	got, err := l.Samples(ctx, store.Filter{}, "coverage", []string{"growth_temperature_c"})
	if err != nil || len(got) != len(recs) {
		t.Fatalf("Samples: got %d, %v; want %d", len(got), err, len(recs))
	}
	db := Backend(t, l).SQL()
	for i, s := range got {
		var avg float64
		err := db.QueryRowContext(ctx, "SELECT AVG(o.value) FROM outcomes o JOIN runs r ON r.id = o.run_id WHERE r.code = '"+s.Code+"' AND o.metric = 'coverage'").Scan(&avg)
		must(t, err)
		if s.Metric != avg || s.Params[0] != recs[i].Params["growth_temperature_c"] {
			t.Errorf("sample %d (%s): got metric %v, %s %v; want the database's AVG %v and %v", i, s.Code, s.Metric, "growth_temperature_c", s.Params[0], avg, recs[i].Params["growth_temperature_c"])
		}
	}
	if got[1].Metric != 0.75 {
		t.Errorf("mean of 0.5, 0.75, 1: got %v, want 0.75 (exact)", got[1].Metric)
	}
	if math.Abs(got[3].Metric-1.0/3) > 1e-15 {
		t.Errorf("mean of 0.1, 0.2, 0.7: got %v, want 1/3 within 1e-15", got[3].Metric)
	}
	cut := recs[2].Params["growth_temperature_c"]
	part, err := l.Samples(ctx, store.Filter{Where: []string{"growth_temperature_c >= " + strconv.FormatFloat(cut, 'g', -1, 64)}}, "coverage", nil)
	must(t, err)
	want := 0
	for _, r := range recs {
		if r.Params["growth_temperature_c"] >= cut {
			want++
		}
	}
	if len(part) != want {
		t.Fatalf("Samples with a filter: got %d runs, want %d", len(part), want)
	}
	for i := 1; i < len(part); i++ {
		if part[i-1].Code >= part[i].Code {
			t.Errorf("Samples with a filter: got %s before %s, want run order", part[i-1].Code, part[i].Code)
		}
	}
}
