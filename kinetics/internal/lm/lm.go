package lm

import (
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"
)

// Problem is a least-squares problem: M residuals of len(x) parameters.
type Problem struct {
	// M is the number of residuals, ≥ 1.
	M int
	// Residuals writes r(x) into r (length M). It must not keep x or r.
	Residuals func(r, x []float64)
	// Jacobian writes J = ∂r/∂x (M × len(x)) at x into J. Nil means
	// forward differences of Residuals (ForwardJacobian).
	Jacobian func(J *mat.Dense, x []float64)
	// Lower and Upper, when not nil, bound every parameter (length
	// len(x), Lower[j] ≤ Upper[j]); steps are projected onto the box.
	// Nil means unbounded.
	Lower, Upper []float64
}

// Settings tunes Minimize. The zero value works: every zero field takes
// its default.
type Settings struct {
	// MaxIterations bounds the iterations (Jacobian evaluations after the
	// first), ≥ 1; default 200.
	MaxIterations int
	// GradientTolerance stops when max|g_j| ≤ GradientTolerance·(1 + F),
	// g = Jᵀr, in units of F per unit of x; > 0, default 1e-12.
	GradientTolerance float64
	// StepTolerance stops when an accepted step has ‖Δx‖ ≤
	// StepTolerance·(‖x‖ + StepTolerance), relative; > 0, default 1e-10.
	StepTolerance float64
	// CostTolerance stops when an accepted step lowers F, or a rejected
	// one raises it, by no more than CostTolerance·F, relative; > 0,
	// default 1e-10.
	CostTolerance float64
	// StallTolerance: when no step lowers F, the point still counts as
	// converged (PrecisionLimit) if max|g_j| ≤ StallTolerance·(1 + F);
	// > 0, default 1e-6.
	StallTolerance float64
	// InitialDamping is the starting damping λ₀ (dimensionless: the
	// damping term is λ·diag(JᵀJ), so λ₀ does not depend on the scale of
	// the residuals or the parameters); > 0, default 1e-3 (Madsen, Nielsen
	// & Tingleff 2004 suggest 1e-6 to 1 depending on how good the start
	// is). A caller continuing a minimisation passes the previous
	// Result.Damping.
	InitialDamping float64
	// Progress, when not nil, is called after each accepted iteration with
	// its number (from 1) and the cost F.
	Progress func(iteration int, cost float64)
}

func (s Settings) withDefaults() Settings {
	def := func(v *float64, d float64) {
		if *v <= 0 {
			*v = d
		}
	}
	if s.MaxIterations <= 0 {
		s.MaxIterations = 200
	}
	def(&s.GradientTolerance, 1e-12)
	def(&s.StepTolerance, 1e-10)
	def(&s.CostTolerance, 1e-10)
	def(&s.StallTolerance, 1e-6)
	def(&s.InitialDamping, 1e-3)
	return s
}

// Status says why Minimize stopped.
type Status int

// The statuses; see the package comment for the rules.
const (
	GradientConvergence Status = iota + 1
	StepConvergence
	CostConvergence
	PrecisionLimit
	IterationLimit
	Stalled
)

var statusNames = map[Status]string{
	GradientConvergence: "gradient convergence",
	StepConvergence:     "step convergence",
	CostConvergence:     "cost convergence",
	PrecisionLimit:      "no step lowers the cost; gradient small (precision limit)",
	IterationLimit:      "iteration limit reached",
	Stalled:             "stalled: no step lowers the cost",
}

