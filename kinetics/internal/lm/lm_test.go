package lm

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// exponential is the model y = b1·(1 − exp(−b2·x)) of the NIST StRD
// datasets Misra1a and BoxBOD, with residuals rᵢ = yᵢ − f(xᵢ; b) (the
// sign NIST uses) and the analytic Jacobian
//
//	∂rᵢ/∂b1 = −(1 − exp(−b2·xᵢ)),  ∂rᵢ/∂b2 = −b1·xᵢ·exp(−b2·xᵢ).
type exponential struct{ x, y []float64 }

func (e exponential) problem() Problem {
	return Problem{
		M: len(e.x),
		Residuals: func(r, b []float64) {
			for i, x := range e.x {
				r[i] = e.y[i] - b[0]*(1-math.Exp(-b[1]*x))
			}
		},
		Jacobian: func(J *mat.Dense, b []float64) {
			for i, x := range e.x {
				J.Set(i, 0, -(1 - math.Exp(-b[1]*x)))
				J.Set(i, 1, -b[0]*x*math.Exp(-b[1]*x))
			}
		},
	}
}

// Misra1a: NIST StRD nonlinear regression, lower difficulty, 14
// observations (Misra, D., 1978, dental research monomolecular adsorption
// study). Data, starts and certified values typed in from
// https://www.itl.nist.gov/div898/strd/nls/data/misra1a.shtml.
var misra1a = exponential{
	x: []float64{77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0},
	y: []float64{10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78},
}

// BoxBOD: NIST StRD nonlinear regression, higher difficulty, 6
// observations (Box, Hunter & Hunter 1978, Statistics for Experimenters,
// pp. 483–487). From https://www.itl.nist.gov/div898/strd/nls/data/boxbod.shtml.
var boxbod = exponential{
	x: []float64{1, 2, 3, 5, 7, 10},
	y: []float64{109, 149, 149, 191, 213, 224},
}

// digits is the log relative error −log10(|got − want|/|want|) NIST uses
// to count agreeing significant digits (capped at 15).
func digits(got, want float64) float64 {
	if got == want {
		return 15
	}
	return math.Min(15, -math.Log10(math.Abs(got-want)/math.Abs(want)))
}

// The certified values of the NIST StRD problems, from NIST's starting
// points. Tolerance: the agreeing significant digits given per case for
// the estimates and the residual sum of squares (NIST certifies 11; StRD
// counts 4 to 6 as a good result for a general-purpose solver), and 6 for
// the standard errors s·sqrt(diag((JᵀJ)⁻¹)) from the returned Jacobian.
// With the default settings BoxBOD stops by the cost test (its cost is
// flat near the minimum, so a relative drop of 1e-12 fixes the estimates
// to about 1e-6 relative); a cost tolerance of 1e-15 reaches 9 digits.
// BoxBOD's start 1 (1, 1) is left out: from there the method runs onto the
// plateau b2 → ∞ (b1 = mean of y = 172.5), where the cost no longer
// changes, a known trap of this problem.
func TestNISTStRD(t *testing.T) {
	for _, c := range []struct {
		name      string
		data      exponential
		start     []float64
		b, se     []float64
		rss       float64
		minDigits float64
		s         Settings
	}{
		{"Misra1a start 1", misra1a, []float64{500, 1e-4},
			[]float64{2.3894212918e+02, 5.5015643181e-04}, []float64{2.7070075241e+00, 7.2668688436e-06}, 1.2455138894e-01, 9, Settings{}},
		{"Misra1a start 2", misra1a, []float64{250, 5e-4},
			[]float64{2.3894212918e+02, 5.5015643181e-04}, []float64{2.7070075241e+00, 7.2668688436e-06}, 1.2455138894e-01, 9, Settings{}},
		{"BoxBOD start 2", boxbod, []float64{100, 0.75},
			[]float64{2.1380940889e+02, 5.4723748542e-01}, []float64{1.2354515176e+01, 1.0455993237e-01}, 1.1680088766e+03, 6, Settings{}},
		{"BoxBOD start 2, cost tolerance 1e-15", boxbod, []float64{100, 0.75},
			[]float64{2.1380940889e+02, 5.4723748542e-01}, []float64{1.2354515176e+01, 1.0455993237e-01}, 1.1680088766e+03, 9, Settings{CostTolerance: 1e-15}},
	} {
		t.Run(c.name, func(t *testing.T) {
			res := Minimize(c.data.problem(), c.start, c.s)
			if !res.Status.Converged() {
				t.Fatalf("status %s after %d iterations", res.Status, res.Iterations)
			}
			for j := range c.b {
				if d := digits(res.X[j], c.b[j]); d < c.minDigits {
					t.Errorf("b%d: got %.11g, want %.11g (certified): %.1f digits, want ≥ %g", j+1, res.X[j], c.b[j], d, c.minDigits)
				}
			}
			rss := 2 * res.Cost
			if d := digits(rss, c.rss); d < c.minDigits {
				t.Errorf("RSS: got %.11g, want %.11g: %.1f digits", rss, c.rss, d)
			}
			se := standardErrors(res)
			for j := range c.se {
				if d := digits(se[j], c.se[j]); d < 6 {
					t.Errorf("SE(b%d): got %.11g, want %.11g: %.1f digits, want ≥ 6", j+1, se[j], c.se[j], d)
				}
			}
			t.Logf("%s: b %.11g (%.1f, %.1f digits), %s, %d iterations", c.name, res.X,
				digits(res.X[0], c.b[0]), digits(res.X[1], c.b[1]), res.Status, res.Iterations)
		})
	}
}

