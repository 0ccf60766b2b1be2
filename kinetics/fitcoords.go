package kinetics

import "math"

// The minimiser does not move the parameter vector v itself but a few
// coordinates x, each a linear function of v,
//
//	x_j = w_j·v + c_j,   v = base + Σ_j x_j·d_j,   w_j·d_k = δ_jk,
//
// chosen so that the data can pin each of them down.
//
// Prefactors are referred to the reference temperature T_ref (the median
// growth temperature of the runs, u_ref = 1/(k·T_ref)):
//
//	ln I_ref = ln I0 − En·u_ref,   ln G_ref = ln G0 − Eg·u_ref,
//
// so that ln I = ln I_ref − En·(u − u_ref) + …: over a temperature range
// narrow against T_ref the energy and the referred prefactor are nearly
// uncorrelated, while ln I0 and En are correlated near ±1.
//
// Coverage alone identifies combinations only. In continuous mode the
// extended coverage is
//
//	X(t) = κ ∫₀ᵗ I(τ)·(R(t) − R(τ))² dτ,   R(t) = ∫₀ᵗ G dt'.
//
// With I = I_ref·e^{−En(u−u_ref)}·f_I(p) and G = G_ref·e^{−Eg(u−u_ref)}·f_G(p),
// at constant conditions X = κ·I·G²·t³/3, so
//
//	X ∝ κ·I_ref·G_ref²·exp(−(En + 2·Eg)·(u − u_ref))·…
//
// and θ = 1 − e^{−X} depends on the four parameters only through
// Ec = En + 2·Eg and ln C = ln(κ·I_ref·G_ref²) (ramps with methane add a
// weak dependence on En − Eg that coverage data cannot resolve in
// practice). Site-saturated nucleation gives X = κ·N0·R², which depends
// on 2·Eg and ln(κ·N0·G_ref²). The fit then moves those combinations and
// holds the absorbed parameters (Eg and G0, or N0) at their start values,
// reporting the separate ones as not identifiable.
//
// References:
//
//   - M. Avrami, "Kinetics of phase change. I", J. Chem. Phys. 7, 1103
//     (1939).
//   - G. A. F. Seber, C. J. Wild, Nonlinear Regression, Wiley (1989),
//     ch. 3 (ill-conditioning and reparameterisation).
//
// (Volume and page numbers from memory.)
type fitCoord struct {
	Name  string // "En", "ln I_ref", "En+2Eg", …
	Unit  string // "eV", "" for logarithms and orders
	Log   bool   // the logarithm of a prefactor or of a combination
	param int    // the v index whose bounds apply to this coordinate
	w     fitVec
	c     float64
	dir   fitVec
}

// Combined is an estimate of a combination of parameters the data
// identify where the separate parameters are not (see Fit).
type Combined struct {
	Name string // "En+2Eg", "I·G²·κ at T_ref", "2Eg", "N0·G²·κ at T_ref"
	Unit string // "eV", "1/s3", "1/s2"
	// Value and SE in Unit (SE by the delta method for products).
	Value, SE float64
	// LogValue and LogSE for products: ln Value and its standard error;
	// exp(LogSE) is the ×/÷ factor. NaN for energies.
	LogValue, LogSE float64
	AtBound         bool
}

// referenceTemperature returns the median over the used runs of the
// midpoint of each run's carbon temperatures, K.
func (f *fitter) referenceTemperature() float64 {
	var ts []float64
	for _, k := range f.obs {
		lo, hi := f.all[k].Prepared.CarbonTemperatures()
		ts = append(ts, (lo+hi)/2)
	}
	return selectMedian(ts)
}

// selectMedian returns the median of xs, the mean of the two middle values for
// an even count, reordering xs: a selection of the middle (Hoare's FIND,
// expected O(n)), not a full sort. It panics on an empty slice.
//
// References: C. A. R. Hoare, "Algorithm 65: Find", Comm. ACM 4, 321
// (1961) (from memory).
func selectMedian(xs []float64) float64 {
	n := len(xs)
	hi := nth(xs, n/2)
	if n%2 == 1 {
		return hi
	}
	lo := xs[0] // the lower middle: the largest of those before n/2
	for _, x := range xs[1 : n/2] {
		lo = math.Max(lo, x)
	}
	return (lo + hi) / 2
}

// nth reorders xs so that xs[k] holds the value a sort would put there,
// nothing larger before it and nothing smaller after it, and returns it.
func nth(xs []float64, k int) float64 {
	lo, hi := 0, len(xs)-1
	for lo < hi {
		p := xs[lo+(hi-lo)/2]
		i, j := lo, hi
		for i <= j {
			for xs[i] < p {
				i++
			}
			for xs[j] > p {
				j--
			}
			if i <= j {
				xs[i], xs[j] = xs[j], xs[i]
				i, j = i+1, j-1
			}
		}
		switch { // xs[lo..j] ≤ p ≤ xs[i..hi], and xs[j+1..i-1] = p
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return xs[k]
		}
	}
	return xs[k]
}

