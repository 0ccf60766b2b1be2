package storetest

import (
	"context"
	"errors"
	"fmt"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// renumberLog opens a log and logs, on 1 June 2026, runs of the codes'
// prefixes: len(prefixes) runs, the i-th with operator name-i, so a run
// can be told apart after its code changed.
func renumberLog(t *testing.T, open Opener, name string, prefixes ...string) store.RunLog {
	t.Helper()
	l := open(t)
	setClock(t, l, time.Date(2026, 6, 1, 8, 0, 0, 0, time.UTC))
	for i, p := range prefixes {
		_, err := l.CreateRun(context.Background(), store.RunRecord{Run: store.Run{Operator: fmt.Sprintf("%s-%d", name, i+1), CodePrefix: p}})
		must(t, err)
	}
	return l
}

// testRenumber: two logs that both start at G26-0001 (and T226-0001)
// merge with Bundle.Renumber into one with the sum of their runs; the
// clashing runs get the next free codes of their prefix and year (after
// the codes kept, which move the counter first), and every old code
// resolves to its run, by its code when kept or by Renamed when not.
// Without Renumber the same import is a conflict that changes nothing.
func testRenumber(t *testing.T, open Opener) {
	ctx := context.Background()
	a := renumberLog(t, open, "a", "", "", "", "T2")
	b := renumberLog(t, open, "b", "", "", "", "", "T2")
	var bundle store.Bundle
	must(t, b.Export(ctx, store.Filter{}, func(rec store.RunRecord) error {
		bundle.Runs = append(bundle.Runs, rec)
		return nil
	}))
	if len(bundle.Runs) != 5 {
		t.Fatalf("log b exported %d runs, want 5", len(bundle.Runs))
	}
	before := Fingerprint(t, a)
	if _, err := a.Import(ctx, bundle, nil); !errors.Is(err, store.ErrConflict) {
		t.Errorf("import of clashing codes without renumbering: got %v, want ErrConflict", err)
	}
	if Fingerprint(t, a) != before {
		t.Errorf("a refused import changed the log")
	}
	bundle.Renumber = true
	n, err := a.Import(ctx, bundle, nil)
	must(t, err)
	runs, err := a.List(ctx, store.Filter{})
	must(t, err)
	if n != 5 || len(runs) != 9 {
		t.Fatalf("renumbered import: got %d imported, %d in the log; want 5 and 4+5 = 9", n, len(runs))
	}
	// log b's runs: G26-0001…0004 and T226-0001. 0004 is free in a and
	// kept; the others clash and follow the highest code of their counter.
	want := []struct{ old, code, operator string }{
		{"G26-0001", "G26-0005", "b-1"},
		{"G26-0002", "G26-0006", "b-2"},
		{"G26-0003", "G26-0007", "b-3"},
		{"G26-0004", "G26-0004", "b-4"},
		{"T226-0001", "T226-0002", "b-5"},
	}
	for _, w := range want {
		t.Run(w.old, func(t *testing.T) {
			code := w.old
			if w.code != w.old {
				renamed, err := a.Renamed(ctx, w.old)
				must(t, err)
				if len(renamed) != 1 || renamed[0] != w.code {
					t.Fatalf("Renamed(%s): got %v, want [%s]", w.old, renamed, w.code)
				}
				code = renamed[0]
			}
			rec, err := a.Record(ctx, code)
			must(t, err)
			if rec.Operator != w.operator {
				t.Errorf("run %s (was %s): got operator %q, want %q", code, w.old, rec.Operator, w.operator)
			}
			if wantAliases := w.code != w.old; wantAliases != (len(rec.Aliases) == 1 && rec.Aliases[0] == w.old) {
				t.Errorf("run %s: got aliases %v, want [%s] only when renumbered", code, rec.Aliases, w.old)
			}
		})
	}
	for _, kept := range []struct{ code, operator string }{{"G26-0001", "a-1"}, {"T226-0001", "a-4"}} {
		rec, err := a.Record(ctx, kept.code)
		must(t, err)
		if rec.Operator != kept.operator || len(rec.Aliases) != 0 {
			t.Errorf("log a's run %s: got operator %q aliases %v, want %q and none", kept.code, rec.Operator, rec.Aliases, kept.operator)
		}
	}
	if probs, err := a.Check(ctx); err != nil || len(probs) != 0 {
		t.Errorf("Check after the merge: got %v %v, want no problems", probs, err)
	}
}