// standardErrors returns s·sqrt(diag((JᵀJ)⁻¹)), s² = RSS/(M − n).
func standardErrors(res Result) []float64 {
	M, n := res.Jacobian.Dims()
	var A mat.SymDense
	A.SymOuterK(1, res.Jacobian.T())
	var ch mat.Cholesky
	if !ch.Factorize(&A) {
		return make([]float64, n)
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return make([]float64, n)
	}
	s2 := 2 * res.Cost / float64(M-n)
	se := make([]float64, n)
	for j := range se {
		se[j] = math.Sqrt(s2 * inv.At(j, j))
	}
	return se
}

// rosenbrock is Moré, Garbow & Hillstrom's problem 1 (J. J. Moré, B. S.
// Garbow, K. E. Hillstrom, "Testing unconstrained optimization software",
// ACM Trans. Math. Softw. 7, 17 (1981)): r1 = 10·(x2 − x1²), r2 = 1 − x1,
// standard start (−1.2, 1), minimum F = 0 at (1, 1).
var rosenbrock = Problem{
	M: 2,
	Residuals: func(r, x []float64) {
		r[0] = 10 * (x[1] - x[0]*x[0])
		r[1] = 1 - x[0]
	},
	Jacobian: func(J *mat.Dense, x []float64) {
		J.Set(0, 0, -20*x[0])
		J.Set(0, 1, 10)
		J.Set(1, 0, -1)
		J.Set(1, 1, 0)
	},
}

// Rosenbrock's valley from the standard start, from 10× the start (MGH's
// second test point), and with forward differences instead of the
// analytic Jacobian. Tolerance 1e-8 absolute on x (the minimum is exact).
func TestRosenbrock(t *testing.T) {
	fd := rosenbrock
	fd.Jacobian = nil
	for _, c := range []struct {
		name  string
		p     Problem
		start []float64
	}{
		{"standard start", rosenbrock, []float64{-1.2, 1}},
		{"10x start", rosenbrock, []float64{-12, 10}},
		{"forward differences", fd, []float64{-1.2, 1}},
	} {
		t.Run(c.name, func(t *testing.T) {
			res := Minimize(c.p, c.start, Settings{})
			if !res.Status.Converged() {
				t.Fatalf("status %s after %d iterations at %v", res.Status, res.Iterations, res.X)
			}
			if math.Abs(res.X[0]-1) > 1e-8 || math.Abs(res.X[1]-1) > 1e-8 || res.Cost > 1e-16 {
				t.Errorf("got x %v, F %g after %d iterations (%s), want (1, 1), F 0", res.X, res.Cost, res.Iterations, res.Status)
			}
		})
	}
}

// central returns the central-difference Jacobian, step h_j = ε^(1/3)·|x_j|
// (truncation error O(h²), rounding O(ε·|r|/h); Nocedal & Wright 2006,
// §8.1).
func central(p Problem, x []float64) *mat.Dense {
	n := len(x)
	J := mat.NewDense(p.M, n, nil)
	rp, rm := make([]float64, p.M), make([]float64, p.M)
	w := append([]float64(nil), x...)
	for j := range n {
		h := math.Cbrt(0x1p-52) * math.Max(math.Abs(x[j]), 1e-300)
		w[j] = x[j] + h
		p.Residuals(rp, w)
		w[j] = x[j] - h
		p.Residuals(rm, w)
		w[j] = x[j]
		for i := range p.M {
			J.Set(i, j, (rp[i]-rm[i])/(2*h))
		}
	}
	return J
}

