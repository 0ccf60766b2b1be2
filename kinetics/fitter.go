package kinetics

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"gonum.org/v1/gonum/mat"

	"github.com/foilrun/foilrun/kinetics/internal/lm"
)

func sq(x float64) float64 { return x * x }

type fitRow struct {
	obs     int
	density bool
	y       float64 // measured value on the fit scale
}

type fitter struct {
	s        FitSettings
	start    Params
	mode     Mode
	v0       fitVec
	lo, hi   fitVec
	bounds   map[string][2]float64 // in file units, by key (see bound)
	fixed    [nFit]bool
	free     []int
	all      []Observation
	obs      []int // indexes of used observations
	rows     []fitRow
	sc, sd   float64
	xlo, xhi float64
	warnings []string
	status   FitStatus
	iters    int
	evals    int
	jac      *mat.Dense
	damping  float64  // λ where the last minimisation ended; 0 before the first
	idx      [][2]int // rows of each used observation
	// slots hold the model at the last two points evaluated; pinned is
	// the one of the last Jacobian (see values).
	slots  [2]valueSlot
	pinned int
	ctab   *closedRuns // see closedTable

	// The coordinates the minimiser moves (see fitCoord): v = base +
	// Σ x_j·coords[j].dir, started at x0, bounded by clo, chi.
	tref         float64 // reference temperature, K
	coords       []fitCoord
	base         fitVec
	x0, clo, chi []float64
	absorbed     [nFit]bool // moved through a combination
	unidentified [nFit]bool // not identifiable by the data's metrics
}

// warn adds a warning once: a text already given is not repeated.
func (f *fitter) warn(format string, args ...any) {
	w := fmt.Sprintf(format, args...)
	if !slices.Contains(f.warnings, w) {
		f.warnings = append(f.warnings, w)
	}
}

// cloglog returns ln X of a coverage clipped to [ε, 1 − ε].
func (f *fitter) cloglog(theta float64) float64 {
	return f.clogX(-math.Log1p(-math.Min(theta, 1-f.s.Epsilon)))
}

func (f *fitter) clogX(X float64) float64 { return math.Log(math.Min(math.Max(X, f.xlo), f.xhi)) }

func (f *fitter) vec(x []float64) fitVec {
	v := f.base
	for j, c := range f.coords {
		v = v.plus(x[j], c.dir)
	}
	return v
}

// outputs returns cloglog θ and ln N of a prepared run.
func (f *fitter) outputs(pr *Prepared, v *fitVec, iso []float64) (c, lnN float64) {
	X, N := pr.final(v, iso, -1, math.NaN())
	return f.clogX(X), math.Log(math.Max(N, 1))
}

// runValues are one run's model outputs at a point: the extended coverage
// X and nuclei density N, their fit-scale forms c = ln clip(X) and
// lnN = ln max(N, 1), and for a closed-form run (see closedForm)
// dI = ∂ln N/∂ln I and dG = ∂ln N/∂ln G.
type runValues struct{ X, N, c, lnN, dI, dG float64 }

// valueSlot is the model evaluated for every used run at one point x.
type valueSlot struct {
	x    []float64
	vals []runValues
}

// values returns the model outputs of every used run at x. Two points are
// kept: the one the last Jacobian was taken at (pinned) and the last
// other one, so the Jacobian at an accepted step, the next stage and the
// result reuse the residual evaluation of that step instead of repeating
// it; a miss evaluates into the slot that is not pinned.
func (f *fitter) values(x []float64, pin bool) []runValues {
	k := -1
	for i := range f.slots {
		if f.slots[i].vals != nil && slices.Equal(f.slots[i].x, x) {
			k = i
		}
	}
	if k < 0 {
		k = 1 - f.pinned
		f.evaluate(&f.slots[k], x)
	}
	if pin {
		f.pinned = k
	}
	return f.slots[k].vals
}

// evaluate fills slot with the model at x (one pass over the runs).
func (f *fitter) evaluate(slot *valueSlot, x []float64) {
	if len(slot.vals) != len(f.obs) {
		slot.vals = make([]runValues, len(f.obs))
	}
	slot.x = append(slot.x[:0], x...)
	v := f.vec(x)
	density := f.hasDensity()
	t := f.closedTable()
	f.parallel(func(k int) {
		if t.use[k] {
			slot.vals[k] = t.model(k, x, density, f.xlo, f.xhi)
			return
		}
		slot.vals[k] = f.model(f.all[f.obs[k]].Prepared, &v)
	})
	f.evals++
}

// model evaluates one run at v that has no closed form (see
// closedTable for those).
func (f *fitter) model(pr *Prepared, v *fitVec) runValues {
	var rv runValues
	rv.X, rv.N = pr.final(v, nil, -1, math.NaN())
	rv.c, rv.lnN = f.clogX(rv.X), math.Log(math.Max(rv.N, 1))
	return rv
}

// hasDensity reports whether any row is a nuclei density.
func (f *fitter) hasDensity() bool {
	_, nd := f.rowCounts()
	return nd > 0
}

// parallel calls fn(k) for every used observation index position k.
func (f *fitter) parallel(fn func(k int)) {
	n := len(f.obs)
	w := f.s.Workers
	if n < 64 || w <= 1 {
		for k := range n {
			fn(k)
		}
		return
	}
	var wg sync.WaitGroup
	chunk := (n + w - 1) / w
	for lo := 0; lo < n; lo += chunk {
		hi := min(lo+chunk, n)
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := lo; k < hi; k++ {
				fn(k)
			}
		}()
	}
	wg.Wait()
}

