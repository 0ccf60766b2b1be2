package sqldb

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"

	"github.com/foilrun/foilrun/store"
)

// copyTables are the tables whose rows a copy must carry over one for one.
var copyTables = []string{"runs", "snapshots", "run_params", "run_notes", "outcomes", "run_actuals", "run_deviations", "attachments", "run_overrides", "outcome_history", "run_aliases", "names"}

type digester struct {
	h hash.Hash
}

func newDigester() *digester { return &digester{h: sha256.New()} }

func (g *digester) add(v any) error {
	b, err := json.Marshal(v)
	if err != nil {
		return err
	}
	g.h.Write(b)
	g.h.Write([]byte{'\n'})
	return nil
}

// digest reads the whole log through q (one consistent read or the
// writer's transaction) and sums it up.
func (s *DB) digest(ctx context.Context, q Querier) (store.Digest, error) {
	g := newDigester()
	if err := s.export(ctx, q, "", nil, 0, func(rec store.RunRecord) error { return g.add(rec) }); err != nil {
		return store.Digest{}, err
	}
	if err := readSnapshots(ctx, q, s.d, func(sn store.Snapshot) error { return g.add(sn) }); err != nil {
		return store.Digest{}, err
	}
	d := store.Digest{Counts: map[string]int{}, SHA256: hex.EncodeToString(g.h.Sum(nil))}
	for _, t := range copyTables {
		var n int
		if err := q.QueryRowContext(ctx, "SELECT COUNT(*) FROM "+t).Scan(&n); err != nil {
			return d, fmt.Errorf("count %s: %w", t, err)
		}
		d.Counts[t] = n
	}
	return d, nil
}

// Digest sums up the whole log from one consistent read.
func (s *DB) Digest(ctx context.Context) (store.Digest, error) {
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return store.Digest{}, err
	}
	defer end()
	return s.digest(ctx, q)
}

func readSnapshots(ctx context.Context, q Querier, d Dialect, each func(store.Snapshot) error) error {
	rows, err := q.QueryContext(ctx, `SELECT sha256, kind, name, file, content, created_at FROM snapshots ORDER BY sha256`)
	if err != nil {
		return fmt.Errorf("read snapshots: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		var sn store.Snapshot
		var created sql.NullString
		if err := rows.Scan(&sn.SHA256, &sn.Kind, &sn.Name, &sn.File, &sn.Content, &created); err != nil {
			return err
		}
		if sn.Created, err = parseTime(created); err != nil {
			return err
		}
		if err := each(sn); err != nil {
			return err
		}
	}
	return rows.Err()
}

// Copy copies the whole of src (every snapshot, run and counter) into
// dst, which must hold no runs and no snapshots, in one transaction on
// dst. Before it commits it reads the copy back inside that transaction
// and compares its Digest with src's, taken from the same consistent read
// the copy came from; on any difference, error or cancellation nothing is
// written, and a killed process leaves dst as empty as it was. progress,
// when not nil, is called with the runs copied so far. It returns the
// digest both sides share.
func Copy(ctx context.Context, dst, src *DB, progress func(done, total int)) (store.Digest, error) {
	q, end, err := src.d.Read(ctx, src.db)
	if err != nil {
		return store.Digest{}, fmt.Errorf("copy: read the source: %w", err)
	}
	defer end()
	var total int
	if err := q.QueryRowContext(ctx, `SELECT COUNT(*) FROM runs`).Scan(&total); err != nil {
		return store.Digest{}, fmt.Errorf("copy: read the source: %w", err)
	}
	w, err := dst.begin(ctx)
	if err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", dst.refused("copy into the target", err))
	}
	defer w.rollback()
	var runs, snaps int
	if err := w.tx.QueryRowContext(ctx, `SELECT (SELECT COUNT(*) FROM runs), (SELECT COUNT(*) FROM snapshots)`).Scan(&runs, &snaps); err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", err)
	}
	if runs > 0 || snaps > 0 {
		return store.Digest{}, fmt.Errorf("copy: the target already holds %d runs and %d recipe snapshots; db copy writes only into an empty log: %w", runs, snaps, store.ErrConflict)
	}
	endBulk, err := dst.d.Bulk(ctx, w.tx, total)
	if err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", err)
	}
	// snapshots first, hashed in hash order
	var snapList []store.Snapshot
	if err := readSnapshots(ctx, q, src.d, func(sn store.Snapshot) error {
		snapList = append(snapList, sn)
		return w.putSnapshot(ctx, sn)
	}); err != nil {
		return store.Digest{}, fmt.Errorf("copy snapshots: %w", err)
	}
	// runs, hashed as they pass
	g := newDigester()
	done := 0
	err = src.export(ctx, q, "", nil, 0, func(rec store.RunRecord) error {
		if err := g.add(rec); err != nil {
			return err
		}
		if err := w.queue(ctx, rec); err != nil {
			return fmt.Errorf("run %s: %w", rec.Code, err)
		}
		done++
		if progress != nil && done%1000 == 0 {
			progress(done, total)
		}
		return ctx.Err()
	})
	if err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", err)
	}
	if _, err := w.flushRuns(ctx); err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", err)
	}
	for _, sn := range snapList {
		if err := g.add(sn); err != nil {
			return store.Digest{}, err
		}
	}
	if err := copyCounters(ctx, q, w); err != nil {
		return store.Digest{}, fmt.Errorf("copy counters: %w", err)
	}
	for _, bt := range w.batches() {
		if err := bt.flush(ctx); err != nil {
			return store.Digest{}, fmt.Errorf("copy: %w", err)
		}
	}
	if err := w.summarise(ctx); err != nil {
		return store.Digest{}, err
	}
	if err := endBulk(ctx); err != nil {
		return store.Digest{}, fmt.Errorf("copy: %w", err)
	}
	want := store.Digest{Counts: map[string]int{}, SHA256: hex.EncodeToString(g.h.Sum(nil))}
	for _, t := range copyTables {
		var n int
		if err := q.QueryRowContext(ctx, "SELECT COUNT(*) FROM "+t).Scan(&n); err != nil {
			return store.Digest{}, fmt.Errorf("copy: count source %s: %w", t, err)
		}
		want.Counts[t] = n
	}
	got, err := dst.digest(ctx, w.tx)
	if err != nil {
		return store.Digest{}, fmt.Errorf("copy: read the copy back: %w", err)
	}
	if diff := want.Diff(got); diff != "" {
		return store.Digest{}, fmt.Errorf("copy: the copy differs from the source (%s); nothing was written", diff)
	}
	if progress != nil {
		progress(done, total)
	}
	if err := w.commit(ctx); err != nil {
		return store.Digest{}, fmt.Errorf("copy: commit: %w", err)
	}
	return got, nil
}

// copyCounters carries the code counters over (each at least as far as
// the codes copied already moved it). A counter that holds no number in
// range is left behind: the codes copied set the target's counter.
func copyCounters(ctx context.Context, q Querier, w *writer) error {
	rows, err := q.QueryContext(ctx, `SELECT name, CAST(value AS TEXT) FROM counters ORDER BY name`)
	if err != nil {
		return err
	}
	type counter struct {
		name string
		v    int64
	}
	var cs []counter
	for rows.Next() {
		var name string
		var stored sql.NullString
		if err := rows.Scan(&name, &stored); err != nil {
			rows.Close()
			return err
		}
		if v, err := store.ParseCounter(stored.String); err == nil {
			cs = append(cs, counter{name, v})
		}
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	for _, c := range cs {
		if err := w.raiseCounter(ctx, c.name, c.v); err != nil {
			return err
		}
	}
	return nil
}
