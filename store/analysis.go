package store

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
)

// Goal says which metric values count as good: at least Min and at most
// Max (either may be missing).
type Goal struct {
	Min, Max Optional
}

// NoGoal is a Goal with neither bound.
func NoGoal() Goal { return Goal{None(), None()} }

// Set reports whether the goal has a bound.
func (g Goal) Set() bool { return g.Min.Valid() || g.Max.Valid() }

// Met reports whether v meets the goal.
func (g Goal) Met(v float64) bool {
	return (!g.Min.Valid() || v >= float64(g.Min)) && (!g.Max.Valid() || v <= float64(g.Max))
}

// String writes the goal as "≥ 0.9", "≤ 500" or "0.9 to 1".
func (g Goal) String() string {
	switch {
	case g.Min.Valid() && g.Max.Valid():
		return fmt.Sprintf("%g to %g", float64(g.Min), float64(g.Max))
	case g.Min.Valid():
		return fmt.Sprintf("≥ %g", float64(g.Min))
	case g.Max.Valid():
		return fmt.Sprintf("≤ %g", float64(g.Max))
	}
	return "none"
}

// Bin is one cell of a Best table: the parameter ranges it covers and the
// statistics of the metric over its runs.
type Bin struct {
	Lo, Hi  []float64 // per parameter; the last bin includes its upper edge
	Count   int
	Mean    float64
	Min     float64
	Max     float64
	Meeting int     // runs meeting the goal
	Share   float64 // Meeting/Count; NaN without a goal
}

// BestTable is the metric binned by one or two parameters.
type BestTable struct {
	Metric  string
	Params  []string
	Goal    Goal
	Bins    []Bin // non-empty cells, first parameter slowest
	Runs    int   // runs counted
	Missing int   // runs left out because they lack a parameter
}

// RankRow is one parameter of a Rank result.
type RankRow struct {
	Param   string
	Rho     float64 // Spearman rank correlation with the metric; NaN when the parameter is constant
	N       int     // runs with both the parameter and the metric
	Good    int     // of those, runs meeting the goal
	GoodMin float64 // parameter range over the good runs (NaN when none)
	GoodMax float64
	RestMin float64 // parameter range over the other runs
	RestMax float64
}

// RankResult ranks parameters by how strongly they go with the metric.
type RankResult struct {
	Metric string
	Goal   Goal // the goal used; the best quartile when none was given
	Rows   []RankRow
}

// Rank computes, for each parameter, Spearman's rank correlation between
// it and the metric over the runs that have both (ties get average ranks),
// and the parameter's range among the runs meeting the goal against the
// rest. Without a goal the best quartile of the metric counts as good: the
// top quartile (at least the 75th percentile), or the bottom one when lower
// is better. Rows are sorted by |rho|, largest first; constant parameters
// last. RankColumns does the same on columns.
func Rank(samples []Sample, metric string, params []string, goal Goal, lowerBetter bool) RankResult {
	ms := make([]float64, len(samples))
	xs := make([][]float64, len(params))
	for j := range xs {
		xs[j] = make([]float64, len(samples))
	}
	for i, s := range samples {
		ms[i] = s.Metric
		for j := range xs {
			xs[j][i] = math.NaN()
			if j < len(s.Params) {
				xs[j][i] = s.Params[j]
			}
		}
	}
	return RankColumns(metric, params, ms, xs, goal, lowerBetter)
}