// The analytic Jacobians above agree with central differences to 1e-7
// relative, and ForwardJacobian with both to 1e-5 relative of the
// column's largest entry (forward differences carry rounding error
// ε·|r|/h ≈ 1.5e-8·|r|, large beside small derivatives when |r| is large).
func TestJacobianByFiniteDifferences(t *testing.T) {
	for _, c := range []struct {
		name string
		p    Problem
		x    []float64
	}{
		{"Misra1a", misra1a.problem(), []float64{250, 5e-4}},
		{"BoxBOD", boxbod.problem(), []float64{100, 0.75}},
		{"Rosenbrock", rosenbrock, []float64{-1.2, 1}},
	} {
		n := len(c.x)
		J, F := mat.NewDense(c.p.M, n, nil), mat.NewDense(c.p.M, n, nil)
		c.p.Jacobian(J, c.x)
		ForwardJacobian(F, c.p.Residuals, c.x)
		C := central(c.p, c.x)
		for j := range n {
			scale := 0.0
			for i := range c.p.M {
				scale = math.Max(scale, math.Abs(J.At(i, j)))
			}
			for i := range c.p.M {
				a, f, cd := J.At(i, j), F.At(i, j), C.At(i, j)
				if math.Abs(a-cd) > 1e-7*scale {
					t.Errorf("%s: J[%d][%d] analytic %.10g, central difference %.10g", c.name, i, j, a, cd)
				}
				if math.Abs(a-f) > 1e-5*scale {
					t.Errorf("%s: J[%d][%d] analytic %.10g, ForwardJacobian %.10g", c.name, i, j, a, f)
				}
			}
		}
	}
}

// Statuses: one iteration is not enough for Rosenbrock. A box that keeps
// x1 ≤ 0.5 holds the point on the bound and near the constrained minimum
// (0.5, 0.25), where F = ½·(1 − 0.5)² = 0.125 (for fixed x1, x2 = x1² is
// best and (1 − x1)² falls until x1 = 1). Projected steps approach a
// minimum on a bound slowly (the projection cuts the step the model
// wants), so the tolerance is 1e-3 on x2 and 1e-5 on F and the status need
// not be a convergence.
func TestStatusAndBounds(t *testing.T) {
	res := Minimize(rosenbrock, []float64{-1.2, 1}, Settings{MaxIterations: 1})
	if res.Status != IterationLimit || res.Iterations != 1 || res.Status.Converged() {
		t.Errorf("one iteration: got %s after %d, want %s after 1", res.Status, res.Iterations, IterationLimit)
	}
	box := rosenbrock
	box.Lower, box.Upper = []float64{-2, -2}, []float64{0.5, 2}
	res = Minimize(box, []float64{-1.2, 1}, Settings{})
	if res.X[0] != 0.5 || math.Abs(res.X[1]-0.25) > 1e-3 || math.Abs(res.Cost-0.125) > 1e-5 {
		t.Errorf("bounded: got x %v, F %.10g (%s), want (0.5, 0.25), F 0.125", res.X, res.Cost, res.Status)
	}
	var calls int
	Minimize(rosenbrock, []float64{-1.2, 1}, Settings{Progress: func(it int, cost float64) {
		calls++
		if it != calls || !(cost >= 0) {
			t.Errorf("progress call %d: iteration %d, cost %g", calls, it, cost)
		}
	}})
	if calls == 0 {
		t.Error("Progress never called")
	}
}

// Misuse panics with a message that starts "lm:".
func TestMisusePanics(t *testing.T) {
	for _, c := range []struct {
		name string
		p    Problem
		x0   []float64
	}{
		{"no residuals", Problem{M: 0, Residuals: rosenbrock.Residuals}, []float64{1}},
		{"no parameters", rosenbrock, nil},
		{"nil residuals", Problem{M: 2}, []float64{1, 1}},
		{"short bounds", Problem{M: 2, Residuals: rosenbrock.Residuals, Lower: []float64{0}}, []float64{1, 1}},
		{"crossed bounds", Problem{M: 2, Residuals: rosenbrock.Residuals, Lower: []float64{1, 1}, Upper: []float64{0, 2}}, []float64{1, 1}},
	} {
		t.Run(c.name, func(t *testing.T) {
			defer func() {
				if msg, _ := recover().(string); !strings.HasPrefix(msg, "lm: ") {
					t.Errorf("got panic %q, want one starting \"lm: \"", msg)
				}
			}()
			Minimize(c.p, c.x0, Settings{})
		})
	}
}

func TestStatusString(t *testing.T) {
	for _, c := range []struct {
		s    Status
		want string
	}{
		{GradientConvergence, "gradient convergence"}, {Stalled, "stalled: no step lowers the cost"}, {Status(99), "Status(99)"},
	} {
		if got := c.s.String(); got != c.want {
			t.Errorf("got %q, want %q", got, c.want)
		}
	}
}

