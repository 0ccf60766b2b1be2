package sqldb

import (
	"context"
	"errors"
	"fmt"

	"github.com/foilrun/foilrun/store"
)

// Import adds the bundle's snapshots and runs in one transaction.
func (s *DB) Import(ctx context.Context, b store.Bundle, progress func(int)) (int, error) {
	n, err := s.importBundle(ctx, b, progress)
	return n, s.refused("import", err)
}

func (s *DB) importBundle(ctx context.Context, b store.Bundle, progress func(int)) (int, error) {
	if err := b.ValidateImport(s.now()); err != nil {
		return 0, err
	}
	w, err := s.begin(ctx)
	if err != nil {
		return 0, err
	}
	defer w.rollback()
	endBulk, err := s.d.Bulk(ctx, w.tx, len(b.Runs))
	if err != nil {
		return 0, fmt.Errorf("import: %w", err)
	}
	for _, sn := range b.Snapshots {
		if err := w.putSnapshot(ctx, sn); err != nil {
			return 0, err
		}
	}
	if b.Renumber {
		if b.Runs, err = w.renumber(ctx, b.Runs); err != nil {
			return 0, err
		}
	}
	for i, rec := range b.Runs {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		if err := w.queue(ctx, rec); err != nil {
			return 0, importError(err, i+1, len(b.Runs))
		}
		if progress != nil && (i+1)%500 == 0 {
			progress(i + 1)
		}
	}
	if _, err := w.flushRuns(ctx); err != nil {
		return 0, importError(err, len(b.Runs), len(b.Runs))
	}
	for _, bt := range w.batches() {
		if err := bt.flush(ctx); err != nil {
			return 0, err
		}
	}
	if err := w.summarise(ctx); err != nil {
		return 0, err
	}
	if err := endBulk(ctx); err != nil {
		return 0, fmt.Errorf("import: %w", err)
	}
	if err := w.commit(ctx); err != nil {
		return 0, err
	}
	if progress != nil {
		progress(len(b.Runs))
	}
	return len(b.Runs), nil
}

// importError names the run of an import that failed (a write error
// found when a batch is written names the run it belongs to).
func importError(err error, n, total int) error {
	var re *runError
	if errors.As(err, &re) {
		n = re.n
	}
	return fmt.Errorf("import run %d of %d: %w", n, total, err)
}
