package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/store"
)

// Bins makes the Best table of the query (see store.RunLog) from one read
// of the run summary in run order: per run only the parameters' values
// (a logged twin in place of the plan where the run has one, picked in
// SQL by COALESCE), whether a twin was used, and the metric, into one
// column each, binned by store.BestColumns without copying. A twin the
// names registry does not know is not read.
func (s *DB) Bins(ctx context.Context, bq store.BinQuery) (store.BestTable, error) {
	if len(bq.Params) == 0 || len(bq.Params) > maxSampleParams || bq.Twins != nil && len(bq.Twins) != len(bq.Params) {
		return store.BestTable{}, fmt.Errorf("bins: %d parameters and %d twins, want 1 to %d parameters and a twin (or \"\") for each or none: %w",
			len(bq.Params), len(bq.Twins), maxSampleParams, store.ErrInvalid)
	}
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return store.BestTable{}, err
	}
	defer end()
	logged, err := s.loggedParams(ctx, q)
	if err != nil {
		return store.BestTable{}, err
	}
	r := newSummaryRead(bq.Metric)
	var sel, twins []string
	for j, p := range bq.Params {
		x := r.value(p)
		if bq.Twins != nil && bq.Twins[j] != "" && logged[bq.Twins[j]] {
			tw := r.value(bq.Twins[j])
			x = "COALESCE(" + tw + ", " + x + ")"
			twins = append(twins, tw+" IS NOT NULL")
		}
		sel = append(sel, x)
	}
	used := "0"
	if len(twins) > 0 {
		used = "CASE WHEN " + strings.Join(twins, " OR ") + " THEN 1 ELSE 0 END"
	}
	bound := 0
	if len(bq.Filter.Where) == 0 && len(bq.Filter.Codes) == 0 {
		if bound, err = summaryRows(ctx, q); err != nil {
			return store.BestTable{}, err
		}
	}
	tail, args, err := r.tail(ctx, s, q, bq.Filter, "")
	if err != nil {
		return store.BestTable{}, err
	}
	rows, err := q.QueryContext(ctx, s.d.Rebind("SELECT "+r.metric+", "+used+", "+strings.Join(sel, ", ")+tail+" ORDER BY su.run_id"), args...)
	if err != nil {
		return store.BestTable{}, fmt.Errorf("bins of %s: %w", bq.Metric, err)
	}
	defer rows.Close()
	ms, xs, nlogged, err := scanColumns(rows, len(bq.Params), bound)
	if err != nil {
		return store.BestTable{}, fmt.Errorf("bins of %s: %w", bq.Metric, err)
	}
	t := store.BestColumns(bq.Metric, bq.Params, ms, xs, bq.Bins, bq.Goal)
	t.Logged = nlogged
	return t, nil
}

// scanColumns reads rows of (metric, twin used 0 or 1, n values) into a
// column each, NaN for NULL, sized for bound rows, and counts the rows
// that used a twin.
func scanColumns(rows *sql.Rows, n, bound int) (ms []float64, xs [][]float64, used int, err error) {
	ms = make([]float64, 0, bound)
	xs = make([][]float64, n)
	for j := range xs {
		xs[j] = make([]float64, 0, bound)
	}
	raw := make([]any, 2+n)
	dest := make([]any, len(raw))
	for i := range raw {
		dest[i] = &raw[i]
	}
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return nil, nil, 0, err
		}
		m, err := unbox(raw[0])
		if err != nil {
			return nil, nil, 0, fmt.Errorf("metric: %w", err)
		}
		ms = append(ms, m)
		switch u, err := unbox(raw[1]); {
		case err != nil:
			return nil, nil, 0, fmt.Errorf("twin used: %w", err)
		case u == 1:
			used++
		}
		for j := range xs {
			v, err := unbox(raw[2+j])
			if err != nil {
				return nil, nil, 0, fmt.Errorf("parameter %d: %w", j+1, err)
			}
			xs[j] = append(xs[j], v)
		}
	}
	return ms, xs, used, rows.Err()
}
