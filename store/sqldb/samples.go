package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"strings"

	"github.com/foilrun/foilrun/store"
)

// maxSampleParams is how many parameters one Samples call takes.
const maxSampleParams = 60

// Samples returns the metric and parameters of every run that passes the
// filter and has the metric, in run order. One query walks the metric's
// outcomes in the outcomes_metric index, which is already in run order (no
// sort, no materialised mean per run), looks up each run's code and
// parameters by primary key, and the mean over a run's outcomes is taken
// here; one slice holds every run's parameter values.
func (s *DB) Samples(ctx context.Context, f store.Filter, metric string, params []string) ([]store.Sample, error) {
	if len(params) > maxSampleParams {
		return nil, fmt.Errorf("samples: %d parameters, at most %d: %w", len(params), maxSampleParams, store.ErrInvalid)
	}
	var b strings.Builder
	b.WriteString("SELECT o.run_id, r.code, o.value")
	for i := range params {
		fmt.Fprintf(&b, ", p%d.value", i)
	}
	b.WriteString(" FROM outcomes o JOIN runs r ON r.id = o.run_id")
	var args []any
	for i, p := range params {
		fmt.Fprintf(&b, " LEFT JOIN run_params p%d ON p%d.run_id = o.run_id AND p%d.name = ?", i, i, i)
		args = append(args, p)
	}
	w, wargs, err := s.where(ctx, s.db, f, "o.metric = ?")
	if err != nil {
		return nil, err
	}
	b.WriteString(w + " ORDER BY o.run_id")
	args = append(append(args, metric), wargs...)
	rows, err := s.db.QueryContext(ctx, s.d.Rebind(b.String()), args...)
	if err != nil {
		return nil, fmt.Errorf("samples of %s: %w", metric, err)
	}
	defer rows.Close()
	return scanSamples(rows, len(params))
}

// scanSamples reads the rows of Samples (run id, code, one outcome value,
// then the parameters), one or more consecutive rows per run.
func scanSamples(rows *sql.Rows, nparams int) ([]store.Sample, error) {
	var out []store.Sample
	var vals []float64 // the parameters of every run, nparams each
	var ms []float64   // the metric values of the current run
	flush := func() {
		if len(ms) > 0 {
			out[len(out)-1].Metric = meanOf(ms)
		}
	}
	var id, last int64
	var code string
	var m float64
	ps := make([]sql.NullFloat64, nparams)
	dest := make([]any, 3+nparams)
	dest[0], dest[1], dest[2] = &id, &code, &m
	for i := range ps {
		dest[3+i] = &ps[i]
	}
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return nil, err
		}
		if len(out) == 0 || id != last {
			flush()
			ms, last = ms[:0], id
			for _, p := range ps {
				vals = append(vals, floatOr(p))
			}
			out = append(out, store.Sample{Code: code})
		}
		ms = append(ms, m)
	}
	if err := rows.Err(); err != nil {
		return nil, err
	}
	flush()
	for i := range out {
		out[i].Params = vals[i*nparams : (i+1)*nparams : (i+1)*nparams]
	}
	return out, nil
}

// meanOf returns the mean of v (not empty), summed with the
// Kahan–Babuška–Neumaier compensation, as SQLite's AVG does:
//
//	t = s + x;  c += (s − t) + x  if |s| ≥ |x|, else (x − t) + s;  s = t
//	mean = (s + c) / n
//
// References:
//
//	A. Neumaier, "Rundungsfehleranalyse einiger Verfahren zur Summation
//	endlicher Summen", ZAMM 54 (1974) 39–51.
func meanOf(v []float64) float64 {
	if len(v) == 1 {
		return v[0]
	}
	var s, c float64
	for _, x := range v {
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - t) + x
		} else {
			c += (x - t) + s
		}
		s = t
	}
	return (s + c) / float64(len(v))
}