// RankColumns is Rank on columns: ms[i] is run i's metric and xs[j][i]
// its value of params[j] (NaN where it has none). The parameters are
// ranked on up to GOMAXPROCS goroutines; a constant parameter gets rho
// NaN without ranking (its ranks have no spread).
func RankColumns(metric string, params []string, ms []float64, xs [][]float64, goal Goal, lowerBetter bool) RankResult {
	// The metric's ranks over the runs that have it serve every parameter
	// that all of those runs have.
	var all []float64
	for _, m := range ms {
		if !math.IsNaN(m) {
			all = append(all, m)
		}
	}
	allRanks := sync.OnceValue(func() []float64 { return ranks(all) })
	if !goal.Set() && len(all) > 0 {
		// The quartile of the runs that have the metric, from the sort
		// that ranks it.
		sorted, r := sortedRanks(all)
		allRanks = func() []float64 { return r }
		goal = NoGoal()
		if lowerBetter {
			goal.Max = Optional(sortedQuantile(sorted, 0.25))
		} else {
			goal.Min = Optional(sortedQuantile(sorted, 0.75))
		}
	}
	res := RankResult{Metric: metric, Goal: goal}
	rows := make([]RankRow, len(params))
	forEach(len(params), func(next func() (int, bool)) {
		px, py := make([]float64, 0, len(all)), make([]float64, 0, len(all))
		var rx, ry ranker // the parameter's and, where it differs from all, the metric's
		for j, ok := next(); ok; j, ok = next() {
			rows[j] = rankRow(ms, xs[j], params[j], goal, &px, &py)
			if rows[j].N == 0 || constant(px) || constant(py) {
				rows[j].Rho = math.NaN() // no pairs, or ranks without spread
				continue
			}
			var my []float64
			if rows[j].N == len(all) {
				my = allRanks()
			} else {
				my = ry.ranks(py)
			}
			rows[j].Rho = rankCorrelation(rx.ranks(px), my)
		}
	})
	for _, row := range rows {
		if row.N > 0 {
			res.Rows = append(res.Rows, row)
		}
	}
	sort.SliceStable(res.Rows, func(a, b int) bool {
		ra, rb := res.Rows[a].Rho, res.Rows[b].Rho
		if math.IsNaN(ra) != math.IsNaN(rb) {
			return !math.IsNaN(ra)
		}
		return math.Abs(ra) > math.Abs(rb)
	})
	return res
}

// forEach runs work on up to GOMAXPROCS goroutines (one when n < 2),
// which share the indices 0 … n−1 through next (ok false when none is
// left), and returns when every one has returned.
func forEach(n int, work func(next func() (int, bool))) {
	var taken atomic.Int64
	next := func() (int, bool) {
		i := int(taken.Add(1) - 1)
		return i, i < n
	}
	workers := min(runtime.GOMAXPROCS(0), n)
	if workers < 2 {
		work(next)
		return
	}
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() { work(next) })
	}
	wg.Wait()
}

// constant reports whether every value of v (NaN-free) is the same.
func constant(v []float64) bool {
	for _, x := range v {
		if x != v[0] {
			return false
		}
	}
	return true
}

// rankRow fills the counts and ranges of the parameter p (values x, of
// the runs whose metrics are ms) and leaves in px and py the parameter
// and metric of the runs that have both.
func rankRow(ms, x []float64, p string, goal Goal, px, py *[]float64) RankRow {
	*px, *py = (*px)[:0], (*py)[:0]
	row := RankRow{Param: p, GoodMin: math.Inf(1), GoodMax: math.Inf(-1), RestMin: math.Inf(1), RestMax: math.Inf(-1)}
	for i, v := range x {
		m := ms[i]
		if math.IsNaN(v) || math.IsNaN(m) {
			continue
		}
		*px, *py = append(*px, v), append(*py, m)
		if goal.Met(m) {
			row.Good++
			row.GoodMin, row.GoodMax = lower(row.GoodMin, v), upper(row.GoodMax, v)
		} else {
			row.RestMin, row.RestMax = lower(row.RestMin, v), upper(row.RestMax, v)
		}
	}
	row.N = len(*px)
	if row.Good == 0 {
		row.GoodMin, row.GoodMax = math.NaN(), math.NaN()
	}
	if row.Good == row.N {
		row.RestMin, row.RestMax = math.NaN(), math.NaN()
	}
	return row
}

// lower is math.Min(m, v) for numbers (not NaN), −0 below +0 as there,
// in comparisons the compiler inlines (math.Min and math.Max are calls:
// in a profile of runs rank they took half as long as the rest of
// rankRow).
func lower(m, v float64) float64 {
	if v < m || v == m && math.Signbit(v) {
		return v
	}
	return m
}

// upper is math.Max(m, v) for numbers (not NaN), +0 above −0 as there.
func upper(m, v float64) float64 {
	if v > m || v == m && !math.Signbit(v) {
		return v
	}
	return m
}

