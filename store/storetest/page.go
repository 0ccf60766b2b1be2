package storetest

import (
	"context"
	"slices"
	"testing"

	"github.com/foilrun/foilrun/store"
)

// testPage: List newest first with an offset, Codes and Count, checked
// against the same records filtered, reversed and sliced in Go.
func testPage(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	recs := Records(50, "")
	importRecords(t, l, recs)
	all, err := l.List(ctx, store.Filter{}) // the codes the import gave, oldest first
	if err != nil || len(all) != len(recs) {
		t.Fatalf("List: got %d runs, %v; want %d", len(all), err, len(recs))
	}
	var tube2 []string // codes on tube-2, oldest first, picked in Go
	for i, r := range recs {
		if r.Furnace == "tube-2" {
			tube2 = append(tube2, all[i].Code)
		}
	}
	newest := slices.Clone(tube2)
	slices.Reverse(newest)
	where := []string{`furnace = "tube-2"`}
	tests := []struct {
		name string
		f    store.Filter
		want []string
	}{
		{"newest first", store.Filter{Where: where, Newest: true}, newest},
		{"newest first, second page of 4", store.Filter{Where: where, Newest: true, Limit: 4, Offset: 4}, newest[4:8]},
		{"offset without limit", store.Filter{Where: where, Offset: 3}, tube2[3:]},
		{"offset past the end", store.Filter{Where: where, Offset: len(tube2) + 5}, nil},
		{"codes", store.Filter{Codes: []string{all[7].Code, all[2].Code, "NO-SUCH"}}, []string{all[2].Code, all[7].Code}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			runs, err := l.List(ctx, tt.f)
			if err != nil {
				t.Fatalf("List: %v", err)
			}
			var got []string
			for _, r := range runs {
				got = append(got, r.Code)
			}
			if !slices.Equal(got, tt.want) {
				t.Errorf("List: got %v, want %v", got, tt.want)
			}
			n, err := l.Count(ctx, tt.f)
			if err != nil {
				t.Fatalf("Count: %v", err)
			}
			wantN := len(tube2) // Count ignores Limit and Offset
			if len(tt.f.Codes) > 0 {
				wantN = 2
			}
			if n != wantN {
				t.Errorf("Count: got %d, want %d", n, wantN)
			}
		})
	}
	if _, err := l.Count(ctx, store.Filter{Where: []string{"coverage >"}}); !errorsIs(err, store.ErrInvalid) {
		t.Errorf("Count with a broken filter: got %v, want ErrInvalid", err)
	}
}

// testListLong: a list longer than the blocks List reads in (64, 256
// and 1,024 runs: 1,400 runs, and 1,284 of them filtered) gives every run
// once, in run order (newest first with Newest), as the export does.
func testListLong(t *testing.T, open Opener) {
	l := open(t)
	ctx := context.Background()
	importRecords(t, l, Records(1400, ""))
	for _, f := range []store.Filter{{}, {Newest: true}, {Where: []string{"growth_temperature_c >= 960"}}} {
		var want []string
		err := l.Export(ctx, store.Filter{Where: f.Where}, func(rec store.RunRecord) error {
			want = append(want, rec.Code)
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		if f.Newest {
			slices.Reverse(want)
		}
		runs, err := l.List(ctx, f)
		if err != nil {
			t.Fatal(err)
		}
		got := make([]string, len(runs))
		for i, r := range runs {
			got[i] = r.Code
		}
		if len(want) <= 64+256 || !slices.Equal(got, want) {
			t.Errorf("%+v: got %d runs (%v …), want the export's %d (%v …), more than two blocks", f, len(got), got[:min(3, len(got))], len(want), want[:min(3, len(want))])
		}
	}
}
