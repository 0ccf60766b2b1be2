package sqldb

import (
	"context"
	"database/sql"
	"errors"
	"fmt"

	"github.com/foilrun/foilrun/store"
)

// putSnapshot stores a snapshot (recipe, furnace or site file) once per
// hash, in the writer's transaction.
func (w *writer) putSnapshot(ctx context.Context, sn store.Snapshot) error {
	if w.snaps[sn.SHA256] {
		return nil
	}
	if err := sn.Verify(); err != nil {
		return fmt.Errorf("%v: %w", err, store.ErrInvalid)
	}
	created := sn.Created
	if created.IsZero() {
		created = w.s.now()
	}
	_, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`INSERT INTO snapshots (sha256, kind, name, file, content, created_at) VALUES (?, ?, ?, ?, ?, ?)
		ON CONFLICT (sha256) DO NOTHING`), sn.SHA256, sn.KindOrRecipe(), sn.Name, sn.File, sn.Content, formatTime(created))
	if err != nil {
		return fmt.Errorf("store %s snapshot: %w", sn.KindOrRecipe(), err)
	}
	w.snaps[sn.SHA256] = true
	return nil
}

func (w *writer) haveSnapshot(ctx context.Context, hash string) (bool, error) {
	if w.snaps[hash] {
		return true, nil
	}
	var one int
	err := w.tx.QueryRowContext(ctx, w.s.d.Rebind(`SELECT 1 FROM snapshots WHERE sha256 = ?`), hash).Scan(&one)
	if errors.Is(err, sql.ErrNoRows) {
		return false, nil
	}
	if err == nil {
		w.snaps[hash] = true
	}
	return err == nil, err
}
