package sqldb

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"slices"

	"github.com/foilrun/foilrun/store"
)

// renumber returns the runs with the code of every run whose code is in
// the log (or twice in runs) cleared, for a new one of its prefix and
// year, and kept among its aliases. The counters of the codes kept are
// moved past them first, so no new code can take one of theirs.
func (w *writer) renumber(ctx context.Context, runs []store.RunRecord) ([]store.RunRecord, error) {
	out := make([]store.RunRecord, len(runs))
	seen := map[string]bool{}
	for i, rec := range runs {
		out[i] = rec
		if rec.Code == "" {
			continue
		}
		var one int
		err := w.tx.QueryRowContext(ctx, w.s.d.Rebind(`SELECT 1 FROM runs WHERE code = ?`), rec.Code).Scan(&one)
		if err != nil && !errors.Is(err, sql.ErrNoRows) {
			return nil, fmt.Errorf("renumber run %q: %w", rec.Code, err)
		}
		if err == nil || seen[rec.Code] {
			out[i].Aliases = append(slices.Clone(rec.Aliases), rec.Code)
			out[i].CodePrefix = codePrefixOf(rec.Code)
			out[i].Code = ""
			continue
		}
		seen[rec.Code] = true
		if c, n, ok := store.ParseCode(rec.Code); ok {
			if err := w.raiseCounter(ctx, c, n); err != nil {
				return nil, fmt.Errorf("run code counter: %w", err)
			}
		}
	}
	return out, nil
}

// codePrefixOf returns the prefix of a code of our shape, "" (the
// default) for any other.
func codePrefixOf(code string) string {
	c, _, ok := store.ParseCode(code)
	if !ok {
		return ""
	}
	prefix, _, _ := store.ParseCounterName(c)
	return prefix
}
