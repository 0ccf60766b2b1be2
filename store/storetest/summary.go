package storetest

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
)

// The tests of the run summary (migration 0007): its columns, that the
// check finds a summary that disagrees with the runs and Repair restores
// it, that a refused write leaves it as it was, and that best and rank
// read from it agree with the same computed from the runs themselves.

// SummaryTable checks that the log's run_summary has the columns run_id,
// code and sqldb.SummaryColumns, in that order, whether the log was made
// fresh or migrated from an older version (Migrations calls it on every
// migrated log).
func SummaryTable(t *testing.T, l store.RunLog) {
	t.Helper()
	rows, err := Backend(t, l).SQL().QueryContext(context.Background(), "SELECT * FROM run_summary WHERE 1 = 0")
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	got, err := rows.Columns()
	if err != nil {
		t.Fatal(err)
	}
	want := append([]string{"run_id", "code"}, sqldb.SummaryColumns()...)
	if !slices.Equal(got, want) {
		t.Errorf("run_summary columns: got %v, want %v", got, want)
	}
}

// summaryDump is the whole summary as text, rows in run order, values
// with every digit (strconv 'g' -1 through %v), for comparing states.
func summaryDump(t *testing.T, l store.RunLog) string {
	t.Helper()
	db := Backend(t, l).SQL()
	var b strings.Builder
	for _, q := range []string{
		"SELECT * FROM run_summary ORDER BY run_id",
		"SELECT name, run_id, value FROM run_summary_extra ORDER BY name, run_id",
	} {
		rows, err := db.QueryContext(context.Background(), q)
		if err != nil {
			t.Fatal(err)
		}
		cols, _ := rows.Columns()
		vals := make([]any, len(cols))
		dest := make([]any, len(cols))
		for i := range vals {
			dest[i] = &vals[i]
		}
		for rows.Next() {
			if err := rows.Scan(dest...); err != nil {
				t.Fatal(err)
			}
			for i, v := range vals {
				if x, ok := v.([]byte); ok {
					v = string(x)
				}
				fmt.Fprintf(&b, "%s=%v ", cols[i], v)
			}
			b.WriteString("\n")
		}
		if err := rows.Err(); err != nil {
			t.Fatal(err)
		}
		rows.Close()
	}
	return b.String()
}

// summaryRecords are n GenRecords of which every third has logged twins
// of growth_temperature_c and ch4_flow_sccm (3 °C hotter, 1 sccm less),
// every fifth a parameter without a column of the summary
// (foil_anneal_passes) and every seventh a second coverage measurement.
func summaryRecords(n int) []store.RunRecord {
	recs := Records(n, "")
	for i := range recs {
		p := recs[i].Params
		// twins given in different runs, so that each parameter's
		// count of them differs
		if i%3 == 0 {
			p["growth_temperature_c_logged"] = p["growth_temperature_c"] + 3
		}
		if i%6 == 0 {
			p["ch4_flow_sccm_logged"] = p["ch4_flow_sccm"] - 1
		}
		if i%5 == 0 {
			p["foil_anneal_passes"] = float64(1 + i%4)
		}
		if i%10 == 0 {
			p["foil_anneal_passes_logged"] = float64(2 + i%4)
		}
		if i%7 == 0 {
			o := recs[i].Outcomes[0]
			o.Value, o.Entered = 0.5, "0.5"
			recs[i].Outcomes = append(recs[i].Outcomes, o)
		}
	}
	return recs
}

