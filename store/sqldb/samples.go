package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/store"
)

// maxSampleParams is how many parameters one Samples call takes.
const maxSampleParams = 60

// Samples returns the metric and parameters of every run that passes the
// filter and has the metric, in run order, from the run summary: one row
// per run of run_summary (su) in its primary-key order, with a lookup in
// run_summary_extra by (name, run) only for a name that has no column of
// its own, and the runs table joined only when a filter needs it. One
// slice holds every run's parameter values.
func (s *DB) Samples(ctx context.Context, f store.Filter, metric string, params []string) ([]store.Sample, error) {
	if len(params) > maxSampleParams {
		return nil, fmt.Errorf("samples: %d parameters, at most %d: %w", len(params), maxSampleParams, store.ErrInvalid)
	}
	var sel, from strings.Builder
	var args []any
	from.WriteString(" FROM run_summary su")
	has := ""
	if metricColumns[metric] {
		sel.WriteString("SELECT su.code, su." + metric)
		has = "su." + metric + " IS NOT NULL"
	} else {
		sel.WriteString("SELECT su.code, m.value")
		from.WriteString(" JOIN run_summary_extra m ON m.name = ? AND m.run_id = su.run_id")
		args = append(args, metric)
	}
	for i, p := range params {
		if paramColumns[p] {
			sel.WriteString(", su." + p)
			continue
		}
		fmt.Fprintf(&sel, ", x%d.value", i)
		fmt.Fprintf(&from, " LEFT JOIN run_summary_extra x%d ON x%d.name = ? AND x%d.run_id = su.run_id", i, i, i)
		args = append(args, p)
	}
	if len(f.Where) > 0 || len(f.Codes) > 0 {
		from.WriteString(" JOIN runs r ON r.id = su.run_id")
	}
	w, wargs, err := s.whereSummary(ctx, s.db, f, has)
	if err != nil {
		return nil, err
	}
	q := sel.String() + from.String() + w + " ORDER BY su.run_id"
	rows, err := s.db.QueryContext(ctx, s.d.Rebind(q), append(args, wargs...)...)
	if err != nil {
		return nil, fmt.Errorf("samples of %s: %w", metric, err)
	}
	defer rows.Close()
	return scanSamples(rows, len(params))
}

// scanSamples reads the rows of Samples (code, metric, then the
// parameters), one row per run.
func scanSamples(rows *sql.Rows, nparams int) ([]store.Sample, error) {
	var out []store.Sample
	var vals []float64 // the parameters of every run, nparams each
	var code string
	var m float64
	ps := make([]sql.NullFloat64, nparams)
	dest := make([]any, 2+nparams)
	dest[0], dest[1] = &code, &m
	for i := range ps {
		dest[2+i] = &ps[i]
	}
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return nil, err
		}
		for _, p := range ps {
			vals = append(vals, floatOr(p))
		}
		out = append(out, store.Sample{Code: code, Metric: m})
	}
	if err := rows.Err(); err != nil {
		return nil, err
	}
	for i := range out {
		out[i].Params = vals[i*nparams : (i+1)*nparams : (i+1)*nparams]
	}
	return out, nil
}
