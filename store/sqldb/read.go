package sqldb

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/query"
)

// columns are the run columns the --where language may name, with the
// fixed SQL that reads each.
var columns = map[string]query.Column{
	"code": {SQL: "r.code", Text: true}, "status": {SQL: "r.status", Text: true},
	"recipe": {SQL: "r.recipe_name", Text: true}, "recipe_sha256": {SQL: "r.recipe_sha256", Text: true},
	"furnace": {SQL: "r.furnace", Text: true}, "operator": {SQL: "r.operator", Text: true},
	"lot": {SQL: "r.lot", Text: true}, "started": {SQL: "r.started_at", Text: true}, "ended": {SQL: "r.ended_at", Text: true},
	"override": {SQL: "(CASE WHEN r.id IN (SELECT run_id FROM run_overrides) THEN 1 ELSE 0 END)", Bool: true},
}

// Columns lists the run column names the --where language knows.
func Columns() []string {
	var cs []string
	for c := range columns {
		cs = append(cs, c)
	}
	sort.Strings(cs)
	return cs
}

const runSelect = `SELECT r.id, r.code, r.status, r.recipe_sha256, r.recipe_name, r.furnace, r.operator, r.lot, r.started_at, r.ended_at, r.created_at, r.furnace_sha256, r.site_sha256, r.source FROM runs r`

// selectColumns is the number of columns runSelect returns.
const selectColumns = 14

// runOf turns one row of runSelect, as the driver gives it (see eachRow),
// into its id and run.
func runOf(vals []driver.Value) (int64, store.Run, error) {
	var r store.Run
	id, ok := vals[0].(int64)
	if !ok {
		var n sql.NullInt64
		if err := n.Scan(vals[0]); err != nil || !n.Valid {
			return 0, r, fmt.Errorf("run id %v: not an integer", vals[0])
		}
		id = n.Int64
	}
	var t [selectColumns]sql.NullString
	for k := 1; k < selectColumns; k++ {
		switch x := vals[k].(type) {
		case string:
			t[k] = sql.NullString{String: x, Valid: true}
		case nil:
		default:
			if err := t[k].Scan(x); err != nil {
				return 0, r, fmt.Errorf("run %d: column %d: %w", id, k+1, err)
			}
		}
	}
	r.Code, r.Status, r.RecipeHash, r.RecipeName = t[1].String, store.Status(t[2].String), t[3].String, t[4].String
	r.Furnace, r.Operator, r.Lot = t[5].String, t[6].String, t[7].String
	r.FurnaceHash, r.SiteHash, r.Source = t[11].String, t[12].String, t[13].String
	var err1, err2, err3 error
	r.Started, err1 = parseStamp(t[8])
	r.Ended, err2 = parseStamp(t[9])
	r.Created, err3 = parseStamp(t[10])
	return id, r, errors.Join(err1, err2, err3)
}

// parseStamp is parseTime with a fast path for a time exactly in
// timeLayout (2006-01-02T15:04:05.000000Z), as foilrun stores every one:
// the fields read as digits at their fixed places and checked by
// time.Date's normalisation (a field out of range, which time.Date would
// carry, goes to time.Parse for its error). Anything else goes to
// parseTime.
func parseStamp(ns sql.NullString) (time.Time, error) {
	s := ns.String
	if !ns.Valid || len(s) != len(timeLayout) || s[4] != '-' || s[7] != '-' || s[10] != 'T' || s[13] != ':' || s[16] != ':' || s[19] != '.' || s[26] != 'Z' {
		return parseTime(ns)
	}
	field := func(lo, hi int) int {
		n := 0
		for i := lo; i < hi; i++ {
			c := s[i]
			if c < '0' || c > '9' {
				return -1
			}
			n = 10*n + int(c-'0')
		}
		return n
	}
	y, mo, d, h, mi, sec, us := field(0, 4), field(5, 7), field(8, 10), field(11, 13), field(14, 16), field(17, 19), field(20, 26)
	t := time.Date(y, time.Month(mo), d, h, mi, sec, us*1000, time.UTC)
	if min(y, mo, d, h, mi, sec, us) < 0 || t.Year() != y || int(t.Month()) != mo || t.Day() != d || t.Hour() != h || t.Minute() != mi || t.Second() != sec {
		return parseTime(ns)
	}
	return t, nil
}

