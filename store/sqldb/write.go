package sqldb

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
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

	params, outcomes, notes, actuals, deviations, attachments, overrides, corrections, aliases, newNames *batch

	runStmts map[int]*sql.Stmt // INSERT of n runs
	pending  []queued          // checked runs not yet inserted
	seq      int               // runs queued so far
	touched  []int64           // runs whose summary commit rewrites
}

func (s *DB) begin(ctx context.Context) (*writer, error) {
	if err := s.writable("write"); err != nil {
		return nil, err
	}
	tx, err := s.db.BeginTx(ctx, nil)
	if err != nil {
		return nil, err
	}
	w := &writer{s: s, tx: tx, snaps: map[string]bool{}, runStmts: map[int]*sql.Stmt{}}
	d := s.d
	w.params = newBatch(tx, d, "run_params", []string{"run_id", "name", "value"}, "")
	w.outcomes = newBatch(tx, d, "outcomes", []string{"run_id", "metric", "value", "unit", "entered", "method", "measured_at"}, "")
	w.notes = newBatch(tx, d, "run_notes", []string{"run_id", "at", "text"}, "")
	w.actuals = newBatch(tx, d, "run_actuals", []string{"run_id", "step", "label", "quantity", "unit", "planned", "mean", "min", "max", "samples"}, "")
	w.deviations = newBatch(tx, d, "run_deviations", []string{"run_id", "step", "label", "quantity", "unit", "planned", "actual", "tolerance", "message"}, "")
	w.attachments = newBatch(tx, d, "attachments", []string{"run_id", "path", "sha256", "kind", "added_at"}, "")
	w.overrides = newBatch(tx, d, "run_overrides", []string{"run_id", "reason", "operator", "at", "findings"}, "")
	w.corrections = newBatch(tx, d, "outcome_history", []string{"run_id", "metric", "unit", "old_value", "old_entered", "new_value", "new_entered", "who", "at"}, "")
	w.aliases = newBatch(tx, d, "run_aliases", []string{"run_id", "alias"}, "")
	w.newNames = newBatch(tx, d, "names", []string{"name", "kind", "unit"}, "ON CONFLICT (name) DO NOTHING")
	if err := w.loadNames(ctx); err != nil {
		w.rollback()
		return nil, err
	}
	return w, nil
}

func (w *writer) batches() []*batch {
	return []*batch{w.params, w.outcomes, w.notes, w.actuals, w.deviations, w.attachments, w.overrides, w.corrections, w.aliases, w.newNames}
}

func (w *writer) rollback() {
	for _, b := range w.batches() {
		b.close()
	}
	for _, st := range w.runStmts {
		st.Close()
	}
	w.tx.Rollback()
}

func (w *writer) commit(ctx context.Context) error {
	defer w.rollback() // after a commit only closes statements
	if _, err := w.flushRuns(ctx); err != nil {
		return err
	}
	for _, b := range w.batches() {
		if err := b.flush(ctx); err != nil {
			return err
		}
	}
	if err := w.summarise(ctx); err != nil {
		return err
	}
	return w.tx.Commit()
}