// Spearman returns Spearman's rank correlation coefficient of x and y: the
// Pearson correlation of their ranks, where tied values share the average
// of the ranks they span,
//
//	rho = Σ(rx−mean)(ry−mean) / sqrt(Σ(rx−mean)² · Σ(ry−mean)²).
//
// It is NaN when fewer than two pairs are given or either variable is
// constant. It panics if len(x) != len(y).
//
// References:
//
//	C. Spearman, "The proof and measurement of association between two
//	things", American Journal of Psychology 15 (1904) 72–101.
func Spearman(x, y []float64) float64 {
	if len(x) != len(y) {
		panic("store: Spearman of slices of different lengths")
	}
	if len(x) < 2 {
		return math.NaN()
	}
	return rankCorrelation(ranks(x), ranks(y))
}

// rankCorrelation is the Pearson correlation of the ranks rx and ry (of
// the same length, at least 2): Spearman's rho.
func rankCorrelation(rx, ry []float64) float64 {
	if len(rx) < 2 {
		return math.NaN()
	}
	m := (float64(len(rx)) + 1) / 2
	var sxy, sxx, syy float64
	for i := range rx {
		dx, dy := rx[i]-m, ry[i]-m
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if sxx == 0 || syy == 0 {
		return math.NaN()
	}
	return sxy / math.Sqrt(sxx*syy)
}

// ranks returns the 1-based ranks of v with ties averaged (NaNs, which
// equal nothing, each get a rank of their own below every number): the
// values taken in ascending order (ascending), where a run of j−i equal
// values at sorted positions i … j−1 (0-based) all get the mean rank
// (i+1 + j)/2. Equal values are found as equal neighbours among the
// sorted keys (orderKey gives equal numbers, both zeros included, the
// same key, and NaN the key 0, which no number has).
func ranks(v []float64) []float64 { return new(ranker).ranks(v) }

// sortedRanks returns v in ascending order and its ranks (as ranks).
func sortedRanks(v []float64) (sorted, r []float64) { return new(ranker).sortedRanks(v) }

// ranker ranks in memory kept from one call to the next (rankBuffers),
// with 32-bit indices below 2³¹ values.
type ranker struct {
	narrow rankBuffers[int32]
	wide   rankBuffers[int]
}

// ranks is ranks(v) in r's memory: the result is valid until r's next use.
func (r *ranker) ranks(v []float64) []float64 {
	if len(v) > math.MaxInt32 {
		return r.wide.ranks(v)
	}
	return r.narrow.ranks(v)
}

// sortedRanks is sortedRanks(v); the ranks are r's memory (valid until
// its next use), the sorted values a new slice.
func (r *ranker) sortedRanks(v []float64) (sorted, rk []float64) {
	if len(v) > math.MaxInt32 {
		return r.wide.sortedRanks(v)
	}
	return r.narrow.sortedRanks(v)
}

// rankBuffers holds the slices of a ranking, kept from one call to the
// next: a worker of RankColumns ranks one parameter after another in the
// same memory. Fresh slices for each (3.2 MB for 100,000 runs) were fresh
// pages for the kernel to clear: `runs rank` on 100,000 runs took 19,200
// page faults with them and 12,800 without, and its median went from 182
// to 168 ms (21 interleaved runs). I is the index type (int32 below 2³¹
// values, which halves the indices' share of the moves).
type rankBuffers[I int32 | int] struct {
	keys, keys2   []uint64
	order, order2 []I
	r             []float64
}

// ranks is ranks(v) in b's memory: the result is valid until b's next use.
func (b *rankBuffers[I]) ranks(v []float64) []float64 {
	keys, order := b.ascending(v)
	b.r = resize(b.r, len(v))
	r := b.r[:len(order)]
	for i := 0; i < len(order); {
		j := i + 1
		if keys[i] != 0 { // not a NaN
			for j < len(order) && keys[j] == keys[i] {
				j++
			}
		}
		avg := float64(i+j+1) / 2 // mean of ranks i+1 … j
		for _, k := range order[i:j] {
			r[k] = avg
		}
		i = j
	}
	return r
}

// sortedRanks is sortedRanks(v); the ranks are b's (valid until its next
// use), the sorted values a new slice.
func (b *rankBuffers[I]) sortedRanks(v []float64) (sorted, r []float64) {
	r = b.ranks(v)
	sorted = make([]float64, len(v))
	for i, k := range b.order[:len(v)] {
		sorted[i] = v[k]
	}
	return sorted, r
}

// resize returns s with length n, reusing its array when it is big enough
// (its contents are then left as they were).
func resize[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	return s[:n]
}

// radixBits is the width of a digit of radixSort: six passes of 2,048
// buckets cover a 64-bit key. With the six histograms taken in one
// unrolled pass and 32-bit indices, ranks of 100,000 normal deviates in
// fresh memory take 2.5–3.7 ms (BenchmarkRanks100k), where one byte a
// pass (eight passes of 256, a loop over the histograms, int indices)
// took 4.2–5.2 ms.
const radixBits = 11

// ascending returns the order-preserving keys of v (orderKey) in
// ascending order and the indices of v in that order, NaNs first
// (radixSort), both in b's memory, valid until b's next use.
func (b *rankBuffers[I]) ascending(v []float64) (keys []uint64, order []I) {
	n := len(v)
	b.keys, b.keys2, b.order, b.order2 = radixSort(v, resize(b.keys, n), resize(b.keys2, n), resize(b.order, n), resize(b.order2, n))
	return b.keys, b.order
}

// radixSort sorts the keys of v by a least-significant-digit radix sort,
// radixBits of the key a pass: O(n) work per pass, and a pass whose digit
// is the same in every key (as the low mantissa bits of whole numbers
// are) is skipped. Equal keys keep their index order. The four slices
// are its memory, at least len(v) long; it returns the sorted keys and
// the indices of v in their order, then the other two slices.
//
// References:
//
//	D. E. Knuth, The Art of Computer Programming, Vol. 3: Sorting and
//	Searching, 2nd ed. (Addison-Wesley, 1998), §5.2.5 (radix sorting).
func radixSort[I int32 | int](v []float64, keys, keys2 []uint64, order, order2 []I) ([]uint64, []uint64, []I, []I) {
	const passes = 6                          // the histograms below are unrolled for six digits
	const _ = uint(passes*radixBits - 64)     // (a compile error if six digits no longer cover the key)
	const _ = uint(64 - (passes-1)*radixBits) // (… or five already would)
	const mask = 1<<radixBits - 1
	n := len(v)
	keys, order, keys2, order2 = keys[:n], order[:n], keys2[:n], order2[:n]
	var counts [passes][1 << radixBits]I
	c0, c1, c2, c3, c4, c5 := &counts[0], &counts[1], &counts[2], &counts[3], &counts[4], &counts[5]
	for i, x := range v {
		k := orderKey(x)
		keys[i], order[i] = k, I(i)
		c0[k&mask]++
		c1[k>>radixBits&mask]++
		c2[k>>(2*radixBits)&mask]++
		c3[k>>(3*radixBits)&mask]++
		c4[k>>(4*radixBits)&mask]++
		c5[k>>(5*radixBits)]++
	}
	for d := range counts {
		if n < 2 {
			break
		}
		c := &counts[d]
		shift := radixBits * d
		if int(c[keys[0]>>shift&mask]) == n {
			continue // every key has this digit: the pass changes nothing
		}
		var next [1 << radixBits]I
		pos := I(0)
		for b, m := range c {
			next[b] = pos
			pos += m
		}
		for i, k := range keys {
			b := k >> shift & mask
			keys2[next[b]], order2[next[b]] = k, order[i]
			next[b]++
		}
		keys, keys2, order, order2 = keys2, keys, order2, order
	}
	return keys, keys2, order, order2
}

// orderKey maps x to an unsigned integer that sorts as x does: the IEEE
// 754 bits with the sign bit set for a positive number and every bit
// flipped for a negative one, −0 taken as +0 (they are equal), and 0,
// below every number, for a NaN.
func orderKey(x float64) uint64 {
	if math.IsNaN(x) {
		return 0
	}
	if x == 0 {
		x = 0 // −0 → +0
	}
	b := math.Float64bits(x)
	if b>>63 == 1 {
		return ^b
	}
	return b | 1<<63
}

// Quantile returns the q-quantile of v by linear interpolation between
// order statistics (position (n−1)·q, the default of numpy.quantile and R's
// type 7). v is not modified. It returns NaN for an empty v.
func Quantile(v []float64, q float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := slices.Clone(v)
	slices.Sort(s)
	return sortedQuantile(s, q)
}

// sortedQuantile is Quantile of s, which is sorted and not empty.
func sortedQuantile(s []float64, q float64) float64 {
	pos := q * float64(len(s)-1)
	i := int(math.Floor(pos))
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	return s[i] + (pos-float64(i))*(s[i+1]-s[i])
}