// A Misra1a fit, for the cost of one minimisation of a small problem.
func BenchmarkMisra1a(b *testing.B) {
	p := misra1a.problem()
	for b.Loop() {
		Minimize(p, []float64{500, 1e-4}, Settings{})
	}
}

// A cost that no longer changes to the cost tolerance ends the search at
// the first rejected step that shows it, with CostConvergence at the
// point reached: F = ½·(1 + 10⁻¹³·(x−x₀)²)² rises by about 10⁻¹³·F for
// the unit step a misleading Jacobian (J = 1) proposes, far below the
// default tolerance of 10⁻¹⁰. Without the rule λ grows until the step
// falls under the step tolerance, dozens of evaluations later.
func TestFlatCostStopsAtFirstRejection(t *testing.T) {
	const x0 = 3.0
	p := Problem{M: 1,
		Residuals: func(r, x []float64) { d := x[0] - x0; r[0] = 1 + 1e-13*d*d },
		Jacobian:  func(J *mat.Dense, x []float64) { J.Set(0, 0, 1) },
	}
	res := Minimize(p, []float64{x0}, Settings{})
	if res.Status != CostConvergence || res.X[0] != x0 || res.Evaluations != 2 {
		t.Errorf("got %s at x = %g after %d evaluations, want %s at %g after 2", res.Status, res.X[0], res.Evaluations, CostConvergence, x0)
	}
}

// Normal agrees with gonum's general routines (SymOuterK for JᵀJ, MulVec
// for Jᵀr) to rounding, on shapes below, at and across block edges, with
// zero columns, and without g; and it gives the same bits for any number
// of goroutines.
func TestNormalMatchesGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, c := range []struct {
		name string
		m, n int
	}{
		{"one row", 1, 3}, {"under a block", 100, 6}, {"one block", normalBlock, 6},
		{"across blocks", 3*normalBlock + 17, 7}, {"one column", 5000, 1}, {"eight columns", 3000, 8},
		{"wide", normalBlock + 5, 11},
	} {
		t.Run(c.name, func(t *testing.T) {
			J := mat.NewDense(c.m, c.n, nil)
			r := make([]float64, c.m)
			for i := range c.m {
				r[i] = rng.NormFloat64()
				for j := range c.n {
					if j != 1 { // column 1 stays zero
						J.Set(i, j, rng.NormFloat64()*math.Pow(10, float64(j)))
					}
				}
			}
			var want mat.SymDense
			want.SymOuterK(1, J.T())
			var wantg mat.VecDense
			wantg.MulVec(J.T(), mat.NewVecDense(c.m, r))
			A, g := mat.NewSymDense(c.n, nil), mat.NewVecDense(c.n, nil)
			Normal(A, g, J, r)
			for a := range c.n {
				if d := math.Abs(g.AtVec(a) - wantg.AtVec(a)); d > 1e-12*(1+math.Abs(wantg.AtVec(a)))*float64(c.m) {
					t.Errorf("g[%d]: got %g, want %g (gonum MulVec)", a, g.AtVec(a), wantg.AtVec(a))
				}
				for b := range c.n {
					if d := math.Abs(A.At(a, b) - want.At(a, b)); d > 1e-13*math.Abs(want.At(a, a)+want.At(b, b))+1e-300 {
						t.Errorf("A[%d][%d]: got %g, want %g (gonum SymOuterK)", a, b, A.At(a, b), want.At(a, b))
					}
				}
			}
			B := mat.NewSymDense(c.n, nil)
			Normal(B, nil, J, nil)
			prev := runtime.GOMAXPROCS(1)
			C := mat.NewSymDense(c.n, nil)
			Normal(C, nil, J, nil)
			runtime.GOMAXPROCS(prev)
			if !mat.Equal(A, B) || !mat.Equal(B, C) {
				t.Errorf("JᵀJ differs with g, without g, or on one goroutine")
			}
		})
	}
}

// BenchmarkNormal5000 is Normal on the Jacobian shape of a 5,000-run fit
// of both metrics: 10,000 rows, 6 coordinates.
func BenchmarkNormal5000(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	J := mat.NewDense(10000, 6, nil)
	r := make([]float64, 10000)
	for i := range r {
		r[i] = rng.NormFloat64()
		for j := range 6 {
			J.Set(i, j, rng.NormFloat64())
		}
	}
	A, g := mat.NewSymDense(6, nil), mat.NewVecDense(6, nil)
	for b.Loop() {
		Normal(A, g, J, r)
	}
}
