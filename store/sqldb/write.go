package sqldb

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// writer writes runs and their rows inside one transaction.
type writer struct {
	s     *DB
	tx    *sql.Tx
	names map[string]store.Name // the names registry, loaded once
	snaps map[string]bool       // snapshot hashes known to be stored

	params, outcomes, notes, actuals, deviations, attachments, newNames *batch
	insertRun, counter                                                  *sql.Stmt
}

func (s *DB) begin(ctx context.Context) (*writer, error) {
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return nil, err
	}
	w := &writer{s: s, tx: tx, snaps: map[string]bool{}}
	d := s.d
	w.params = newBatch(tx, d, "run_params", []string{"run_id", "name", "value"}, "")
	w.outcomes = newBatch(tx, d, "outcomes", []string{"run_id", "metric", "value", "unit", "entered", "method", "measured_at"}, "")
	w.notes = newBatch(tx, d, "run_notes", []string{"run_id", "at", "text"}, "")
	w.actuals = newBatch(tx, d, "run_actuals", []string{"run_id", "step", "label", "quantity", "unit", "planned", "mean", "min", "max", "samples"}, "")
	w.deviations = newBatch(tx, d, "run_deviations", []string{"run_id", "step", "label", "quantity", "unit", "planned", "actual", "tolerance", "message"}, "")
	w.attachments = newBatch(tx, d, "attachments", []string{"run_id", "path", "sha256", "kind", "added_at"}, "")
	w.newNames = newBatch(tx, d, "names", []string{"name", "kind", "unit"}, "ON CONFLICT (name) DO NOTHING")
	if err := w.loadNames(ctx); err != nil {
		w.rollback()
		return nil, err
	}
	return w, nil
}

func (w *writer) batches() []*batch {
	return []*batch{w.params, w.outcomes, w.notes, w.actuals, w.deviations, w.attachments, w.newNames}
}

func (w *writer) rollback() {
	for _, b := range w.batches() {
		b.close()
	}
	for _, st := range []*sql.Stmt{w.insertRun, w.counter} {
		if st != nil {
			st.Close()
		}
	}
	w.tx.Rollback()
}

func (w *writer) commit(ctx context.Context) error {
	defer w.rollback() // after a commit only closes statements
	for _, b := range w.batches() {
		if err := b.flush(ctx); err != nil {
			return err
		}
	}
	return w.tx.Commit()
}

func (w *writer) loadNames(ctx context.Context) error {
	w.names = map[string]store.Name{}
	rows, err := w.tx.QueryContext(ctx, `SELECT name, kind, unit FROM names`)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		var n store.Name
		if err := rows.Scan(&n.Name, &n.Kind, &n.Unit); err != nil {
			return err
		}
		w.names[n.Name] = n
	}
	return rows.Err()
}

// register checks a parameter or metric name against the registry (a name
// is either a parameter or a metric; a metric keeps one unit) and adds it
// when new.
func (w *writer) register(ctx context.Context, name, kind, unit string) error {
	if n, ok := w.names[name]; ok {
		switch {
		case n.Kind != kind:
			return fmt.Errorf("%q is logged as a %s, not a %s: %w", name, n.Kind, kind, store.ErrInvalid)
		case kind == store.NameMetric && n.Unit != unit:
			return fmt.Errorf("metric %q is logged in %q, not %q; give it in %s: %w", name, n.Unit, unit, n.Unit, store.ErrInvalid)
		}
		return nil
	}
	if kind == store.NameMetric && recipe.IsParameter(name) {
		return fmt.Errorf("%q is a recipe parameter, not a measured outcome: %w", name, store.ErrInvalid)
	}
	if kind == store.NameParam && (name == "" || strings.ContainsAny(name, " \t\n")) {
		return fmt.Errorf("parameter name %q: want a snake-case name: %w", name, store.ErrInvalid)
	}
	w.names[name] = store.Name{Name: name, Kind: kind, Unit: unit}
	return w.newNames.add(ctx, name, kind, unit)
}

// runID returns the id and status of the run with the code.
func (w *writer) runID(ctx context.Context, code string) (int64, store.Status, error) {
	var id int64
	var st string
	err := w.tx.QueryRowContext(ctx, w.s.d.Rebind(`SELECT id, status FROM runs WHERE code = ?`), code).Scan(&id, &st)
	if errors.Is(err, sql.ErrNoRows) {
		return 0, "", fmt.Errorf("run %q: %w", code, store.ErrNotFound)
	}
	return id, store.Status(st), err
}

// nextCode takes the next number of the year's counter, in the writer's
// transaction.
func (w *writer) nextCode(ctx context.Context) (string, error) {
	now := w.s.now()
	if w.counter == nil {
		var err error
		w.counter, err = w.tx.PrepareContext(ctx, w.s.d.Rebind(`INSERT INTO counters (name, value) VALUES (?, 1)
			ON CONFLICT (name) DO UPDATE SET value = counters.value + 1 RETURNING value`))
		if err != nil {
			return "", fmt.Errorf("next run code: %w", err)
		}
	}
	var n int64
	if err := w.counter.QueryRowContext(ctx, store.CodeCounter(now)).Scan(&n); err != nil {
		return "", fmt.Errorf("next run code: %w", err)
	}
	return store.FormatCode(now, n), nil
}