// where compiles the filter to " WHERE …" (or "") and its arguments; a
// parameter or metric is read from run_params and outcomes.
func (s *DB) where(ctx context.Context, q Querier, f store.Filter, extra string) (string, []any, error) {
	return s.compileWhere(ctx, q, f, extra, false)
}

// whereSummary is where for a query that joins run_summary as su (and
// runs as r): a name with a column of the summary is read from it, any
// other from run_summary_extra.
func (s *DB) whereSummary(ctx context.Context, q Querier, f store.Filter, extra string) (string, []any, error) {
	return s.compileWhere(ctx, q, f, extra, true)
}

func (s *DB) compileWhere(ctx context.Context, q Querier, f store.Filter, extra string, summary bool) (string, []any, error) {
	var parts []string
	if extra != "" {
		parts = append(parts, extra)
	}
	var args []any
	if len(f.Where) > 0 {
		sch, err := s.schema(ctx, q)
		if err != nil {
			return "", nil, err
		}
		if summary {
			sch.Summary = summarySchema
		}
		sqlText, a, err := query.CompileAll(f.Where, sch)
		if err != nil {
			return "", nil, fmt.Errorf("%w: %w", err, store.ErrInvalid)
		}
		parts = append(parts, sqlText)
		args = append(args, a...)
	}
	if len(f.Codes) > 0 {
		parts = append(parts, "r.code IN (?"+strings.Repeat(", ?", len(f.Codes)-1)+")")
		for _, c := range f.Codes {
			args = append(args, c)
		}
	}
	if len(parts) == 0 {
		return "", nil, nil
	}
	return " WHERE " + strings.Join(parts, " AND "), args, nil
}

func (s *DB) schema(ctx context.Context, q Querier) (query.Schema, error) {
	sch := query.Schema{Columns: columns, Params: map[string]bool{}, Metrics: map[string]bool{}, RunID: "r.id"}
	for _, p := range recipe.ParameterNames() {
		sch.Params[p.Name] = true
	}
	for _, m := range store.Metrics() {
		sch.Metrics[m.Name] = true
	}
	names, err := s.names(ctx, q)
	if err != nil {
		return sch, err
	}
	for _, n := range names {
		if n.Kind == store.NameParam {
			sch.Params[n.Name] = true
		} else {
			sch.Metrics[n.Name] = true
		}
	}
	return sch, nil
}

// Names lists the parameter and metric names in the log; parameters carry
// the unit recipe.ParameterNames gives them.
func (s *DB) Names(ctx context.Context) ([]store.Name, error) { return s.names(ctx, s.db) }

func (s *DB) names(ctx context.Context, q Querier) ([]store.Name, error) {
	units := map[string]string{}
	for _, p := range recipe.ParameterNames() {
		units[p.Name] = p.Unit
	}
	rows, err := q.QueryContext(ctx, `SELECT name, kind, unit FROM names ORDER BY name`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []store.Name
	for rows.Next() {
		var n store.Name
		if err := rows.Scan(&n.Name, &n.Kind, &n.Unit); err != nil {
			return nil, err
		}
		if n.Kind == store.NameParam && n.Unit == "" {
			n.Unit = units[n.Name]
		}
		out = append(out, n)
	}
	return out, rows.Err()
}

// List returns the runs that pass the filter, oldest first (newest first
// with f.Newest), from f.Offset on; a filter reads parameters and metrics
// from the run summary.
func (s *DB) List(ctx context.Context, f store.Filter) ([]store.Run, error) {
	rq, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return nil, err
	}
	defer end()
	w, args, err := s.whereSummary(ctx, rq, f, "")
	if err != nil {
		return nil, err
	}
	q := runSelect + w + " ORDER BY r.id"
	if w != "" {
		// from the summary, whose columns the filter reads, in its own
		// order: SQLite then scans run_summary and looks up only the
		// runs that pass, not every run and its summary row
		q = strings.Replace(runSelect, " FROM runs r", " FROM run_summary su JOIN runs r ON r.id = su.run_id", 1) + w + " ORDER BY su.run_id"
	}
	if f.Newest {
		q += " DESC"
	}
	if f.Limit > 0 || f.Offset > 0 {
		limit := int64(math.MaxInt64) // SQLite takes an OFFSET only after a LIMIT
		if f.Limit > 0 {
			limit = int64(f.Limit)
		}
		q += " LIMIT ? OFFSET ?"
		args = append(args, limit, max(f.Offset, 0))
	}
	// in blocks, copied once into the answer: a slice grown by append
	// copies its runs about twice over and leaves the copies to collect
	var blocks [][]store.Run
	block := make([]store.Run, 0, 64)
	err = eachRow(ctx, rq, s.d.Rebind(q), args, selectColumns, func(vals []driver.Value) error {
		_, r, err := runOf(vals)
		if len(block) == cap(block) {
			blocks, block = append(blocks, block), make([]store.Run, 0, min(4*cap(block), listBlock))
		}
		block = append(block, r)
		return err
	})
	if len(blocks) == 0 {
		if len(block) == 0 {
			return nil, err
		}
		return block, err
	}
	blocks = append(blocks, block)
	n := 0
	for _, b := range blocks {
		n += len(b)
	}
	out := make([]store.Run, 0, n)
	for _, b := range blocks {
		out = append(out, b...)
	}
	return out, err
}