func unit(i int) fitVec {
	var v fitVec
	v[i] = 1
	return v
}

func (a fitVec) plus(s float64, b fitVec) fitVec {
	for i := range a {
		a[i] += s * b[i]
	}
	return a
}

func (a fitVec) dot(b fitVec) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// coordinates sets the coordinates the minimiser moves (see fitCoord),
// their start, base and bounds, and which parameters are absorbed into
// a combination. coverageOnly is true when no residual is a density.
func (f *fitter) coordinates(coverageOnly bool) {
	f.tref = f.referenceTemperature()
	u := 1 / (BoltzmannEV * f.tref)
	free := [nFit]bool{}
	for _, i := range f.free {
		free[i] = true
	}
	lnK := math.Log(f.start.Shape.Kappa())
	var cs []fitCoord
	add := func(c fitCoord) { cs = append(cs, c) }
	switch {
	case coverageOnly && f.mode == Continuous && free[fitEn] && free[fitEg] && free[fitLnI0] && free[fitLnG0]:
		f.absorbed[fitEn], f.absorbed[fitEg], f.absorbed[fitLnI0], f.absorbed[fitLnG0] = true, true, true, true
		f.unidentified = f.absorbed
		add(fitCoord{Name: "En+2Eg", Unit: "eV", param: fitEn, w: unit(fitEn).plus(2, unit(fitEg)), dir: unit(fitEn).plus(u, unit(fitLnI0))})
		w := unit(fitLnI0).plus(-u, unit(fitEn)).plus(2, unit(fitLnG0)).plus(-2*u, unit(fitEg))
		add(fitCoord{Name: "ln(I·G²·κ at T_ref)", Log: true, param: fitLnI0, w: w, c: lnK, dir: unit(fitLnI0)})
		f.warn("coverage alone identifies En+2Eg and I·G²·κ at T_ref (θ depends on I·G²), not En, I0, Eg and G0 separately: they are not reported; add nuclei_density measurements to separate them")
	case coverageOnly && f.mode == SiteSaturated && free[fitEg] && free[fitLnG0] && free[fitLnN0]:
		f.absorbed[fitEg], f.absorbed[fitLnG0], f.absorbed[fitLnN0] = true, true, true
		f.unidentified[fitLnG0], f.unidentified[fitLnN0] = true, true
		add(fitCoord{Name: "2Eg", Unit: "eV", param: fitEg, w: unit(fitEg).plus(1, unit(fitEg)), dir: unit(fitEg).scaled(0.5).plus(u, unit(fitLnN0))})
		w := unit(fitLnN0).plus(2, unit(fitLnG0)).plus(-2*u, unit(fitEg))
		add(fitCoord{Name: "ln(N0·G²·κ at T_ref)", Log: true, param: fitLnN0, w: w, c: lnK, dir: unit(fitLnN0)})
		f.warn("coverage alone identifies 2Eg and N0·G²·κ at T_ref (θ depends on N0·R²), not N0 and G0 separately: they are not reported; add nuclei_density measurements to separate them")
	}
	for _, i := range f.free {
		if f.absorbed[i] {
			continue
		}
		fp := FitParameters[i]
		c := fitCoord{Name: fp.Short, Unit: fp.Unit, param: i, w: unit(i), dir: unit(i)}
		switch {
		case i == fitEn && free[fitLnI0] && !f.absorbed[fitLnI0]:
			c.dir = c.dir.plus(u, unit(fitLnI0))
		case i == fitEg && free[fitLnG0] && !f.absorbed[fitLnG0]:
			c.dir = c.dir.plus(u, unit(fitLnG0))
		case i == fitLnI0:
			c.Name, c.Unit, c.Log, c.w = "ln I_ref", "", true, c.w.plus(-u, unit(fitEn))
		case i == fitLnG0:
			c.Name, c.Unit, c.Log, c.w = "ln G_ref", "", true, c.w.plus(-u, unit(fitEg))
		case i == fitLnN0:
			c.Name, c.Unit, c.Log = "ln N0", "", true
		}
		add(c)
	}
	f.coords = cs
	f.slots = [2]valueSlot{} // values at x depend on the coordinates
	f.ctab = nil
	f.x0 = make([]float64, len(cs))
	f.base = f.v0
	for j, c := range cs {
		f.x0[j] = c.w.dot(f.v0) + c.c
		f.base = f.base.plus(-f.x0[j], c.dir)
	}
	f.clo, f.chi = make([]float64, len(cs)), make([]float64, len(cs))
	for j, c := range cs {
		d := c.dir[c.param]
		a := f.x0[j] + (f.lo[c.param]-f.v0[c.param])/d
		b := f.x0[j] + (f.hi[c.param]-f.v0[c.param])/d
		f.clo[j], f.chi[j] = math.Min(a, b), math.Max(a, b)
	}
}

func (a fitVec) scaled(s float64) fitVec {
	for i := range a {
		a[i] *= s
	}
	return a
}