// testSummaryRepair corrupts the summary with raw SQL (a row deleted, a
// value altered, a row of the extra table added) and checks that Check
// reports it and Repair restores the summary exactly.
func testSummaryRepair(t *testing.T, open Opener) {
	ctx := context.Background()
	tests := []struct {
		name string
		sql  string
	}{
		{"row deleted", "DELETE FROM run_summary WHERE run_id = (SELECT MIN(run_id) FROM run_summary)"},
		{"value altered", "UPDATE run_summary SET coverage = coverage + 0.25 WHERE run_id = (SELECT MAX(run_id) FROM run_summary)"},
		{"twin cleared", "UPDATE run_summary SET growth_temperature_c_logged = NULL WHERE growth_temperature_c_logged IS NOT NULL"},
		{"extra row added", "INSERT INTO run_summary_extra (name, run_id, value) SELECT 'foil_anneal_passes', MAX(id), 9 FROM runs"},
		{"extra value altered", "UPDATE run_summary_extra SET value = value * 2"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			l := open(t)
			importRecords(t, l, summaryRecords(30))
			before := summaryDump(t, l)
			if probs, err := l.Check(ctx); err != nil || len(probs) > 0 {
				t.Fatalf("Check before: got %v, %v; want no problems", probs, err)
			}
			if _, err := Backend(t, l).SQL().ExecContext(ctx, tt.sql); err != nil {
				t.Fatal(err)
			}
			if summaryDump(t, l) == before {
				t.Fatalf("%s changed nothing; the test needs another statement", tt.sql)
			}
			probs, err := l.Check(ctx)
			if err != nil || !slices.ContainsFunc(probs, func(p string) bool { return strings.Contains(p, "run summary") }) {
				t.Errorf("Check after %q: got %v, %v; want a problem naming the run summary", tt.sql, probs, err)
			}
			done, err := l.Repair(ctx)
			if err != nil || len(done) == 0 {
				t.Fatalf("Repair: got %v, %v", done, err)
			}
			if after := summaryDump(t, l); after != before {
				t.Errorf("summary after Repair:\n%s\nwant as before:\n%s", after, before)
			}
			if probs, err := l.Check(ctx); err != nil || len(probs) > 0 {
				t.Errorf("Check after Repair: got %v, %v; want no problems", probs, err)
			}
		})
	}
}

// testSummaryRefused: writes the store refuses (bad outcomes, an unknown
// run, a clashing import) leave the summary exactly as it was.
func testSummaryRefused(t *testing.T, open Opener) {
	ctx := context.Background()
	l := open(t)
	recs := summaryRecords(12)
	importRecords(t, l, recs)
	runs, err := l.List(ctx, store.Filter{Limit: 1})
	if err != nil || len(runs) != 1 {
		t.Fatalf("List: got %d runs, %v", len(runs), err)
	}
	code := runs[0].Code
	before := summaryDump(t, l)
	good := store.Outcome{Metric: "coverage", Value: 0.8, Unit: "1", Entered: "0.8"}
	bad := []struct {
		name  string
		write func() error
	}{
		{"NaN value", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{good, {Metric: "coverage", Value: math.NaN(), Unit: "1", Entered: "NaN"}})
		}},
		{"metric in another unit", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{good, {Metric: "coverage", Value: 80, Unit: "%", Entered: "80%"}})
		}},
		{"a parameter as a metric", func() error {
			return l.AddOutcomes(ctx, code, []store.Outcome{good, {Metric: "growth_temperature_c", Value: 1000, Unit: "1", Entered: "1000"}})
		}},
		{"unknown run", func() error { return l.AddOutcomes(ctx, "NO-SUCH-RUN", []store.Outcome{good}) }},
		{"replacement with a bad value", func() error {
			return l.ReplaceOutcomes(ctx, code, []store.Outcome{{Metric: "coverage", Value: math.Inf(1), Unit: "1", Entered: "inf"}}, "op")
		}},
		{"import of a clashing code", func() error {
			rec := GenRecord(99, "")
			rec.Code = code
			_, err := l.Import(ctx, store.Bundle{Runs: []store.RunRecord{GenRecord(98, ""), rec}}, nil)
			return err
		}},
	}
	for _, tt := range bad {
		t.Run(tt.name, func(t *testing.T) {
			if err := tt.write(); err == nil {
				t.Fatalf("the write was accepted; the test needs one the store refuses")
			}
			if after := summaryDump(t, l); after != before {
				t.Errorf("summary after a refused write:\n%s\nwant as before:\n%s", after, before)
			}
		})
	}
}