// listBlock is the most runs List reads into one block (the first holds
// 64, each next four times the last).
const listBlock = 1024

// Count returns how many runs pass the filter's Where and Codes.
func (s *DB) Count(ctx context.Context, f store.Filter) (int, error) {
	w, args, err := s.whereSummary(ctx, s.db, f, "")
	if err != nil {
		return 0, err
	}
	q := "SELECT count(*) FROM runs r"
	if w != "" {
		q += " JOIN run_summary su ON su.run_id = r.id"
	}
	var n int
	err = s.db.QueryRowContext(ctx, s.d.Rebind(q+w), args...).Scan(&n)
	return n, err
}

// Renamed returns the codes of the runs renumbered from the code old.
func (s *DB) Renamed(ctx context.Context, old string) ([]string, error) {
	rows, err := s.db.QueryContext(ctx, s.d.Rebind(`SELECT r.code FROM run_aliases a JOIN runs r ON r.id = a.run_id WHERE a.alias = ? ORDER BY r.id`), old)
	if err != nil {
		return nil, fmt.Errorf("run aliases: %w", err)
	}
	defer rows.Close()
	codes := []string{}
	for rows.Next() {
		var c string
		if err := rows.Scan(&c); err != nil {
			return nil, err
		}
		codes = append(codes, c)
	}
	return codes, rows.Err()
}

// Snapshot returns the snapshot (recipe, furnace or site) with the hash.
func (s *DB) Snapshot(ctx context.Context, hash string) (store.Snapshot, error) {
	sn := store.Snapshot{SHA256: hash}
	var created sql.NullString
	err := s.db.QueryRowContext(ctx, s.d.Rebind(`SELECT kind, name, file, content, created_at FROM snapshots WHERE sha256 = ?`), hash).
		Scan(&sn.Kind, &sn.Name, &sn.File, &sn.Content, &created)
	if errors.Is(err, sql.ErrNoRows) {
		return sn, fmt.Errorf("snapshot %.12s: %w", hash, store.ErrNotFound)
	}
	if err != nil {
		return sn, err
	}
	sn.Created, err = parseTime(created)
	return sn, err
}

// Record returns a run with everything logged about it.
func (s *DB) Record(ctx context.Context, code string) (store.RunRecord, error) {
	var got []store.RunRecord
	err := s.export(ctx, s.db, "r.code = ?", []any{code}, 1, func(r store.RunRecord) error {
		got = append(got, r)
		return nil
	})
	if err != nil {
		return store.RunRecord{}, err
	}
	if len(got) == 0 {
		return store.RunRecord{}, fmt.Errorf("run %q: %w", code, store.ErrNotFound)
	}
	return got[0], nil
}