// summarise rewrites the summary of the runs touched so far (commit does
// it for the rest); a bulk write calls it before its end, so that the
// end can see the summary (PostgreSQL's ANALYZE of it).
func (w *writer) summarise(ctx context.Context) error {
	err := summarise(ctx, w.tx, w.s.d, w.touched)
	w.touched = w.touched[:0]
	return err
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

// runBatch is how many runs one INSERT writes.
const runBatch = 100

// queued is a checked run waiting for its INSERT; n is its place in the
// caller's input (for messages), from 1.
type queued struct {
	rec store.RunRecord
	n   int
}

// queue checks a run and everything in it and queues it for writing; a
// full queue is written (flushRuns).
func (w *writer) queue(ctx context.Context, rec store.RunRecord) error {
	if err := rec.Validate(w.s.now()); err != nil {
		return err
	}
	if rec.Status == "" {
		rec.Status = store.Running
	}
	for _, h := range []struct{ kind, hash string }{{store.SnapshotRecipe, rec.RecipeHash}, {store.SnapshotFurnace, rec.FurnaceHash}, {store.SnapshotSite, rec.SiteHash}} {
		if h.hash == "" {
			continue
		}
		ok, err := w.haveSnapshot(ctx, h.hash)
		if err != nil {
			return err
		}
		if !ok {
			return fmt.Errorf("run %q: %s snapshot %.12s is neither given nor in the log: %w", rec.Code, h.kind, h.hash, store.ErrInvalid)
		}
	}
	for name := range rec.Params {
		if err := w.register(ctx, name, store.NameParam, ""); err != nil {
			return fmt.Errorf("run %q: %w", rec.Code, err)
		}
	}
	if err := w.checkOutcomes(ctx, rec.Code, rec.Outcomes); err != nil {
		return err
	}
	w.seq++
	w.pending = append(w.pending, queued{rec, w.seq})
	if len(w.pending) == runBatch {
		_, err := w.flushRuns(ctx)
		return err
	}
	return nil
}

// flushRuns writes the queued runs: codes for those without one from one
// counter update, every given code's counter moved past it, one
// multi-row INSERT … RETURNING id, code, and their rows into the batches.
// It returns the codes in queue order.
func (w *writer) flushRuns(ctx context.Context) ([]string, error) {
	q := w.pending
	if len(q) == 0 {
		return nil, nil
	}
	w.pending = w.pending[:0]
	now := w.s.now()
	need := map[string]int{} // new codes per counter
	raise := map[string]int64{}
	for _, p := range q {
		if p.rec.Code == "" {
			need[store.CodeCounter(p.rec.CodePrefix, store.CodeTime(p.rec.Started, now))]++
		} else if c, n, ok := store.ParseCode(p.rec.Code); ok && n > raise[c] {
			raise[c] = n
		}
	}
	names := make([]string, 0, len(raise))
	for c := range raise {
		names = append(names, c)
	}
	sort.Strings(names)
	for _, c := range names {
		if err := w.raiseCounter(ctx, c, raise[c]); err != nil {
			return nil, fmt.Errorf("run code counter: %w", err)
		}
	}
	counters := make([]string, 0, len(need))
	for c := range need {
		counters = append(counters, c)
	}
	sort.Strings(counters)
	for _, c := range counters {
		next, err := w.reserveCodes(ctx, c, need[c])
		if err != nil {
			return nil, err
		}
		for i := range q {
			t := store.CodeTime(q[i].rec.Started, now)
			if q[i].rec.Code == "" && store.CodeCounter(q[i].rec.CodePrefix, t) == c {
				q[i].rec.Code = store.FormatCode(q[i].rec.CodePrefix, t, next)
				next++
			}
		}
	}
	st, err := w.runStmt(ctx, len(q))
	if err != nil {
		return nil, err
	}
	args := make([]any, 0, len(q)*runColumns)
	for _, p := range q {
		r := p.rec
		created := r.Created
		if created.IsZero() {
			created = now
		}
		args = append(args, r.Code, string(r.Status), nullString(r.RecipeHash), r.RecipeName, r.Furnace, r.Operator, r.Lot,
			nullTime(r.Started), nullTime(r.Ended), formatTime(created), nullString(r.FurnaceHash), nullString(r.SiteHash), r.Source)
	}
	rows, err := st.QueryContext(ctx, args...)
	if err != nil {
		return nil, fmt.Errorf("insert runs: %w", err)
	}
	ids := make(map[string]int64, len(q))
	for rows.Next() {
		var id int64
		var code string
		if err := rows.Scan(&id, &code); err != nil {
			rows.Close()
			return nil, err
		}
		ids[code] = id
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("insert runs: %w", err)
	}
	codes := make([]string, len(q))
	for i, p := range q {
		id, ok := ids[p.rec.Code]
		if !ok {
			return nil, &runError{p.n, fmt.Errorf("run code %q is already in the log: %w", p.rec.Code, store.ErrConflict)}
		}
		delete(ids, p.rec.Code) // a code twice in one batch: the second has no row
		codes[i] = p.rec.Code
		w.touched = append(w.touched, id)
		if err := w.addRows(ctx, id, p.rec); err != nil {
			return nil, &runError{p.n, err}
		}
	}
	return codes, nil
}

// runError says which run of the caller's input failed.
type runError struct {
	n   int
	err error
}

func (e *runError) Error() string { return e.err.Error() }
func (e *runError) Unwrap() error { return e.err }

// runColumns is how many columns one run's INSERT sets.
const runColumns = 13

// runStmt returns the prepared INSERT of n runs.
func (w *writer) runStmt(ctx context.Context, n int) (*sql.Stmt, error) {
	if st, ok := w.runStmts[n]; ok {
		return st, nil
	}
	var b strings.Builder
	b.WriteString(`INSERT INTO runs (code, status, recipe_sha256, recipe_name, furnace, operator, lot, started_at, ended_at, created_at, furnace_sha256, site_sha256, source) VALUES `)
	row := "(?" + strings.Repeat(", ?", runColumns-1) + ")"
	for i := 0; i < n; i++ {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(row)
	}
	b.WriteString(" ON CONFLICT (code) DO NOTHING RETURNING id, code")
	st, err := w.tx.PrepareContext(ctx, w.s.d.Rebind(b.String()))
	if err != nil {
		return nil, err
	}
	w.runStmts[n] = st
	return st, nil
}

// addRows queues the rows of a run just inserted with the id.
func (w *writer) addRows(ctx context.Context, id int64, rec store.RunRecord) error {
	for name, v := range rec.Params {
		if err := w.params.add(ctx, id, name, v); err != nil {
			return err
		}
	}
	for _, n := range rec.Notes {
		if err := w.addNote(ctx, id, n); err != nil {
			return err
		}
	}
	for _, o := range rec.Outcomes {
		if err := w.outcomes.add(ctx, id, o.Metric, o.Value, o.Unit, o.Entered, o.Method, nullTime(o.Measured)); err != nil {
			return err
		}
	}
	if err := w.addActuals(ctx, id, rec.Actuals, rec.Deviations); err != nil {
		return err
	}
	for _, a := range rec.Attachments {
		if err := w.addAttachment(ctx, id, a); err != nil {
			return err
		}
	}
	for _, c := range rec.Corrections {
		if err := w.addCorrection(ctx, id, c); err != nil {
			return err
		}
	}
	for _, a := range rec.Aliases {
		if err := w.aliases.add(ctx, id, a); err != nil {
			return err
		}
	}
	if o := rec.Override; o != nil {
		fs, err := json.Marshal(o.Findings)
		if err != nil {
			return err
		}
		return w.overrides.add(ctx, id, o.Reason, o.Operator, nullTime(o.At), string(fs))
	}
	return nil
}

func (w *writer) addNote(ctx context.Context, id int64, n store.Note) error {
	if err := n.Validate(w.s.now()); err != nil {
		return fmt.Errorf("note: %v: %w", err, store.ErrInvalid)
	}
	at := n.At
	if at.IsZero() {
		at = w.s.now()
	}
	return w.notes.add(ctx, id, formatTime(at), n.Text)
}

// checkOutcomes checks outcomes (store.Outcome.Validate: names, finite
// values in range, known metrics in their unit; one unit per metric) and
// registers new metric names.
func (w *writer) checkOutcomes(ctx context.Context, code string, os []store.Outcome) error {
	for _, o := range os {
		if err := o.Validate(w.s.now()); err != nil {
			return fmt.Errorf("run %q: outcome %s: %v: %w", code, o.Metric, err, store.ErrInvalid)
		}
		if err := w.register(ctx, o.Metric, store.NameMetric, o.Unit); err != nil {
			return fmt.Errorf("run %q: %w", code, err)
		}
	}
	return nil
}

func (w *writer) addOutcomes(ctx context.Context, id int64, code string, os []store.Outcome) error {
	if err := w.checkOutcomes(ctx, code, os); err != nil {
		return err
	}
	for _, o := range os {
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
	if err := a.Validate(w.s.now()); err != nil {
		return fmt.Errorf("attachment: %v: %w", err, store.ErrInvalid)
	}
	added := a.Added
	if added.IsZero() {
		added = w.s.now()
	}
	return w.attachments.add(ctx, id, a.Path, a.SHA256, a.Kind, formatTime(added))
}

// CreateRun logs a new run; see store.RunLog.
func (s *DB) CreateRun(ctx context.Context, rec store.RunRecord, snaps ...*store.Snapshot) (string, error) {
	code, err := s.createRun(ctx, rec, snaps)
	return code, s.refused("log the run", err)
}

func (s *DB) createRun(ctx context.Context, rec store.RunRecord, snaps []*store.Snapshot) (string, error) {
	w, err := s.begin(ctx)
	if err != nil {
		return "", err
	}
	defer w.rollback()
	for _, snap := range snaps {
		if snap == nil {
			continue
		}
		if err := w.putSnapshot(ctx, *snap); err != nil {
			return "", err
		}
		switch snap.KindOrRecipe() {
		case store.SnapshotFurnace:
			rec.FurnaceHash = snap.SHA256
		case store.SnapshotSite:
			rec.SiteHash = snap.SHA256
		default:
			rec.RecipeHash = snap.SHA256
			if rec.RecipeName == "" {
				rec.RecipeName = snap.Name
			}
		}
	}
	if err := w.queue(ctx, rec); err != nil {
		return "", err
	}
	codes, err := w.flushRuns(ctx)
	if err != nil {
		return "", err
	}
	return codes[0], w.commit(ctx)
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

// FinishRun ends a planned or running run, with its actuals, deviations,
// closing note and attachments, in one transaction.
func (s *DB) FinishRun(ctx context.Context, code string, f store.Finish) error {
	if f.Status != store.Done && f.Status != store.Aborted {
		return fmt.Errorf("finish run %q: status %q: want done or aborted: %w", code, f.Status, store.ErrInvalid)
	}
	if err := f.Validate(code, s.now()); err != nil {
		return fmt.Errorf("finish: %w", err)
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
		for _, a := range f.Attachments {
			if err := w.addAttachment(ctx, id, a); err != nil {
				return err
			}
		}
		for name, v := range f.Params {
			if err := w.register(ctx, name, store.NameParam, ""); err != nil {
				return fmt.Errorf("run %q: %w", code, err)
			}
			if err := w.params.add(ctx, id, name, v); err != nil {
				return err
			}
		}
		return w.addActuals(ctx, id, f.Actuals, f.Deviations)
	})
}

// onRun runs fn on the run with the code in one transaction.
func (s *DB) onRun(ctx context.Context, code string, fn func(w *writer, id int64, st store.Status) error) error {
	err := func() error {
		w, err := s.begin(ctx)
		if err != nil {
			return err
		}
		defer w.rollback()
		id, st, err := w.runID(ctx, code)
		if err != nil {
			return err
		}
		w.touched = append(w.touched, id)
		if err := fn(w, id, st); err != nil {
			return err
		}
		return w.commit(ctx)
	}()
	return s.refused("write to run "+code, err)
}
