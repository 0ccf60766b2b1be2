package kinetics

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// linearStart returns the linear least-squares fit of the coordinates to
// the runs whose only carbon step is at constant temperature (closed-
// form runs, continuous nucleation), for the minimiser to start from;
// ok is false when those runs cannot determine every coordinate (no such
// runs, ramps only, a density-only fit, too few rows or a rank-deficient
// system), and the caller keeps the given start.
//
// For a closed-form run (see closedForm) the coverage on the fit's scale
// is exactly linear in the parameter vector v:
//
//	ln X = ln(κ/3) + ln I + 2·ln G + 3·ln t
//	     = ln(κ/3) + 3·ln t + 2·ln((pC − pCeq)/p0) − ln(pH/p0)
//	       + (ln I0 + 2·ln G0) − (En + 2·Eg)·u + a·ln(pC/p0) − b·ln(pH/p0)
//
// (u = 1/(k·T), ln I and ln G as in fitparams.go). The nuclei density,
//
//	ln N = ln I − ⅓·ln c + ln Γ(4/3) + ln P(⅓, X),   c = κ·I·G²/3
//	     = ⅔·(ln I − ln G) − ⅓·ln(κ/3) + ln Γ(4/3) + ln P(⅓, X),
//
// is linear too once X in the incomplete-gamma term is the run's measured
// X_m = −ln(1 − θ_m): so a density row is used only beside the run's
// coverage row. Since v = base + Σ_j x_j·d_j (see fitCoord), each row is
//
//	(y_i − α_i)/σ_i = Σ_j x_j·(g_i·d_j)/σ_i,
//
// α_i the model's value at x = 0 (without the P term for coverage, with
// ln P(⅓, X_m) for density), g_i = ∂α/∂v, σ_i the metric's scale. Rows
// whose measured coverage sits on the clip are left out (below it X_m is
// not known; above it the coverage row says only θ ≥ 1 − ε, and the
// density row takes X_m = −ln ε). The normal equations, scaled to unit
// diagonal, are solved when every eigenvalue exceeds nullTolerance of the
// largest (the covariance's own test of identification).
//
// References:
//
//   - M. Avrami, "Kinetics of phase change. II", J. Chem. Phys. 8, 212
//     (1940) (X ∝ I·G²·t³ at constant rates).
//   - Abramowitz & Stegun, Handbook of Mathematical Functions, 6.5.1
//     (incomplete gamma function).
//   - G. A. F. Seber, C. J. Wild, Nonlinear Regression, Wiley (1989),
//     §2.1 and ch. 15 (linearisation for starting values).
//
// (Volume and page numbers from memory.)
func (f *fitter) linearStart() (x []float64, ok bool) {
	var m [nFit][nFit]float64 // upper triangle of M
	var q fitVec
	rows := 0
	add := func(g fitVec, y, sigma float64) {
		w := 1 / (sigma * sigma)
		for a := range nFit {
			if g[a] == 0 {
				continue
			}
			q[a] += g[a] * y * w
			for b := a; b < nFit; b++ {
				m[a][b] += g[a] * g[b] * w
			}
		}
		rows++
	}
	eps := f.s.Epsilon
	t := f.closedTable()
	for k, o := range f.obs {
		ci, di := f.idx[k][0], f.idx[k][1]
		if !t.grow[k] || ci < 0 {
			continue
		}
		y, theta := f.rows[ci].y, f.all[o].Coverage
		if theta <= eps {
			continue
		}
		pr := f.all[o].Prepared
		var gI, gG fitVec // ∂ln I/∂v, ∂ln G/∂v
		pr.channelGrad(0, 1, &gI)
		pr.channelGrad(1, 1, &gG)
		lnI, lnG, lk := t.aI[k], t.aG[k], t.lk3[k]
		if theta < 1-eps {
			add(gI.plus(2, gG), y-(lk+lnI+2*lnG+t.lt3[k]), f.sc)
		}
		if di >= 0 {
			lnP := math.Log(gammaIncThird(math.Exp(y)))
			alpha := 2.0/3*(lnI-lnG) - lk/3 + math.Log(gamma43) + lnP
			add(gI.scaled(2.0/3).plus(-2.0/3, gG), f.rows[di].y-alpha, f.sd)
		}
	}
	if rows <= len(f.coords) {
		return nil, false
	}
	M := mat.NewSymDense(nFit, nil)
	for a := range nFit {
		for b := a; b < nFit; b++ {
			M.SetSym(a, b, m[a][b])
		}
	}
	return f.solveLinear(M, q)
}

// solveLinear solves the normal equations (DᵀMD)·x = Dᵀq of linearStart,
// D the coordinates' directions, scaled to unit diagonal; ok is false
// when the system does not determine every coordinate.
func (f *fitter) solveLinear(M *mat.SymDense, q fitVec) (x []float64, ok bool) {
	p := len(f.coords)
	D := mat.NewDense(nFit, p, nil)
	for j, c := range f.coords {
		for i := range nFit {
			D.Set(i, j, c.dir[i])
		}
	}
	var A mat.Dense
	A.Product(D.T(), M, D)
	var rhs mat.VecDense
	rhs.MulVec(D.T(), mat.NewVecDense(nFit, q[:]))
	scale := make([]float64, p)
	S := mat.NewSymDense(p, nil)
	for j := range p {
		scale[j] = math.Sqrt(A.At(j, j))
		if !(scale[j] > 0) {
			return nil, false
		}
	}
	for i := range p {
		for j := i; j < p; j++ {
			S.SetSym(i, j, A.At(i, j)/(scale[i]*scale[j]))
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(S, true) {
		return nil, false
	}
	vals := eig.Values(nil)
	if !(vals[0] > nullTolerance*vals[p-1]) {
		return nil, false
	}
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	x = make([]float64, p)
	for k, l := range vals {
		c := 0.0
		for i := range p {
			c += vecs.At(i, k) * rhs.AtVec(i) / scale[i]
		}
		for i := range p {
			x[i] += vecs.At(i, k) * c / l
		}
	}
	for i := range p {
		x[i] /= scale[i]
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) {
			return nil, false
		}
		x[i] = math.Min(math.Max(x[i], f.clo[i]), f.chi[i])
	}
	return x, true
}

// startPoint returns where the minimisation starts: the linear start
// when it is available and its cost is below that of the given start
// x0, else x0.
func (f *fitter) startPoint() []float64 {
	x0 := append([]float64(nil), f.x0...)
	xl, ok := f.linearStart()
	if !ok {
		return x0
	}
	r := make([]float64, len(f.rows))
	f.residuals(r, x0)
	c0 := dot(r, r)
	f.residuals(r, xl)
	if c := dot(r, r); c < c0 {
		return xl
	}
	return x0
}