// bumpCounter makes sure the counter of an imported code's year is past
// the code's number.
func (w *writer) bumpCounter(ctx context.Context, code string) error {
	counter, n, ok := store.ParseCode(code)
	if !ok {
		return nil
	}
	_, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`INSERT INTO counters (name, value) VALUES (?, ?)
		ON CONFLICT (name) DO UPDATE SET value = CASE WHEN excluded.value > counters.value THEN excluded.value ELSE counters.value END`), counter, n)
	return err
}

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
	_, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`INSERT INTO snapshots (sha256, name, file, content, created_at) VALUES (?, ?, ?, ?, ?)
		ON CONFLICT (sha256) DO NOTHING`), sn.SHA256, sn.Name, sn.File, sn.Content, formatTime(created))
	if err != nil {
		return fmt.Errorf("store recipe snapshot: %w", err)
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

// addRun inserts a run and all its rows; it returns the code.
func (w *writer) addRun(ctx context.Context, rec store.RunRecord) (string, error) {
	if rec.Status == "" {
		rec.Status = store.Running
	}
	if !rec.Status.Valid() {
		return "", fmt.Errorf("run %q: status %q: want planned, running, done or aborted: %w", rec.Code, rec.Status, store.ErrInvalid)
	}
	if rec.RecipeHash != "" {
		ok, err := w.haveSnapshot(ctx, rec.RecipeHash)
		if err != nil {
			return "", err
		}
		if !ok {
			return "", fmt.Errorf("run %q: recipe snapshot %.12s is neither given nor in the log: %w", rec.Code, rec.RecipeHash, store.ErrInvalid)
		}
	}
	var err error
	if rec.Code == "" {
		if rec.Code, err = w.nextCode(ctx); err != nil {
			return "", err
		}
	} else if err := w.bumpCounter(ctx, rec.Code); err != nil {
		return "", err
	}
	created := rec.Created
	if created.IsZero() {
		created = w.s.now()
	}
	if w.insertRun == nil {
		w.insertRun, err = w.tx.PrepareContext(ctx, w.s.d.Rebind(`INSERT INTO runs (code, status, recipe_sha256, recipe_name, furnace, operator, lot, started_at, ended_at, created_at)
			VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT (code) DO NOTHING RETURNING id`))
		if err != nil {
			return "", err
		}
	}
	var id int64
	err = w.insertRun.QueryRowContext(ctx, rec.Code, string(rec.Status), nullString(rec.RecipeHash), rec.RecipeName, rec.Furnace, rec.Operator, rec.Lot,
		nullTime(rec.Started), nullTime(rec.Ended), formatTime(created)).Scan(&id)
	if errors.Is(err, sql.ErrNoRows) {
		return "", fmt.Errorf("run code %q is already in the log: %w", rec.Code, store.ErrConflict)
	}
	if err != nil {
		return "", fmt.Errorf("run %q: %w", rec.Code, err)
	}
	for name, v := range rec.Params {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		if err := w.register(ctx, name, store.NameParam, ""); err != nil {
			return "", fmt.Errorf("run %q: %w", rec.Code, err)
		}
		if err := w.params.add(ctx, id, name, v); err != nil {
			return "", err
		}
	}
	for _, n := range rec.Notes {
		if err := w.addNote(ctx, id, n); err != nil {
			return "", err
		}
	}
	if err := w.addOutcomes(ctx, id, rec.Code, rec.Outcomes); err != nil {
		return "", err
	}
	if err := w.addActuals(ctx, id, rec.Actuals, rec.Deviations); err != nil {
		return "", err
	}
	for _, a := range rec.Attachments {
		if err := w.addAttachment(ctx, id, a); err != nil {
			return "", err
		}
	}
	return rec.Code, nil
}

func (w *writer) addNote(ctx context.Context, id int64, n store.Note) error {
	at := n.At
	if at.IsZero() {
		at = w.s.now()
	}
	return w.notes.add(ctx, id, formatTime(at), n.Text)
}

func (w *writer) addOutcomes(ctx context.Context, id int64, code string, os []store.Outcome) error {
	for _, o := range os {
		if math.IsNaN(o.Value) || math.IsInf(o.Value, 0) {
			return fmt.Errorf("run %q: outcome %s: value %g is not finite: %w", code, o.Metric, o.Value, store.ErrInvalid)
		}
		if m, ok := store.MetricByName(o.Metric); ok && o.Unit != m.Unit {
			return fmt.Errorf("run %q: outcome %s is in %s, not %q: %w", code, o.Metric, m.Unit, o.Unit, store.ErrInvalid)
		}
		if err := w.register(ctx, o.Metric, store.NameMetric, o.Unit); err != nil {
			return fmt.Errorf("run %q: %w", code, err)
		}
		if err := w.outcomes.add(ctx, id, o.Metric, o.Value, o.Unit, o.Entered, o.Method, nullTime(o.Measured)); err != nil {
			return err
		}
	}
	return nil
}

func (w *writer) addActuals(ctx context.Context, id int64, as []store.Actual, ds []store.Deviation) error {
	for _, a := range as {
		if err := w.actuals.add(ctx, id, a.Step, a.Label, a.Quantity, a.Unit, nullFloat(float64(a.Planned)),
			nullFloat(a.Mean), nullFloat(a.Min), nullFloat(a.Max), a.Samples); err != nil {
			return err
		}
	}
	for _, d := range ds {
		if err := w.deviations.add(ctx, id, d.Step, d.Label, d.Quantity, d.Unit, nullFloat(d.Planned), nullFloat(d.Actual),
			nullFloat(d.Tolerance), d.Message); err != nil {
			return err
		}
	}
	return nil
}

func (w *writer) addAttachment(ctx context.Context, id int64, a store.Attachment) error {
	added := a.Added
	if added.IsZero() {
		added = w.s.now()
	}
	return w.attachments.add(ctx, id, a.Path, a.SHA256, a.Kind, formatTime(added))
}

// CreateRun logs a new run; see store.RunLog.
func (s *DB) CreateRun(ctx context.Context, rec store.RunRecord, snap *store.Snapshot) (string, error) {
	w, err := s.begin(ctx)
	if err != nil {
		return "", err
	}
	defer w.rollback()
	if snap != nil {
		if err := w.putSnapshot(ctx, *snap); err != nil {
			return "", err
		}
		rec.RecipeHash = snap.SHA256
		if rec.RecipeName == "" {
			rec.RecipeName = snap.Name
		}
	}
	code, err := w.addRun(ctx, rec)
	if err != nil {
		return "", err
	}
	return code, w.commit(ctx)
}

// AddNote adds a note to a run.
func (s *DB) AddNote(ctx context.Context, code string, n store.Note) error {
	return s.onRun(ctx, code, func(w *writer, id int64, _ store.Status) error { return w.addNote(ctx, id, n) })
}

// AddOutcomes adds outcomes to a run, all or none.
func (s *DB) AddOutcomes(ctx context.Context, code string, os []store.Outcome) error {
	return s.onRun(ctx, code, func(w *writer, id int64, _ store.Status) error { return w.addOutcomes(ctx, id, code, os) })
}

// AddAttachment records a file of a run.
func (s *DB) AddAttachment(ctx context.Context, code string, a store.Attachment) error {
	return s.onRun(ctx, code, func(w *writer, id int64, _ store.Status) error { return w.addAttachment(ctx, id, a) })
}

// FinishRun ends a planned or running run.
func (s *DB) FinishRun(ctx context.Context, code string, f store.Finish) error {
	if f.Status != store.Done && f.Status != store.Aborted {
		return fmt.Errorf("finish run %q: status %q: want done or aborted: %w", code, f.Status, store.ErrInvalid)
	}
	return s.onRun(ctx, code, func(w *writer, id int64, st store.Status) error {
		if st.Finished() {
			return fmt.Errorf("run %q is already %s: %w", code, st, store.ErrConflict)
		}
		ended := f.Ended
		if ended.IsZero() {
			ended = s.now()
		}
		if _, err := w.tx.ExecContext(ctx, s.d.Rebind(`UPDATE runs SET status = ?, ended_at = ? WHERE id = ?`), string(f.Status), formatTime(ended), id); err != nil {
			return err
		}
		if f.Note != "" {
			if err := w.addNote(ctx, id, store.Note{At: ended, Text: f.Note}); err != nil {
				return err
			}
		}
		return w.addActuals(ctx, id, f.Actuals, f.Deviations)
	})
}

// onRun runs fn on the run with the code in one transaction.
func (s *DB) onRun(ctx context.Context, code string, fn func(w *writer, id int64, st store.Status) error) error {
	w, err := s.begin(ctx)
	if err != nil {
		return err
	}
	defer w.rollback()
	id, st, err := w.runID(ctx, code)
	if err != nil {
		return err
	}
	if err := fn(w, id, st); err != nil {
		return err
	}
	return w.commit(ctx)
}

// Import adds the bundle's snapshots and runs in one transaction.
func (s *DB) Import(ctx context.Context, b store.Bundle, progress func(int)) (int, error) {
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
	for i, rec := range b.Runs {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		if _, err := w.addRun(ctx, rec); err != nil {
			return 0, fmt.Errorf("import run %d of %d: %w", i+1, len(b.Runs), err)
		}
		if progress != nil && (i+1)%500 == 0 {
			progress(i + 1)
		}
	}
	for _, bt := range w.batches() {
		if err := bt.flush(ctx); err != nil {
			return 0, err
		}
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
