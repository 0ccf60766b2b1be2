package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/store"
)

var _ store.FitReader = (*DB)(nil)

// FitRuns reads, for every run that passes the filter and has an outcome
// of one of the metrics, its code, snapshot hash, outcomes of those
// metrics, actuals and, with pk.Version > 0, its stored profile (joined
// from the profiles table): what a calibration fit needs (see
// store.FitReader), one narrow query per table and chunk.
func (s *DB) FitRuns(ctx context.Context, f store.Filter, metrics []string, pk store.ProfileKey, each func(store.RunRecord, []byte) error) error {
	if len(metrics) == 0 {
		return nil
	}
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return err
	}
	defer end()
	marks := strings.TrimSuffix(strings.Repeat("?, ", len(metrics)), ", ")
	has := "r.id IN (SELECT run_id FROM outcomes WHERE metric IN (" + marks + "))"
	w, args, err := s.where(ctx, q, f, has)
	if err != nil {
		return err
	}
	margs := make([]any, len(metrics))
	for i, m := range metrics {
		margs[i] = m
	}
	args = append(margs, args...)
	col, join, jargs := profileJoin(pk)
	args = append(jargs, args...)
	qs := s.d.Rebind("SELECT r.id, r.code, r.recipe_sha256, r.furnace_sha256, " + col + " FROM runs r" + join + w + " AND r.id > ? ORDER BY r.id LIMIT ?")
	// inChunks hands each chunk's records to each in order; profs holds
	// the chunk's profiles in the same order and k counts them out.
	var profs [][]byte
	k := 0
	return inChunks(fitChunk, f.Limit, func(last int64, n int) ([]*store.RunRecord, []int64, error) {
		recs, ids, ps, err := s.fitRuns(ctx, q, qs, append(args, last, n))
		if err == nil && len(recs) > 0 {
			err = s.fitChildren(ctx, q, ids, recs, margs, marks)
		}
		profs, k = ps, 0
		return recs, ids, err
	}, func(r store.RunRecord) error {
		k++
		return each(r, profs[k-1])
	})
}

// fitChunk is how many runs FitRuns reads per round of queries: its
// records are narrow (a few hundred bytes with the profile), so a lab's
// whole log is usually one round (each round repeats the outcome
// subquery of the filter).
const fitChunk = 10000

// profileJoin returns the profile column of FitRuns' run query, the join
// that gives it and the join's arguments: the profile of pk.Version on
// pk.Furnace, or on the run's own furnace snapshot when pk.Furnace is "";
// a NULL column and no join when pk.Version is 0.
func profileJoin(pk store.ProfileKey) (col, join string, args []any) {
	if pk.Version <= 0 {
		return "NULL", "", nil
	}
	furnace := "r.furnace_sha256"
	if pk.Furnace != "" {
		furnace, args = "?", []any{pk.Furnace}
	}
	join = " LEFT JOIN profiles p ON p.recipe_sha256 = r.recipe_sha256 AND p.furnace_sha256 = " + furnace + " AND p.version = ?"
	return "p.data", join, append(args, pk.Version)
}

// fitRuns reads one chunk of FitRuns' run rows and their profiles.
func (s *DB) fitRuns(ctx context.Context, q Querier, qs string, args []any) ([]*store.RunRecord, []int64, [][]byte, error) {
	rows, err := q.QueryContext(ctx, qs, args...)
	if err != nil {
		return nil, nil, nil, err
	}
	defer rows.Close()
	var recs []*store.RunRecord
	var ids []int64
	var profs [][]byte
	for rows.Next() {
		var id int64
		var hash, furnace sql.NullString
		var prof []byte
		r := &store.RunRecord{}
		if err := rows.Scan(&id, &r.Code, &hash, &furnace, &prof); err != nil {
			return nil, nil, nil, err
		}
		r.RecipeHash, r.FurnaceHash = hash.String, furnace.String
		recs, ids, profs = append(recs, r), append(ids, id), append(profs, prof)
	}
	return recs, ids, profs, rows.Err()
}

// fitChildren fills the chosen outcomes and the actuals of a chunk of runs
// (ids ascending) from two queries over the id range.
func (s *DB) fitChildren(ctx context.Context, q Querier, ids []int64, recs []*store.RunRecord, margs []any, marks string) error {
	byID := make(map[int64]*store.RunRecord, len(ids))
	for i, id := range ids {
		byID[id] = recs[i]
	}
	lo, hi := ids[0], ids[len(ids)-1]
	read := func(what, qs string, args []any, row func(rows *sql.Rows) (int64, error), keep func(r *store.RunRecord)) error {
		rows, err := q.QueryContext(ctx, s.d.Rebind(qs), args...)
		if err != nil {
			return fmt.Errorf("read %s: %w", what, err)
		}
		defer rows.Close()
		for rows.Next() {
			id, err := row(rows)
			if err != nil {
				return fmt.Errorf("read %s: %w", what, err)
			}
			if r, ok := byID[id]; ok {
				keep(r)
			}
		}
		return rows.Err()
	}
	var o store.Outcome
	err := read("outcomes", "SELECT run_id, metric, value, unit FROM outcomes WHERE run_id BETWEEN ? AND ? AND metric IN ("+marks+") ORDER BY run_id, id",
		append([]any{lo, hi}, margs...),
		func(rows *sql.Rows) (id int64, err error) { return id, rows.Scan(&id, &o.Metric, &o.Value, &o.Unit) },
		func(r *store.RunRecord) { r.Outcomes = append(r.Outcomes, o) })
	if err != nil {
		return err
	}
	var a store.Actual
	return read("run_actuals", "SELECT run_id, step, label, quantity, unit, planned, mean, min, max, samples FROM run_actuals WHERE run_id BETWEEN ? AND ? ORDER BY run_id, step, quantity",
		[]any{lo, hi},
		func(rows *sql.Rows) (int64, error) {
			var id int64
			var planned, mean, mn, mx sql.NullFloat64
			a = store.Actual{}
			err := rows.Scan(&id, &a.Step, &a.Label, &a.Quantity, &a.Unit, &planned, &mean, &mn, &mx, &a.Samples)
			a.Planned, a.Mean, a.Min, a.Max = store.Optional(floatOr(planned)), floatOr(mean), floatOr(mn), floatOr(mx)
			return id, err
		},
		func(r *store.RunRecord) { r.Actuals = append(r.Actuals, a) })
}
