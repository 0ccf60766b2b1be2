package sqldb

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/store"
)

// maxColumnJoins is how many joins of run_summary_extra one read of
// Columns takes (SQLite joins at most 64 tables); longer parameter lists
// are read in parts within the same consistent read.
const maxColumnJoins = 56

// Columns returns the metric and parameters of the query's runs (see
// store.RunLog) from the run summary, in run order: per run only the
// metric, the parameters' values (a logged twin in place of the plan where
// the run has one, picked in SQL by COALESCE) and whether it gave any
// twin, each into a column of its own sized once for an unfiltered read.
// A parameter or twin the names registry does not know is not read (its
// values are NaN, its twin never used). Which twins a run gave comes as
// the bits of one column of the same read (see readPart), at most
// maskTwins to a part.
func (s *DB) Columns(ctx context.Context, cq store.ColumnQuery) (store.Columns, error) {
	np := len(cq.Params)
	out := store.Columns{Params: make([][]float64, np), PerParam: make([]int, np)}
	if cq.Twins != nil && len(cq.Twins) != np {
		return out, fmt.Errorf("columns: %d parameters and %d twins, want a twin (or \"\") for each or none: %w", np, len(cq.Twins), store.ErrInvalid)
	}
	q, end, err := s.d.Read(ctx, s.db)
	if err != nil {
		return out, err
	}
	defer end()
	logged, err := s.loggedParams(ctx, q)
	if err != nil {
		return out, err
	}
	bound := 0
	if len(cq.Filter.Where) == 0 && len(cq.Filter.Codes) == 0 {
		if bound, err = summaryRows(ctx, q); err != nil {
			return out, err
		}
	}
	var used []bool // per run, whether it gave a twin in any part
	for lo := 0; ; {
		p := s.columnPart(cq, logged, lo)
		if err := s.readPart(ctx, q, cq, p, bound, &out, &used); err != nil {
			return out, fmt.Errorf("columns of %s: %w", cq.Metric, err)
		}
		if lo = p.hi; lo >= np {
			break
		}
	}
	for _, u := range used {
		if u {
			out.Logged++
		}
	}
	for j := range out.Params {
		if out.Params[j] == nil { // not read: NaN in every run
			out.Params[j] = nanColumn(len(out.Metric))
		}
	}
	return out, nil
}

// columnPart is the parameters lo … hi−1 of a Columns read: the SQL that
// reads them (sel[k] the value of parameter idx[k]), the twins read
// (twin[k] the condition that parameter twinIdx[k] gave its twin).
type columnPart struct {
	r            *summaryRead
	hi           int
	sel, twin    []string
	idx, twinIdx []int
}

// columnPart picks the parameters from lo on that one read takes.
func (s *DB) columnPart(cq store.ColumnQuery, logged map[string]bool, lo int) columnPart {
	p := columnPart{r: newSummaryRead(cq.Metric), hi: lo}
	for ; p.hi < len(cq.Params) && p.r.joins+2 <= maxColumnJoins && len(p.twin) < maskTwins; p.hi++ {
		j, name := p.hi, cq.Params[p.hi]
		var twin string
		if cq.Twins != nil && cq.Twins[j] != "" && logged[cq.Twins[j]] {
			twin = cq.Twins[j]
		}
		if !logged[name] && twin == "" {
			continue
		}
		x := "NULL"
		if logged[name] {
			x = p.r.value(name)
		}
		if twin != "" {
			tw := p.r.value(twin)
			x = "COALESCE(" + tw + ", " + x + ")"
			p.twin = append(p.twin, tw+" IS NOT NULL")
			p.twinIdx = append(p.twinIdx, j)
		}
		p.sel = append(p.sel, x)
		p.idx = append(p.idx, j)
	}
	return p
}

// maskTwins is the most twins one part reads (columnPart stops there):
// each is a bit of the row's twin column, a 64-bit integer.
const maskTwins = 62

