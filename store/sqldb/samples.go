package sqldb

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/store"
)

// maxSampleParams is how many parameters one Samples call takes.
const maxSampleParams = 60

// Samples returns the metric and parameters of every run that passes the
// filter and has the metric, in run order, from the run summary: one row
// per run of run_summary (su) in its primary-key order, with a lookup in
// run_summary_extra by (name, run) only for a name that has no column of
// its own, and the runs table joined only when a filter needs it. A
// parameter the names registry does not know (no run has it, such as the
// logged twins of a log without furnace logs) is NaN in every sample
// without being read. One slice holds every run's parameter values, sized
// once for an unfiltered read; all of it is one consistent read.
func (s *DB) Samples(ctx context.Context, f store.Filter, metric string, params []string) ([]store.Sample, error) {
	if len(params) > maxSampleParams {
		return nil, fmt.Errorf("samples: %d parameters, at most %d: %w", len(params), maxSampleParams, store.ErrInvalid)
	}
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return nil, err
	}
	defer end()
	logged, err := s.loggedParams(ctx, q)
	if err != nil {
		return nil, err
	}
	sq, err := s.samplesQuery(ctx, q, f, metric, params, logged)
	if err != nil {
		return nil, err
	}
	bound := 0
	if len(f.Where) == 0 && len(f.Codes) == 0 {
		if bound, err = summaryRows(ctx, q); err != nil {
			return nil, err
		}
	}
	rows, err := q.QueryContext(ctx, s.d.Rebind(sq.text), sq.args...)
	if err != nil {
		return nil, fmt.Errorf("samples of %s: %w", metric, err)
	}
	defer rows.Close()
	return scanSamples(rows, len(params), sq.read, bound)
}

// samplesSQL is the query of Samples and where its columns go: read[k]
// is the index in params of the k-th parameter column.
type samplesSQL struct {
	text string
	args []any
	read []int
}

func (s *DB) samplesQuery(ctx context.Context, q Querier, f store.Filter, metric string, params []string, logged map[string]bool) (samplesSQL, error) {
	r := newSummaryRead(metric)
	sel := "SELECT su.code, " + r.metric
	var sq samplesSQL
	for i, p := range params {
		if logged[p] {
			sel += ", " + r.value(p)
			sq.read = append(sq.read, i)
		}
	}
	tail, args, err := r.tail(ctx, s, q, f, "")
	if err != nil {
		return sq, err
	}
	sq.text = sel + tail + " ORDER BY su.run_id"
	sq.args = args
	return sq, nil
}

// summaryRead builds the FROM of a read of the run summary (su) for one
// metric: the metric's value (r.metric) and has, the condition that a
// run has it; value adds the value of a name.
type summaryRead struct {
	from   strings.Builder
	args   []any // of the joins in from, in order
	joins  int
	metric string
	has    string
}

func newSummaryRead(metric string) *summaryRead {
	r := &summaryRead{}
	r.from.WriteString(" FROM run_summary su")
	if metricColumns[metric] {
		r.metric = "su." + metric
		r.has = "su." + metric + " IS NOT NULL"
	} else {
		r.metric = "m.value"
		r.from.WriteString(" JOIN run_summary_extra m ON m.name = ? AND m.run_id = su.run_id")
		r.args = append(r.args, metric)
	}
	return r
}

// value returns the SQL of the named parameter's value in a run (NULL
// where it has none): its column of the summary, or the value of a join
// of run_summary_extra by (name, run) for a name without one.
func (r *summaryRead) value(name string) string {
	if paramColumns[name] {
		return "su." + name
	}
	r.joins++
	x := fmt.Sprintf("x%d", r.joins)
	fmt.Fprintf(&r.from, " LEFT JOIN run_summary_extra %s ON %s.name = ? AND %s.run_id = su.run_id", x, x, x)
	r.args = append(r.args, name)
	return x + ".value"
}

// tail returns the FROM and WHERE of a read of the runs that pass the
// filter and have the metric (and pass the SQL extra, when not ""),
// joining runs when the filter needs it, with the arguments of the joins
// and of the WHERE. It may be called more than once.
func (r *summaryRead) tail(ctx context.Context, s *DB, q Querier, f store.Filter, extra string) (string, []any, error) {
	from := r.from.String()
	if len(f.Where) > 0 || len(f.Codes) > 0 {
		from += " JOIN runs r ON r.id = su.run_id"
	}
	cond := r.has
	if extra != "" {
		cond = strings.TrimPrefix(cond+" AND "+extra, " AND ")
	}
	w, wargs, err := s.whereSummary(ctx, q, f, cond)
	if err != nil {
		return "", nil, err
	}
	return from + w, append(slices.Clone(r.args), wargs...), nil
}

// loggedParams returns the parameter names of the names registry, which
// every write that adds a parameter value keeps (see freshExtra).
func (s *DB) loggedParams(ctx context.Context, q Querier) (map[string]bool, error) {
	rows, err := q.QueryContext(ctx, `SELECT name FROM names WHERE kind = 'param'`)
	if err != nil {
		return nil, fmt.Errorf("names: %w", err)
	}
	defer rows.Close()
	out := map[string]bool{}
	for rows.Next() {
		var n string
		if err := rows.Scan(&n); err != nil {
			return nil, err
		}
		out[n] = true
	}
	return out, rows.Err()
}

// summaryRows returns an upper bound of the rows of run_summary from its
// smallest and largest run id, two index look-ups (a count would read the
// whole table); 0 for an empty summary.
func summaryRows(ctx context.Context, q Querier) (int, error) {
	var n sql.NullInt64
	err := q.QueryRowContext(ctx, `SELECT (SELECT MAX(run_id) FROM run_summary) - (SELECT MIN(run_id) FROM run_summary) + 1`).Scan(&n)
	if err != nil {
		return 0, fmt.Errorf("size of the run summary: %w", err)
	}
	return int(max(n.Int64, 0)), nil
}

// scanSamples reads the rows of Samples (code, metric, then the
// parameter columns that go to params[read[k]]), one row per run, into
// samples of nparams values, NaN where not read or NULL. bound > 0 sizes
// the slices for that many rows. The values arrive boxed (driver.Value)
// and are unboxed by a type switch, not by database/sql's reflection.
func scanSamples(rows *sql.Rows, nparams int, read []int, bound int) ([]store.Sample, error) {
	out := make([]store.Sample, 0, bound)
	vals := make([]float64, 0, bound*nparams) // the parameters of every run, nparams each
	var code string
	raw := make([]any, 1+len(read))
	dest := make([]any, 2+len(read))
	dest[0] = &code
	for i := range raw {
		dest[1+i] = &raw[i]
	}
	nan := math.NaN()
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return nil, err
		}
		m, err := unbox(raw[0])
		if err != nil {
			return nil, fmt.Errorf("run %s: metric: %w", code, err)
		}
		base := len(vals)
		for range nparams {
			vals = append(vals, nan)
		}
		for k, i := range read {
			if vals[base+i], err = unbox(raw[1+k]); err != nil {
				return nil, fmt.Errorf("run %s: parameter %d: %w", code, i+1, err)
			}
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

// unbox returns the number a driver gave for a REAL column: a float64,
// an int64 or a NULL (NaN); anything else goes through database/sql's
// own conversion.
func unbox(v any) (float64, error) {
	switch x := v.(type) {
	case float64:
		return x, nil
	case nil:
		return math.NaN(), nil
	case int64:
		return float64(x), nil
	}
	var n sql.NullFloat64
	if err := n.Scan(v); err != nil {
		return 0, err
	}
	return floatOr(n), nil
}
