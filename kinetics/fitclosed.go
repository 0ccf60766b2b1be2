package kinetics

import "math"

// closedRuns is the fit's table of its closed-form runs (see closedForm),
// laid out once the coordinates are set. On a constant-temperature step
// ln I and ln G are linear in v, and v is linear in the coordinates x
// (v = base + Σ x_j·dir_j), so for run k
//
//	ln I = aI_k + Σ_j x_j·pI_kj,  pI_kj = ∂ln I/∂v · dir_j
//	ln G = aG_k + Σ_j x_j·pG_kj,  pG_kj = ∂ln G/∂v · dir_j
//
// with aI, aG the rates at base. An evaluation is then two short dot
// products and the transcendental functions of the closed form, and a
// Jacobian row is pI and pG weighted by the closed form's derivatives:
// ∂(cloglog θ)/∂x_j = pI_kj + 2·pG_kj inside the clip (0 outside) and
// ∂ln N/∂x_j = dI·pI_kj + dG·pG_kj.
type closedRuns struct {
	n    int       // coordinates
	use  []bool    // by position k in fitter.obs: a closed-form run
	grow []bool    // and it grows (not etching, t > 0)
	aI   []float64 // ln I at base
	aG   []float64 // ln G at base
	lk3  []float64 // ln(κ/3)
	lt3  []float64 // 3·ln t
	pI   []float64 // k·n + j
	pG   []float64 // k·n + j
}

// closedTable returns the table of the fit's closed-form runs for the
// current coordinates, laying it out on first use (coordinates resets it).
func (f *fitter) closedTable() *closedRuns {
	if f.ctab != nil {
		return f.ctab
	}
	n, m := len(f.coords), len(f.obs)
	t := &closedRuns{n: n, use: make([]bool, m), grow: make([]bool, m),
		aI: make([]float64, m), aG: make([]float64, m), lk3: make([]float64, m), lt3: make([]float64, m),
		pI: make([]float64, m*n), pG: make([]float64, m*n)}
	for k, o := range f.obs {
		pr := f.all[o].Prepared
		if !pr.closed() {
			continue
		}
		t.use[k] = true
		ps := &pr.segs[0]
		if ps.iso.etch || !(ps.duration > 0) {
			continue
		}
		t.grow[k] = true
		c := &ps.iso
		t.aI[k], t.aG[k] = c.lnI(&f.base), c.lnG(&f.base)
		t.lk3[k], t.lt3[k] = math.Log(pr.Shape.Kappa()/3), 3*math.Log(ps.duration)
		for j, cd := range f.coords {
			d := &cd.dir
			t.pI[k*n+j] = d[fitLnI0] - d[fitEn]*c.u + d[fitA]*c.lpc - d[fitB]*c.lph
			t.pG[k*n+j] = d[fitLnG0] - d[fitEg]*c.u
		}
	}
	f.ctab = t
	return t
}

// model returns run k's values at coordinates x (a closed-form run: see
// use). With density false N, dI and dG are left 0.
func (t *closedRuns) model(k int, x []float64, density bool, xlo, xhi float64) runValues {
	var rv runValues
	if !t.grow[k] {
		rv.c = math.Log(xlo) // X = 0, clipped
		return rv
	}
	n := t.n
	pI, pG := t.pI[k*n:k*n+n], t.pG[k*n:k*n+n]
	lnI, lnG := t.aI[k], t.aG[k]
	for j, xj := range x[:n] {
		lnI += xj * pI[j]
		lnG += xj * pG[j]
	}
	lnc := t.lk3[k] + lnI + 2*lnG
	lnX := lnc + t.lt3[k]
	if density {
		rv.X, rv.N, rv.dI, rv.dG = closedAt(lnI, lnc, lnX)
	} else {
		rv.X = math.Exp(lnX)
	}
	if rv.X > xlo && rv.X < xhi {
		rv.c = lnX
	} else {
		rv.c = math.Log(math.Min(math.Max(rv.X, xlo), xhi))
	}
	rv.lnN = math.Log(math.Max(rv.N, 1))
	return rv
}

// rows writes run k's Jacobian rows (∂r/∂x of its coverage and density
// residuals; nil for a row it does not have) from its values rv.
func (t *closedRuns) rows(k int, rv runValues, xlo, xhi, sc, sd float64, jc, jn []float64) {
	n := t.n
	if !t.grow[k] {
		clear(jc)
		clear(jn)
		return
	}
	pI, pG := t.pI[k*n:k*n+n], t.pG[k*n:k*n+n]
	if jc != nil {
		jc = jc[:n]
		if rv.X <= xlo || rv.X >= xhi {
			clear(jc)
		} else {
			for j := range jc {
				jc[j] = -(pI[j] + 2*pG[j]) / sc
			}
		}
	}
	if jn != nil {
		jn = jn[:n]
		dI, dG := rv.dI, rv.dG
		if rv.N <= 1 {
			dI, dG = 0, 0
		}
		for j := range jn {
			jn[j] = -(dI*pI[j] + dG*pG[j]) / sd
		}
	}
}
