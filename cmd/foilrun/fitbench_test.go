package main

import (
	"context"
	"path/filepath"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/benchdata/fitlog"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/store/sqlite"
)

// BenchmarkFitCommand5000 is `foilrun fit` (default settings, the table
// to a pipe) on the 5,000-run fit benchmark log (fitlog.Bundle), in
// process: the whole command but process start. Target (issue 18): the
// whole command under 0.15 s with process start.
func BenchmarkFitCommand5000(b *testing.B) {
	ctx := context.Background()
	paths, err := demolab.Lay(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	db := filepath.Join(paths.Dir, "fit.db")
	l, err := sqlite.Open(ctx, db)
	if err != nil {
		b.Fatal(err)
	}
	if err := fitlog.Write(ctx, l, paths, 5000); err != nil {
		b.Fatal(err)
	}
	l.Close()
	fit := func() string {
		var out, errb strings.Builder
		if code := run([]string{"--db", db, "fit"}, &streams{Out: &out, Err: &errb, In: strings.NewReader("")}); code != 0 {
			b.Fatalf("fit: exit %d: %s", code, errb.String())
		}
		return out.String()
	}
	fit() // the first fit derives and stores the profiles
	for b.Loop() {
		if got := fit(); !strings.Contains(got, "converged") {
			b.Fatalf("got %q, want a converged fit", got)
		}
	}
}
