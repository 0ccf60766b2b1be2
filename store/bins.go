package store

import "math"

// ColumnQuery asks RunLog.Columns for the metric and parameters of the
// runs that pass Filter and have Metric. Twins, when not nil, names per
// parameter its logged twin (or ""), whose value a run that has it gives
// in place of the parameter's, as cmd/foilrun/internal/lab.Pick does for
// logged conditions.
type ColumnQuery struct {
	Filter Filter
	Metric string
	Params []string
	Twins  []string
}

// Columns is what RunLog.Columns returns: one column per value, run i
// being row i of each, in run order.
type Columns struct {
	Metric   []float64   // the metric's mean
	Params   [][]float64 // Params[j][i]: run i's value of parameter j (its twin where it has one), NaN where none
	Logged   int         // runs that gave a twin for any parameter
	PerParam []int       // per parameter, the runs that gave its twin
}

// Best bins the samples by their parameters (the Params of each sample in
// the order of params; one or two) into n equal-width bins over each
// parameter's range and returns count, mean, min and max of the metric and
// the share of runs meeting the goal in every non-empty cell. A parameter
// with a single value gets one bin. A sample that lacks a parameter (NaN)
// is counted as missing. BestColumns does the same on columns.
func Best(samples []Sample, metric string, params []string, n int, goal Goal) BestTable {
	t := BestTable{Metric: metric, Params: params, Goal: goal}
	binRuns(&t, n, len(samples), func(i int) float64 { return samples[i].Metric }, func(i, j int) float64 {
		if j < len(samples[i].Params) {
			return samples[i].Params[j]
		}
		return math.NaN()
	})
	return t
}

// BestColumns is Best on columns: ms[i] is run i's metric and xs[j][i]
// its value of params[j] (NaN where it has none). The slices are read,
// not copied.
func BestColumns(metric string, params []string, ms []float64, xs [][]float64, n int, goal Goal) BestTable {
	t := BestTable{Metric: metric, Params: params, Goal: goal}
	binRuns(&t, n, len(ms), func(i int) float64 { return ms[i] }, func(i, j int) float64 { return xs[j][i] })
	return t
}

// binRuns fills t (Runs, Missing, Bins) from the runs 0 … runs−1, whose
// metric is m(i) and value of parameter j x(i, j): the ranges over the
// runs that have every parameter, then each of those counted in its cell,
// in run order (the mean is the sum in that order over the count).
func binRuns(t *BestTable, n, runs int, m func(i int) float64, x func(i, j int) float64) {
	np := len(t.Params)
	lo, hi := make([]float64, np), make([]float64, np)
	for j := range np {
		lo[j], hi[j] = math.Inf(1), math.Inf(-1)
	}
	complete := func(i int) bool {
		for j := range np {
			if math.IsNaN(x(i, j)) {
				return false
			}
		}
		return true
	}
	for i := range runs {
		if !complete(i) {
			t.Missing++
			continue
		}
		for j := range np {
			lo[j], hi[j] = math.Min(lo[j], x(i, j)), math.Max(hi[j], x(i, j))
		}
	}
	t.Runs = runs - t.Missing
	if t.Runs == 0 {
		return
	}
	g := newBinGrid(lo, hi, n)
	c := g.counter(t.Goal)
	for i := range runs {
		if !complete(i) {
			continue
		}
		cell := 0
		for j := range np {
			cell = cell*g.n[j] + g.bin(j, x(i, j))
		}
		c.add(cell, m(i))
	}
	t.Bins = c.bins()
}

// binGrid is the cells of a Best table: per parameter its range lo–hi
// and its number of equal-width bins n (1 when lo = hi); cell indices run
// first parameter slowest.
type binGrid struct {
	lo, hi []float64
	n      []int
}

// newBinGrid is the grid of n bins per parameter over the ranges lo–hi
// (n < 1 counts as 1; a parameter with lo = hi gets one bin).
func newBinGrid(lo, hi []float64, n int) binGrid {
	g := binGrid{lo: lo, hi: hi, n: make([]int, len(lo))}
	for j := range lo {
		g.n[j] = max(n, 1)
		if hi[j] == lo[j] {
			g.n[j] = 1
		}
	}
	return g
}

// bin is the bin of value x of parameter j,
//
//	k = ⌊n · (x − lo) / (hi − lo)⌋, kept within 0 … n−1,
//
// so the value hi goes into the last bin, which includes its upper edge;
// 0 for a parameter of one bin.
func (g binGrid) bin(j int, x float64) int {
	if g.n[j] == 1 {
		return 0
	}
	k := int(float64(g.n[j]) * (x - g.lo[j]) / (g.hi[j] - g.lo[j]))
	return min(max(k, 0), g.n[j]-1)
}

// binCounter sums the metric per cell of a grid, in the order the runs
// are added.
type binCounter struct {
	grid binGrid
	goal Goal
	accs []binAcc
}

type binAcc struct {
	n, meet  int
	sum      float64
	min, max float64
}

// counter returns an empty counter over the grid's cells.
func (g binGrid) counter(goal Goal) *binCounter {
	cells := 1
	for _, k := range g.n {
		cells *= k
	}
	c := &binCounter{grid: g, goal: goal, accs: make([]binAcc, cells)}
	for i := range c.accs {
		c.accs[i].min, c.accs[i].max = math.Inf(1), math.Inf(-1)
	}
	return c
}

// add counts a run with metric value m in the cell.
func (c *binCounter) add(cell int, m float64) {
	a := &c.accs[cell]
	a.n++
	a.sum += m
	a.min, a.max = math.Min(a.min, m), math.Max(a.max, m)
	if c.goal.Set() && c.goal.Met(m) {
		a.meet++
	}
}

// bins returns the non-empty cells, in cell order.
func (c *binCounter) bins() []Bin {
	g := c.grid
	var out []Bin
	for cell, a := range c.accs {
		if a.n == 0 {
			continue
		}
		b := Bin{Lo: make([]float64, len(g.n)), Hi: make([]float64, len(g.n)), Count: a.n,
			Mean: a.sum / float64(a.n), Min: a.min, Max: a.max, Meeting: a.meet, Share: math.NaN()}
		rest := cell
		for j := len(g.n) - 1; j >= 0; j-- {
			k := rest % g.n[j]
			rest /= g.n[j]
			w := (g.hi[j] - g.lo[j]) / float64(g.n[j])
			b.Lo[j], b.Hi[j] = g.lo[j]+float64(k)*w, g.lo[j]+float64(k+1)*w
			if k == g.n[j]-1 {
				b.Hi[j] = g.hi[j]
			}
		}
		if c.goal.Set() {
			b.Share = float64(a.meet) / float64(a.n)
		}
		out = append(out, b)
	}
	return out
}