// Export calls each for every run that passes the filter, from one
// consistent read.
func (s *DB) Export(ctx context.Context, f store.Filter, each func(store.RunRecord) error) error {
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return err
	}
	defer end()
	w, args, err := s.where(ctx, q, f, "")
	if err != nil {
		return err
	}
	return s.export(ctx, q, strings.TrimPrefix(w, " WHERE "), args, f.Limit, each)
}

// exportChunk is how many runs are read per round of child queries.
const exportChunk = 2000

// export reads runs matching cond (SQL, may be "") in id order, chunk by
// chunk, with their child rows; limit > 0 stops after that many.
func (s *DB) export(ctx context.Context, q Querier, cond string, args []any, limit int, each func(store.RunRecord) error) error {
	w := " WHERE r.id > ?"
	if cond != "" {
		w += " AND (" + cond + ")"
	}
	qs := s.d.Rebind(runSelect + w + " ORDER BY r.id LIMIT ?")
	return inChunks(exportChunk, limit, func(last int64, n int) ([]*store.RunRecord, []int64, error) {
		recs, ids, err := s.readRuns(ctx, q, qs, append(append([]any{last}, args...), n))
		if err == nil && len(recs) > 0 {
			err = s.readChildren(ctx, q, ids, recs)
		}
		return recs, ids, err
	}, each)
}

// inChunks calls each for the runs read chunk by chunk in id order: read
// returns at most n ≤ chunk runs (with their ids) after the id last,
// filled in; limit > 0 stops after that many runs.
func inChunks(chunk, limit int, read func(last int64, n int) ([]*store.RunRecord, []int64, error), each func(store.RunRecord) error) error {
	last, sent := int64(math.MinInt64), 0
	for {
		n := chunk
		if limit > 0 {
			n = min(n, limit-sent)
		}
		if n <= 0 {
			return nil
		}
		recs, ids, err := read(last, n)
		if err != nil || len(recs) == 0 {
			return err
		}
		for _, r := range recs {
			if err := each(*r); err != nil {
				return err
			}
		}
		sent += len(recs)
		last = ids[len(ids)-1]
		if len(recs) < n {
			return nil
		}
	}
}

func (s *DB) readRuns(ctx context.Context, q Querier, qs string, args []any) ([]*store.RunRecord, []int64, error) {
	var recs []*store.RunRecord
	var ids []int64
	err := eachRow(ctx, q, qs, args, selectColumns, func(vals []driver.Value) error {
		id, r, err := runOf(vals)
		recs = append(recs, &store.RunRecord{Run: r, Params: map[string]float64{}})
		ids = append(ids, id)
		return err
	})
	if err != nil {
		return nil, nil, err
	}
	return recs, ids, nil
}