// String names the status in words.
func (s Status) String() string {
	if n, ok := statusNames[s]; ok {
		return n
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Converged reports whether the status is one of the convergence tests
// (gradient, step, cost, precision limit).
func (s Status) Converged() bool { return s >= GradientConvergence && s <= PrecisionLimit }

// Result is where Minimize stopped: always the best point reached.
type Result struct {
	X         []float64  // parameters
	Cost      float64    // F = ½·Σ r² at X
	Residuals []float64  // r at X
	Jacobian  *mat.Dense // J at X (M × len(X))
	Status    Status
	// Damping is λ at the end, for Settings.InitialDamping of a
	// continuation.
	Damping float64
	// Iterations counts the iterations; Evaluations the calls of
	// Residuals and JacobianEvaluations those of Jacobian (or of the
	// forward differences).
	Iterations, Evaluations, JacobianEvaluations int
}

// Minimize runs Levenberg–Marquardt from x0 (which it does not change)
// and returns the best point reached with a Status. It panics when p.M < 1,
// len(x0) < 1, p.Residuals is nil, or the bounds have the wrong length or
// Lower[j] > Upper[j].
func Minimize(p Problem, x0 []float64, s Settings) Result {
	n := len(x0)
	p.mustBeValid(n)
	s = s.withDefaults()
	m := &minimizer{p: p, s: s, n: n}
	return m.run(x0)
}

func (p Problem) mustBeValid(n int) {
	if p.M < 1 || n < 1 {
		panic(fmt.Sprintf("lm: Minimize with %d residuals and %d parameters", p.M, n))
	}
	if p.Residuals == nil {
		panic("lm: Minimize with a nil Residuals function")
	}
	for _, b := range [][]float64{p.Lower, p.Upper} {
		if b != nil && len(b) != n {
			panic(fmt.Sprintf("lm: bounds of length %d for %d parameters", len(b), n))
		}
	}
	if p.Lower != nil && p.Upper != nil {
		for j := range n {
			if p.Lower[j] > p.Upper[j] {
				panic(fmt.Sprintf("lm: lower bound %g above upper bound %g for parameter %d", p.Lower[j], p.Upper[j], j))
			}
		}
	}
}

type minimizer struct {
	p   Problem
	s   Settings
	n   int
	res Result
}

func (m *minimizer) residuals(r, x []float64) {
	m.p.Residuals(r, x)
	m.res.Evaluations++
}

func (m *minimizer) jacobian(J *mat.Dense, x []float64) {
	if m.p.Jacobian != nil {
		m.p.Jacobian(J, x)
	} else {
		ForwardJacobian(J, m.p.Residuals, x)
	}
	m.res.JacobianEvaluations++
}

// clamp projects x onto the box.
func (m *minimizer) clamp(x []float64) {
	for j := range x {
		if m.p.Lower != nil {
			x[j] = math.Max(x[j], m.p.Lower[j])
		}
		if m.p.Upper != nil {
			x[j] = math.Min(x[j], m.p.Upper[j])
		}
	}
}

func (m *minimizer) run(x0 []float64) Result {
	M, n := m.p.M, m.n
	x := append([]float64(nil), x0...)
	m.clamp(x)
	r, rn := make([]float64, M), make([]float64, M)
	m.residuals(r, x)
	cost := dot(r, r) / 2
	J := mat.NewDense(M, n, nil)
	m.jacobian(J, x)
	A := mat.NewSymDense(n, nil)
	lambda := m.s.InitialDamping
	nu := 2.0
	status := IterationLimit
	g := mat.NewVecDense(n, nil)
	for it := 1; it <= m.s.MaxIterations; it++ {
		m.res.Iterations++
		Normal(A, g, J, r)
		gmax := 0.0
		for j := range n {
			gmax = math.Max(gmax, math.Abs(g.AtVec(j)))
		}
		if gmax <= m.s.GradientTolerance*(1+cost) {
			status = GradientConvergence
			break
		}
		st := m.step(A, g, J, x, r, rn, cost, &lambda, &nu)
		if !st.accepted && st.status != 0 {
			status = st.status
			break
		}
		if !st.accepted {
			status = Stalled
			if gmax <= m.s.StallTolerance*(1+cost) {
				status = PrecisionLimit
			}
			break
		}
		r, rn = rn, r
		cost = st.cost
		m.jacobian(J, x)
		if m.s.Progress != nil {
			m.s.Progress(it, cost)
		}
		if st.status != 0 {
			status = st.status
			break
		}
	}
	m.res.X, m.res.Cost, m.res.Residuals, m.res.Jacobian, m.res.Status, m.res.Damping = x, cost, r, J, status, lambda
	return m.res
}

// Normal sets A = JᵀJ and, when g is not nil, g = Jᵀr: the normal
// equations of the linear least-squares problem J·Δ ≈ r. It sums only the
// upper triangle, in one pass over the rows of J (n is a handful of
// parameters, M thousands of residuals: gonum's general routines spend
// more on the loop structure than on the products here), in blocks of
// normalBlock rows on up to GOMAXPROCS goroutines. The blocks are fixed
// and added in order, so the sums do not depend on the number of
// goroutines or their timing. A must be n×n.
func Normal(A *mat.SymDense, g *mat.VecDense, J *mat.Dense, r []float64) {
	raw := J.RawMatrix()
	n := raw.Cols
	w := n*n + n // upper triangle by rows, then g
	blocks := (raw.Rows + normalBlock - 1) / normalBlock
	part := make([]float64, max(blocks, 1)*w)
	sum := func(b int) {
		lo, hi := b*normalBlock, min((b+1)*normalBlock, raw.Rows)
		normalRows(raw.Data[lo*raw.Stride:], raw.Stride, n, hi-lo, r, lo, part[b*w:(b+1)*w])
	}
	workers := min(runtime.GOMAXPROCS(0), blocks)
	if workers <= 1 {
		for b := range blocks {
			sum(b)
		}
	} else {
		var next atomic.Int64
		var wg sync.WaitGroup
		for range workers {
			wg.Go(func() {
				for b := int(next.Add(1) - 1); b < blocks; b = int(next.Add(1) - 1) {
					sum(b)
				}
			})
		}
		wg.Wait()
	}
	for b := 1; b < blocks; b++ {
		for k, v := range part[b*w : (b+1)*w] {
			part[k] += v
		}
	}
	for a := range n {
		if g != nil {
			g.SetVec(a, part[n*n+a])
		}
		for c := a; c < n; c++ {
			A.SetSym(a, c, part[a*n+c])
		}
	}
}

// normalRows adds the products of rows rows of J (data, from its first
// row, with stride) into out: the upper triangle of JᵀJ by rows, then
// Jᵀr (r from index r0; nil: 0).
func normalRows(data []float64, stride, n, rows int, r []float64, r0 int, out []float64) {
	if n == 6 && r != nil {
		normalRows6(data, stride, rows, r[r0:r0+rows], out)
		return
	}
	acc, gv := out[:n*n], out[n*n:n*n+n]
	for i := range rows {
		row := data[i*stride : i*stride+n]
		ri := 0.0
		if r != nil {
			ri = r[r0+i]
		}
		for a, ra := range row {
			gv[a] += ra * ri
			up := acc[a*n+a : a*n+n]
			for c, rc := range row[a:] {
				up[c] += ra * rc
			}
		}
	}
}

// normalRows6 is normalRows for 6 columns with r, the shape of a fit of
// both metrics with six free parameters, its sums held in variables.
func normalRows6(data []float64, stride, rows int, r []float64, out []float64) {
	var a00, a01, a02, a03, a04, a05 float64
	var a11, a12, a13, a14, a15 float64
	var a22, a23, a24, a25 float64
	var a33, a34, a35 float64
	var a44, a45, a55 float64
	var g0, g1, g2, g3, g4, g5 float64
	for i, ri := range r[:rows] {
		row := data[i*stride : i*stride+6 : i*stride+6]
		x0, x1, x2, x3, x4, x5 := row[0], row[1], row[2], row[3], row[4], row[5]
		g0 += x0 * ri
		g1 += x1 * ri
		g2 += x2 * ri
		g3 += x3 * ri
		g4 += x4 * ri
		g5 += x5 * ri
		a00 += x0 * x0
		a01 += x0 * x1
		a02 += x0 * x2
		a03 += x0 * x3
		a04 += x0 * x4
		a05 += x0 * x5
		a11 += x1 * x1
		a12 += x1 * x2
		a13 += x1 * x3
		a14 += x1 * x4
		a15 += x1 * x5
		a22 += x2 * x2
		a23 += x2 * x3
		a24 += x2 * x4
		a25 += x2 * x5
		a33 += x3 * x3
		a34 += x3 * x4
		a35 += x3 * x5
		a44 += x4 * x4
		a45 += x4 * x5
		a55 += x5 * x5
	}
	copy(out[0:6], []float64{a00, a01, a02, a03, a04, a05})
	copy(out[7:12], []float64{a11, a12, a13, a14, a15})
	copy(out[14:18], []float64{a22, a23, a24, a25})
	copy(out[21:24], []float64{a33, a34, a35})
	copy(out[28:30], []float64{a44, a45})
	out[35] = a55
	copy(out[36:42], []float64{g0, g1, g2, g3, g4, g5})
}

// normalBlock is the rows of J one block of Normal sums.
const normalBlock = 2048

// minDampingFactor is the most an accepted step lowers λ by: 1/10, where
// Nielsen's rule alone stops at 1/3; a good model (ρ near 1) then reaches
// Gauss–Newton steps in a few iterations instead of many.
const minDampingFactor = 0.1

// stepResult is the outcome of one iteration's search for a step.
type stepResult struct {
	accepted bool
	cost     float64
	// status is StepConvergence or CostConvergence, else 0; not accepted
	// with StepConvergence: the rejected step was already within the step
	// tolerance, with CostConvergence: it changed the cost by no more
	// than the cost tolerance (see step).
	status Status
}

// step tries damped steps from x until one lowers the cost; on success it
// writes the new point into x and its residuals into rn.
func (m *minimizer) step(A *mat.SymDense, g *mat.VecDense, J *mat.Dense, x, r, rn []float64, cost float64, lambda, nu *float64) stepResult {
	n := m.n
	xn := make([]float64, n)
	dx := make([]float64, n)
	D := mat.NewSymDense(n, nil)
	for try := 0; try < 40; try++ {
		D.CopySym(A)
		for j := range n {
			D.SetSym(j, j, A.At(j, j)+*lambda*math.Max(A.At(j, j), 1e-12))
		}
		var ch mat.Cholesky
		var h mat.VecDense
		if !ch.Factorize(D) || ch.SolveVecTo(&h, g) != nil {
			*lambda *= *nu
			*nu *= 2
			continue
		}
		for j := range n {
			xn[j] = x[j] - h.AtVec(j)
		}
		m.clamp(xn)
		m.residuals(rn, xn)
		costn := dot(rn, rn) / 2
		if costn < cost && !math.IsNaN(costn) {
			for j := range n {
				dx[j] = xn[j] - x[j]
			}
			rho := (cost - costn) / math.Max(predicted(J, r, dx), 1e-300)
			*lambda *= math.Max(minDampingFactor, 1-math.Pow(2*rho-1, 3))
			*nu = 2
			res := stepResult{accepted: true, cost: costn}
			switch {
			case m.small(dx, x):
				res.status = StepConvergence
			case cost-costn <= m.s.CostTolerance*cost || costn <= 1e-300:
				res.status = CostConvergence
			}
			copy(x, xn)
			return res
		}
		// A rejected step already within the step tolerance: a larger λ
		// only shortens it, so the point is a minimum to that tolerance
		// (MINPACK's xtol test, Moré 1978).
		for j := range n {
			dx[j] = xn[j] - x[j]
		}
		if m.small(dx, x) {
			return stepResult{status: StepConvergence}
		}
		// A rejected step that changes F by no more than CostTolerance·F:
		// the cost no longer changes to the tolerance (the step is lost
		// in rounding), and shorter steps change it less.
		if !math.IsNaN(costn) && costn-cost <= m.s.CostTolerance*cost {
			return stepResult{status: CostConvergence}
		}
		*lambda *= *nu
		*nu *= 2
		if *lambda > 1e300 {
			break
		}
	}
	return stepResult{}
}

// small reports whether step dx from x is within the step tolerance,
// ‖dx‖ ≤ StepTolerance·(‖x‖ + StepTolerance).
func (m *minimizer) small(dx, x []float64) bool {
	return math.Sqrt(dot(dx, dx)) <= m.s.StepTolerance*(math.Sqrt(dot(x, x))+m.s.StepTolerance)
}

// predicted returns the reduction of the linear model for step dx,
// L(0) − L(dx) = ½·(‖r‖² − ‖r + J·dx‖²).
func predicted(J *mat.Dense, r, dx []float64) float64 {
	var d mat.VecDense
	d.MulVec(J, mat.NewVecDense(len(dx), dx))
	pred := 0.0
	for i := range r {
		pred += r[i]*r[i] - (r[i]+d.AtVec(i))*(r[i]+d.AtVec(i))
	}
	return pred / 2
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// ForwardJacobian writes the forward-difference Jacobian of residuals at x
// into J (rows the residuals, columns the parameters),
//
//	J_ij ≈ (r_i(x + h_j·e_j) − r_i(x)) / h_j,  h_j = √ε·|x_j| (√ε when x_j = 0),
//
// ε the float64 machine epsilon (truncation error O(h), rounding error
// O(ε·|r|/h); Nocedal & Wright, Numerical Optimization, 2nd ed., Springer
// (2006), §8.1). It panics if J does not have len(x) columns.
func ForwardJacobian(J *mat.Dense, residuals func(r, x []float64), x []float64) {
	M, n := J.Dims()
	if n != len(x) {
		panic(fmt.Sprintf("lm: ForwardJacobian with %d columns for %d parameters", n, len(x)))
	}
	r0, r1 := make([]float64, M), make([]float64, M)
	residuals(r0, x)
	w := append([]float64(nil), x...)
	for j := range n {
		h := math.Sqrt(0x1p-52) * math.Abs(x[j])
		if h == 0 {
			h = math.Sqrt(0x1p-52)
		}
		w[j] = x[j] + h
		h = w[j] - x[j] // the step actually taken
		residuals(r1, w)
		for i := range M {
			J.Set(i, j, (r1[i]-r0[i])/h)
		}
		w[j] = x[j]
	}
}