// readPart reads one part's columns into out (the metric from the first
// part, checked against the others' run count) and, with twins, which
// runs gave one and how many gave each. Each row's twin column has bit k
// set when the run gave twin k, so the counts come from the same read of
// the summary as the values.
func (s *DB) readPart(ctx context.Context, q Querier, cq store.ColumnQuery, p columnPart, bound int, out *store.Columns, used *[]bool) error {
	tail, args, err := p.r.tail(ctx, s, q, cq.Filter, "")
	if err != nil {
		return err
	}
	cols := []string{"su.run_id", p.r.metric}
	if len(p.twin) > 0 { // a part without twins reads no mask: a column less to send
		bits := make([]string, len(p.twin))
		for k, c := range p.twin {
			bits[k] = fmt.Sprintf("CASE WHEN %s THEN CAST(%d AS BIGINT) ELSE 0 END", c, uint64(1)<<k)
		}
		cols = append(cols, strings.Join(bits, " + "))
	}
	ms, xs, masks, err := readColumns(ctx, s.d, q, s.d.Rebind("SELECT "+strings.Join(append(cols, p.sel...), ", ")+tail), args, len(p.sel), bound, len(p.twin) > 0)
	if err != nil {
		return err
	}
	if out.Metric == nil {
		out.Metric, *used = ms, make([]bool, len(ms))
	} else if len(ms) != len(out.Metric) {
		return fmt.Errorf("parts of one read gave %d and %d runs", len(out.Metric), len(ms))
	}
	for k, j := range p.idx {
		out.Params[j] = xs[k]
	}
	for i, m := range masks {
		(*used)[i] = (*used)[i] || m != 0
	}
	for k, j := range p.twinIdx {
		n := 0
		for _, m := range masks {
			n += int(m >> k & 1)
		}
		out.PerParam[j] = n
	}
	return nil
}

// readColumns runs the query, whose rows are (run id, metric, twin mask,
// n values), or (run id, metric, n values) without withMask, and reads
// them into a column each, in run order, NaN for NULL, sized for bound
// rows; the masks are read as integers (a mask of 62 bits does not fit a
// float64's mantissa), and are nil without withMask. PostgreSQL's send of
// a constant mask of 0 took about a sixth of the server's time of a
// `runs best` read of three columns (COPY … TO STDOUT (FORMAT binary) of
// 100,000 runs, 47 against 39 ms), so a part without twins reads none.
// The query has no ORDER BY: the rows are put in run order here (they
// mostly arrive in it, and then are only checked). PostgreSQL reads 100,000 summary rows in key order
// through the primary-key index in about twice the time of a plain scan
// of the table (EXPLAIN ANALYZE, 75 against 38 ms on the benchmark log);
// SQLite's scan of the summary is in key order either way.
func readColumns(ctx context.Context, d Dialect, q Querier, query string, args []any, n, bound int, withMask bool) (ms []float64, xs [][]float64, masks []uint64, err error) {
	ids := make([]int64, 0, bound)
	ms = make([]float64, 0, bound)
	first := 2 // the first value's column
	if withMask {
		masks, first = make([]uint64, 0, bound), 3
	}
	xs = make([][]float64, n)
	for j := range xs {
		xs[j] = make([]float64, 0, bound)
	}
	err = eachNumberRow(ctx, d, q, query, args, first+n, func(row []Number) error {
		id, ok := row[0].integer()
		if !ok {
			return fmt.Errorf("run id %v is not an integer", row[0])
		}
		if withMask {
			mask, ok := row[2].integer()
			if !ok && row[2].Kind != KindNull {
				return fmt.Errorf("twin mask %v is not an integer", row[2])
			}
			masks = append(masks, uint64(mask))
		}
		ids, ms = append(ids, id), append(ms, row[1].float())
		for j := range xs {
			xs[j] = append(xs[j], row[first+j].float())
		}
		return nil
	})
	if err != nil || slices.IsSorted(ids) {
		return ms, xs, masks, err
	}
	order := runOrder(ids)
	ms = permute(ms, order)
	if withMask {
		masks = permute(masks, order)
	}
	for j := range xs {
		xs[j] = permute(xs[j], order)
	}
	return ms, xs, masks, nil
}

// runOrder returns the indices of ids in increasing order of id; ids are
// distinct (run ids). Where they span at most four times their number, as
// the ids of a log do, each index is put in the slot of its id and the
// slots read in order; else they are sorted.
func runOrder(ids []int64) []int {
	order := make([]int, 0, len(ids))
	lo, hi := slices.Min(ids), slices.Max(ids)
	if span := uint64(hi - lo); span < 4*uint64(len(ids)) {
		slot := make([]int32, span+1) // index + 1; 0 for no run
		for i, id := range ids {
			slot[id-lo] = int32(i + 1)
		}
		for _, s := range slot {
			if s != 0 {
				order = append(order, int(s-1))
			}
		}
		if len(order) == len(ids) {
			return order
		}
		order = order[:0] // ids were not distinct: sort them
	}
	for i := range ids {
		order = append(order, i)
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(ids[a], ids[b]) })
	return order
}

// permute returns s[order[0]], s[order[1]], ….
func permute[T any](s []T, order []int) []T {
	out := make([]T, len(s))
	for i, k := range order {
		out[i] = s[k]
	}
	return out
}

// nanColumn is a column of n NaNs.
func nanColumn(n int) []float64 {
	c := make([]float64, n)
	for i := range c {
		c[i] = math.NaN()
	}
	return c
}