// readChildren fills params, notes, outcomes, actuals, deviations,
// corrections, attachments and the override of the runs (ids ascending),
// one query per table over the id range.
func (s *DB) readChildren(ctx context.Context, q Querier, ids []int64, recs []*store.RunRecord) error {
	byID := make(map[int64]*store.RunRecord, len(ids))
	for i, id := range ids {
		byID[id] = recs[i]
	}
	lo, hi := ids[0], ids[len(ids)-1]
	// read runs one child query; row scans the columns after run_id into
	// the run's record.
	read := func(table, cols, order string, row func(rows *sql.Rows) error) error {
		rows, err := q.QueryContext(ctx, s.d.Rebind("SELECT "+cols+" FROM "+table+" WHERE run_id BETWEEN ? AND ? ORDER BY run_id, "+order), lo, hi)
		if err != nil {
			return fmt.Errorf("read %s: %w", table, err)
		}
		defer rows.Close()
		for rows.Next() {
			if err := row(rows); err != nil {
				return fmt.Errorf("read %s: %w", table, err)
			}
		}
		return rows.Err()
	}
	var id int64
	pick := func() *store.RunRecord {
		if r, ok := byID[id]; ok {
			return r
		}
		return &store.RunRecord{Params: map[string]float64{}} // a run the filter left out: discard
	}
	err := read("run_params", "run_id, name, value", "name", func(rows *sql.Rows) error {
		var name string
		var v float64
		if err := rows.Scan(&id, &name, &v); err != nil {
			return err
		}
		pick().Params[name] = v
		return nil
	})
	if err != nil {
		return err
	}
	err = read("run_notes", "run_id, at, text", "at, id", func(rows *sql.Rows) error {
		var at sql.NullString
		var n store.Note
		if err := rows.Scan(&id, &at, &n.Text); err != nil {
			return err
		}
		var err error
		n.At, err = parseTime(at)
		r := pick()
		r.Notes = append(r.Notes, n)
		return err
	})
	if err != nil {
		return err
	}
	err = read("outcomes", "run_id, metric, value, unit, entered, method, measured_at", "id", func(rows *sql.Rows) error {
		var o store.Outcome
		var at sql.NullString
		if err := rows.Scan(&id, &o.Metric, &o.Value, &o.Unit, &o.Entered, &o.Method, &at); err != nil {
			return err
		}
		var err error
		o.Measured, err = parseTime(at)
		r := pick()
		r.Outcomes = append(r.Outcomes, o)
		return err
	})
	if err != nil {
		return err
	}
	err = read("run_actuals", "run_id, step, label, quantity, unit, planned, mean, min, max, samples", "step, quantity", func(rows *sql.Rows) error {
		var a store.Actual
		var planned, mean, lo, hi sql.NullFloat64
		if err := rows.Scan(&id, &a.Step, &a.Label, &a.Quantity, &a.Unit, &planned, &mean, &lo, &hi, &a.Samples); err != nil {
			return err
		}
		a.Planned, a.Mean, a.Min, a.Max = store.Optional(floatOr(planned)), floatOr(mean), floatOr(lo), floatOr(hi)
		r := pick()
		r.Actuals = append(r.Actuals, a)
		return nil
	})
	if err != nil {
		return err
	}
	err = read("run_deviations", "run_id, step, label, quantity, unit, planned, actual, tolerance, message", "id", func(rows *sql.Rows) error {
		var d store.Deviation
		var planned, actual, tol sql.NullFloat64
		if err := rows.Scan(&id, &d.Step, &d.Label, &d.Quantity, &d.Unit, &planned, &actual, &tol, &d.Message); err != nil {
			return err
		}
		d.Planned, d.Actual, d.Tolerance = floatOr(planned), floatOr(actual), floatOr(tol)
		r := pick()
		r.Deviations = append(r.Deviations, d)
		return nil
	})
	if err != nil {
		return err
	}
	err = read("outcome_history", "run_id, metric, unit, old_value, old_entered, new_value, new_entered, who, at", "id", func(rows *sql.Rows) error {
		var c store.Correction
		var at sql.NullString
		if err := rows.Scan(&id, &c.Metric, &c.Unit, &c.OldValue, &c.OldEntered, &c.NewValue, &c.NewEntered, &c.Who, &at); err != nil {
			return err
		}
		var err error
		c.At, err = parseTime(at)
		r := pick()
		r.Corrections = append(r.Corrections, c)
		return err
	})
	if err != nil {
		return err
	}
	err = read("run_aliases", "run_id, alias", "alias", func(rows *sql.Rows) error {
		var a string
		if err := rows.Scan(&id, &a); err != nil {
			return err
		}
		r := pick()
		r.Aliases = append(r.Aliases, a)
		return nil
	})
	if err != nil {
		return err
	}
	err = read("attachments", "run_id, path, sha256, kind, added_at", "id", func(rows *sql.Rows) error {
		var a store.Attachment
		var at sql.NullString
		if err := rows.Scan(&id, &a.Path, &a.SHA256, &a.Kind, &at); err != nil {
			return err
		}
		var err error
		a.Added, err = parseTime(at)
		r := pick()
		r.Attachments = append(r.Attachments, a)
		return err
	})
	if err != nil {
		return err
	}
	return read("run_overrides", "run_id, reason, operator, at, findings", "run_id", func(rows *sql.Rows) error {
		var o store.Override
		var at sql.NullString
		var fs string
		if err := rows.Scan(&id, &o.Reason, &o.Operator, &at, &fs); err != nil {
			return err
		}
		if err := json.Unmarshal([]byte(fs), &o.Findings); err != nil {
			return fmt.Errorf("findings: %w", err)
		}
		var err error
		o.At, err = parseTime(at)
		pick().Override = &o
		return err
	})
}