// fromRuns computes, from the runs themselves (Export's records, not the
// summary), what Columns returns for the query: per run that has the
// metric its mean, and each parameter's twin where the run has it, else
// the parameter, NaN where neither.
func fromRuns(t *testing.T, l store.RunLog, cq store.ColumnQuery) store.Columns {
	t.Helper()
	want := store.Columns{Params: make([][]float64, len(cq.Params)), PerParam: make([]int, len(cq.Params))}
	err := l.Export(context.Background(), cq.Filter, func(r store.RunRecord) error {
		var sum float64
		var n int
		for _, o := range r.Outcomes {
			if o.Metric == cq.Metric {
				sum += o.Value
				n++
			}
		}
		if n == 0 {
			return nil
		}
		want.Metric = append(want.Metric, sum/float64(n))
		used := false
		for j, p := range cq.Params {
			v, ok := r.Params[p]
			if !ok {
				v = math.NaN()
			}
			if cq.Twins != nil {
				if tw, ok := r.Params[cq.Twins[j]]; ok {
					v, used = tw, true
					want.PerParam[j]++
				}
			}
			want.Params[j] = append(want.Params[j], v)
		}
		if used {
			want.Logged++
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return want
}

// testSummaryAgrees: Columns read from the summary equal the columns
// computed from the runs themselves (twins, a parameter without a column,
// a missing parameter, runs measured twice, a filter), and so do the Best
// and Rank tables made of them, bit for bit; Best on Samples (the path
// before Columns) agrees with Best on Columns for planned conditions.
func testSummaryAgrees(t *testing.T, open Opener) {
	ctx := context.Background()
	l := open(t)
	recs := summaryRecords(90)
	for i := range recs {
		if i%2 == 0 { // a mean that is a binary fraction, so the database's AVG and the sum in Go agree exactly
			recs[i].Outcomes = recs[i].Outcomes[:2]
		}
	}
	importRecords(t, l, recs)
	params := []string{"growth_temperature_c", "ch4_flow_sccm", "foil_anneal_passes", "no_such_param"}
	twins := []string{"growth_temperature_c_logged", "ch4_flow_sccm_logged", "foil_anneal_passes_logged", ""}
	goal := store.Goal{Min: 0.7, Max: store.None()}
	tests := []struct {
		name string
		cq   store.ColumnQuery
	}{
		{"planned", store.ColumnQuery{Metric: "coverage", Params: params}},
		{"logged", store.ColumnQuery{Metric: "coverage", Params: params, Twins: twins}},
		{"filtered", store.ColumnQuery{Metric: "coverage", Params: params, Twins: twins, Filter: store.Filter{Where: []string{`growth_temperature_c >= 1000 or furnace = "tube-2"`}}}},
		{"other metric", store.ColumnQuery{Metric: "domain_size", Params: params[:2], Twins: twins[:2]}},
	}
	same := func(a, b []float64) bool {
		return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := l.Columns(ctx, tt.cq)
			if err != nil {
				t.Fatal(err)
			}
			want := fromRuns(t, l, tt.cq)
			if len(want.Metric) == 0 || !same(got.Metric, want.Metric) {
				t.Fatalf("metric: got %v, want %v", got.Metric, want.Metric)
			}
			for j, p := range tt.cq.Params {
				if !same(got.Params[j], want.Params[j]) {
					t.Errorf("%s: got %v, want %v", p, got.Params[j], want.Params[j])
				}
			}
			if got.Logged != want.Logged || !slices.Equal(got.PerParam, want.PerParam) {
				t.Errorf("twins given: got %d runs, per parameter %v; want %d, %v", got.Logged, got.PerParam, want.Logged, want.PerParam)
			}
			gb := store.BestColumns(tt.cq.Metric, tt.cq.Params[:2], got.Metric, got.Params[:2], 4, goal)
			wb := store.BestColumns(tt.cq.Metric, tt.cq.Params[:2], want.Metric, want.Params[:2], 4, goal)
			if fmt.Sprint(gb) != fmt.Sprint(wb) || len(gb.Bins) < 2 {
				t.Errorf("best: got %+v, want %+v (from the runs)", gb, wb)
			}
			gr := store.RankColumns(tt.cq.Metric, tt.cq.Params, got.Metric, got.Params, store.NoGoal(), false)
			wr := store.RankColumns(tt.cq.Metric, tt.cq.Params, want.Metric, want.Params, store.NoGoal(), false)
			if fmt.Sprint(gr) != fmt.Sprint(wr) || len(gr.Rows) < 2 {
				t.Errorf("rank: got %+v, want %+v (from the runs)", gr, wr)
			}
			if tt.cq.Twins != nil {
				return
			}
			samples, err := l.Samples(ctx, tt.cq.Filter, tt.cq.Metric, tt.cq.Params)
			if err != nil {
				t.Fatal(err)
			}
			if sb := store.Best(samples, tt.cq.Metric, tt.cq.Params[:2], 4, goal); fmt.Sprint(sb) != fmt.Sprint(gb) {
				t.Errorf("best on Samples: got %+v, want %+v (on Columns)", sb, gb)
			}
		})
	}
}
