package sqldb

import (
	"context"
	"database/sql"
	"fmt"

	"github.com/foilrun/foilrun/store"
)

var _ store.ProfileStore = (*DB)(nil)

// PutProfiles stores profiles in one transaction, each replacing the one
// stored for the same recipe, furnace and version (see store.ProfileStore).
func (s *DB) PutProfiles(ctx context.Context, ps []store.Profile) error {
	return s.writeProfiles(ctx, "store kinetics profiles", false, ps)
}

// ReplaceProfiles removes every stored profile and stores ps, in one
// transaction.
func (s *DB) ReplaceProfiles(ctx context.Context, ps []store.Profile) error {
	return s.writeProfiles(ctx, "rebuild kinetics profiles", true, ps)
}

func (s *DB) writeProfiles(ctx context.Context, op string, clear bool, ps []store.Profile) error {
	if len(ps) == 0 && !clear {
		return nil
	}
	for _, p := range ps {
		if p.Recipe == "" || p.Furnace == "" || p.Version <= 0 || len(p.Data) == 0 {
			return fmt.Errorf("%s: profile of recipe %q on furnace %q, version %d, %d bytes: want both hashes, a version above 0 and data: %w",
				op, p.Recipe, p.Furnace, p.Version, len(p.Data), store.ErrInvalid)
		}
	}
	if err := s.writable(op); err != nil {
		return err
	}
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return s.refused(op, err)
	}
	defer tx.Rollback()
	if clear {
		if _, err := tx.ExecContext(ctx, `DELETE FROM profiles`); err != nil {
			return s.refused(op, fmt.Errorf("%s: %w", op, err))
		}
	}
	b := newBatch(tx, s.d, "profiles", []string{"recipe_sha256", "furnace_sha256", "version", "data"},
		"ON CONFLICT (recipe_sha256, furnace_sha256, version) DO UPDATE SET data = excluded.data")
	defer b.close()
	for _, p := range ps {
		if err := b.add(ctx, p.Recipe, p.Furnace, p.Version, p.Data); err != nil {
			return s.refused(op, fmt.Errorf("%s: %w", op, err))
		}
	}
	if err := b.flush(ctx); err != nil {
		return s.refused(op, fmt.Errorf("%s: %w", op, err))
	}
	return s.refused(op, tx.Commit())
}

// ProfilePairs lists the recipe and furnace snapshot pairs of the log's
// runs and whether a profile of version is stored for each.
func (s *DB) ProfilePairs(ctx context.Context, version int) ([]store.SnapshotPair, error) {
	rows, err := s.db.QueryContext(ctx, s.d.Rebind(`SELECT r.recipe_sha256, r.furnace_sha256,
		EXISTS (SELECT 1 FROM profiles p WHERE p.recipe_sha256 = r.recipe_sha256 AND p.furnace_sha256 = r.furnace_sha256 AND p.version = ?)
		FROM (SELECT DISTINCT recipe_sha256, furnace_sha256 FROM runs WHERE recipe_sha256 IS NOT NULL AND furnace_sha256 IS NOT NULL) r
		ORDER BY r.recipe_sha256, r.furnace_sha256`), version)
	if err != nil {
		return nil, fmt.Errorf("read snapshot pairs: %w", err)
	}
	defer rows.Close()
	var out []store.SnapshotPair
	for rows.Next() {
		var p store.SnapshotPair
		var stored sql.NullBool
		if err := rows.Scan(&p.Recipe, &p.Furnace, &stored); err != nil {
			return nil, fmt.Errorf("read snapshot pairs: %w", err)
		}
		p.Stored = stored.Bool
		out = append(out, p)
	}
	return out, rows.Err()
}