// rowIndex returns the row indexes of each used observation (at most two).
func (f *fitter) rowIndex() [][2]int {
	idx := make([][2]int, len(f.obs))
	pos := make([]int, len(f.all)) // observation → position in f.obs
	for k, o := range f.obs {
		pos[o] = k
		idx[k] = [2]int{-1, -1}
	}
	for r, row := range f.rows {
		k := pos[row.obs]
		if row.density {
			idx[k][1] = r
		} else {
			idx[k][0] = r
		}
	}
	return idx
}

func (f *fitter) residuals(r, x []float64) {
	vals := f.values(x, false)
	for k, rows := range f.idx {
		if i := rows[0]; i >= 0 {
			r[i] = (f.rows[i].y - vals[k].c) / f.sc
		}
		if i := rows[1]; i >= 0 {
			r[i] = (f.rows[i].y - vals[k].lnN) / f.sd
		}
	}
}

// jacobian fills J (rows × free) with ∂r/∂x. The model values at x come
// from values (already there when x is the step just accepted); closed-
// form runs need nothing more, the others one difference pass per
// channel and coordinate (counted in f.evals once per call).
func (f *fitter) jacobian(J *mat.Dense, x []float64) {
	vals := f.values(x, true)
	v := f.vec(x)
	idx := f.idx
	const h = 1e-6
	open := false
	for _, o := range f.obs {
		open = open || !f.all[o].Prepared.closed()
	}
	t := f.closedTable()
	f.parallel(func(k int) {
		if t.use[k] {
			var jc, jn []float64
			if r := idx[k][0]; r >= 0 {
				jc = J.RawRowView(r)
			}
			if r := idx[k][1]; r >= 0 {
				jn = J.RawRowView(r)
			}
			t.rows(k, vals[k], f.xlo, f.xhi, f.sc, f.sd, jc, jn)
			return
		}
		pr := f.all[f.obs[k]].Prepared
		var gc, gn fitVec // ∂(cloglog θ)/∂v, ∂(ln N)/∂v
		ch := pr.isoChannels(&v, make([]float64, 0, 2*pr.nIso))
		c0, n0 := vals[k].c, vals[k].lnN
		for c := range ch {
			save := ch[c]
			ch[c] += h
			c1, n1 := f.outputs(pr, &v, ch)
			ch[c] = save
			pr.channelGrad(c, (c1-c0)/h, &gc)
			pr.channelGrad(c, (n1-n0)/h, &gn)
		}
		// Parameters reach the model other than through the
		// constant-temperature channels on ramps, and N0 always: step
		// along each coordinate with the channels held.
		ramps := pr.nIso < len(pr.segs)
		var dc, dn []float64
		for _, c := range f.coords {
			if !ramps && c.dir[fitLnN0] == 0 {
				dc, dn = append(dc, 0), append(dn, 0)
				continue
			}
			w := v.plus(h, c.dir)
			c1, n1 := f.outputs(pr, &w, ch)
			dc, dn = append(dc, (c1-c0)/h), append(dn, (n1-n0)/h)
		}
		f.setRows(J, idx[k], &gc, &gn, dc, dn)
	})
	if open {
		f.evals++
	}
}

// setRows writes one run's gradients into its Jacobian rows: the
// gradients with respect to v along each coordinate's direction, plus
// the direct derivatives dc, dn along the coordinates (nil: none).
func (f *fitter) setRows(J *mat.Dense, rows [2]int, gc, gn *fitVec, dc, dn []float64) {
	var jc, jn []float64
	if r := rows[0]; r >= 0 {
		jc = J.RawRowView(r)
	}
	if r := rows[1]; r >= 0 {
		jn = J.RawRowView(r)
	}
	for j := range f.coords {
		dir := &f.coords[j].dir
		if jc != nil {
			a := gc.dot(*dir)
			if dc != nil {
				a += dc[j]
			}
			jc[j] = -a / f.sc
		}
		if jn != nil {
			b := gn.dot(*dir)
			if dn != nil {
				b += dn[j]
			}
			jn[j] = -b / f.sd
		}
	}
}

// minimize runs Levenberg–Marquardt (package lm) from x within the bounds
// and returns the best point; the status, iterations and final Jacobian
// are kept for the result. A second call (the re-weighted stage) starts
// from the damping where the first ended.
func (f *fitter) minimize(x []float64) []float64 {
	lo, hi := f.clo, f.chi
	s := lm.Settings{MaxIterations: f.s.MaxIterations, InitialDamping: f.damping}
	if f.s.Progress != nil {
		done := f.iters
		s.Progress = func(it int, cost float64) { f.s.Progress(done+it, 2*cost) }
	}
	res := lm.Minimize(lm.Problem{M: len(f.rows), Residuals: f.residuals, Jacobian: f.jacobian, Lower: lo, Upper: hi}, x, s)
	f.iters += res.Iterations
	f.jac, f.damping = res.Jacobian, res.Damping
	switch {
	case res.Status.Converged():
		f.status = Converged
	case res.Status == lm.IterationLimit:
		f.status = IterationLimit
	default:
		f.status = Stalled
	}
	return res.X
}
