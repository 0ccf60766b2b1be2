package kinetics

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/foilrun/foilrun/kinetics/internal/lm"
)

// result reports the fit at x: estimates with standard errors, the
// correlation and covariance of the coordinates, and the residuals.
func (f *fitter) result(x []float64) *FitResult {
	n, p := len(f.rows), len(x)
	v := f.vec(x)
	res := &FitResult{N: n, P: p, Runs: len(f.obs), CoverageScale: f.sc, DensityScale: f.sd,
		Status: f.status, Iterations: f.iters, Evaluations: f.evals, ReferenceTemperature: f.tref,
		NucleationCorrelation: math.NaN(), GrowthCorrelation: math.NaN()}
	r := make([]float64, n)
	f.residuals(r, x)
	res.RSS = dot(r, r)
	res.ReducedChiSq = res.RSS / float64(n-p)
	cov, singular := f.covariance(res)
	res.Params = v.apply(f.start)
	pos := map[string]int{}
	for j, c := range f.coords {
		pos[c.Name] = j
		res.Free = append(res.Free, c.Name)
	}
	res.Correlation = correlation(cov)
	corr := func(a, b string) float64 {
		ja, oka := pos[a]
		jb, okb := pos[b]
		if !oka || !okb {
			return math.NaN()
		}
		return res.Correlation[ja][jb]
	}
	res.NucleationCorrelation, res.GrowthCorrelation = corr("En", "ln I_ref"), corr("Eg", "ln G_ref")
	cv := f.paramCovariance(cov)
	res.Estimates = f.estimates(x, v, res.Params, cv)
	res.Combined = f.combined(x, cov)
	res.Params.Covariance = nil
	if !singular {
		res.Params.Covariance = f.storedCovariance(res.Params, cv)
	}
	res.Params.Runs = len(f.obs)
	res.Params.Bounds = f.usedBounds()
	res.Params.CoverageOnly = f.unidentified != [nFit]bool{}
	res.Params.Source = fmt.Sprintf("fit of %d runs (%d measurements, %d free parameters), %s", len(f.obs), n, p, f.status)
	res.Residuals = f.residualList(x, r)
	if f.status != Converged {
		f.warn("the fit did not converge (%s after %d iterations); the estimates are the best point reached", f.status, f.iters)
	}
	res.Warnings = f.warnings
	return res
}

// paramCovariance returns the covariance of the parameter vector v,
// D·Cov(x)·Dᵀ with D's columns the coordinates' directions.
func (f *fitter) paramCovariance(cov *mat.Dense) *mat.Dense {
	D := mat.NewDense(nFit, len(f.coords), nil)
	for j, c := range f.coords {
		for i := range nFit {
			D.Set(i, j, c.dir[i])
		}
	}
	var cv mat.Dense
	cv.Product(D, cov, D.T())
	return &cv
}

// atBound reports whether coordinate j sits on one of its bounds.
func (f *fitter) atBound(x []float64, j int) bool {
	lo, hi := f.clo[j], f.chi[j]
	return x[j] <= lo+1e-12*math.Abs(lo) || x[j] >= hi-1e-12*math.Abs(hi)
}

// combined lists the combinations fitted in place of parameters the
// data cannot separate (see fitCoord), with standard errors.
func (f *fitter) combined(x []float64, cov *mat.Dense) []Combined {
	var out []Combined
	for j, c := range f.coords {
		if !f.absorbed[c.param] {
			continue
		}
		se := math.Sqrt(cov.At(j, j))
		e := Combined{Name: c.Name, Unit: c.Unit, Value: x[j], SE: se, LogValue: math.NaN(), LogSE: math.NaN(), AtBound: f.atBound(x, j)}
		if c.Log {
			e.Name = strings.TrimSuffix(strings.TrimPrefix(c.Name, "ln("), ")")
			e.Unit = "1/s3"
			if f.mode == SiteSaturated {
				e.Unit = "1/s2"
			}
			e.LogValue, e.LogSE = x[j], se
			e.Value = math.Exp(x[j])
			e.SE = e.Value * se
		}
		if e.AtBound {
			f.warn("%s ended on its bound (%g %s): the estimate and its standard error are not reliable; widen it with --bound", e.Name, e.Value, e.Unit)
		}
		out = append(out, e)
	}
	return out
}

// covariance returns s²·(JᵀJ)⁻¹ in fit coordinates, from the eigen-
// decomposition of JᵀJ scaled to unit diagonal, and sets res.Condition.
// Eigenvalues below 1e-10 of the largest mark combinations the data do not
// identify: a warning names them and their rows and columns are NaN
// (singular is then true).
//
// References: G. A. F. Seber, C. J. Wild, Nonlinear Regression, Wiley
// (1989), ch. 2 (from memory).
func (f *fitter) covariance(res *FitResult) (cov *mat.Dense, singular bool) {
	p := res.P
	S, scale := scaledGram(f.jac)
	var eig mat.EigenSym
	cov = mat.NewDense(p, p, nil)
	unidentified := make([]bool, p)
	if eig.Factorize(S, true) {
		singular = f.invertScaled(&eig, cov, unidentified, res)
	} else {
		singular = true
		for i := range unidentified {
			unidentified[i] = true
		}
		f.warn("the covariance could not be computed (eigen-decomposition failed)")
	}
	for i := range p {
		for j := range p {
			c := res.ReducedChiSq * cov.At(i, j) / (scale[i] * scale[j])
			if unidentified[i] || unidentified[j] {
				c = math.NaN()
			}
			cov.Set(i, j, c)
		}
	}
	return cov, singular
}

// scaledGram returns JᵀJ scaled to unit diagonal, S = D⁻¹·JᵀJ·D⁻¹ with
// D = diag(√(JᵀJ)ᵢᵢ) (1 for an all-zero column), and D's diagonal.
func scaledGram(J *mat.Dense) (*mat.SymDense, []float64) {
	_, p := J.Dims()
	A := mat.NewSymDense(p, nil)
	lm.Normal(A, nil, J, nil)
	scale := make([]float64, p)
	S := mat.NewSymDense(p, nil)
	for j := range p {
		scale[j] = math.Sqrt(A.At(j, j))
		if scale[j] == 0 {
			scale[j] = 1
		}
	}
	for i := range p {
		for j := i; j < p; j++ {
			S.SetSym(i, j, A.At(i, j)/(scale[i]*scale[j]))
		}
	}
	return S, scale
}

// nullTolerance is the eigenvalue of the scaled JᵀJ, relative to the
// largest, below which a direction counts as not identified (singular
// values below 1e-5 of the largest).
const nullTolerance = 1e-10

// checkStart looks for directions the data cannot pin down before the
// fit: the null space of the scaled Jacobian at the start point. Each is
// warned about (once, with the same text the solution's check uses).
func (f *fitter) checkStart() {
	J := mat.NewDense(len(f.rows), len(f.coords), nil)
	f.jacobian(J, f.x0)
	S, _ := scaledGram(J)
	var eig mat.EigenSym
	if !eig.Factorize(S, true) {
		return
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	for k, l := range vals {
		if l <= nullTolerance*vals[len(vals)-1] {
			f.warnNull(&vecs, k, nil)
		}
	}
}

// warnNull warns that the coordinates of null direction k (column k of
// vecs) cannot be told apart, and marks them in unidentified (if not nil).
func (f *fitter) warnNull(vecs *mat.Dense, k int, unidentified []bool) {
	var names []string
	for i := range f.coords {
		if math.Abs(vecs.At(i, k)) > 0.1 {
			if unidentified != nil {
				unidentified[i] = true
			}
			names = append(names, f.coords[i].Name)
		}
	}
	f.warn("the data cannot identify %s separately (JᵀJ is singular): hold some of them fixed or add runs that vary temperature, pressures and time", strings.Join(names, ", "))
}

// invertScaled adds the pseudo-inverse of the scaled JᵀJ to cov from its
// eigen-decomposition, marks the parameters of null directions and warns.
func (f *fitter) invertScaled(eig *mat.EigenSym, cov *mat.Dense, unidentified []bool, res *FitResult) (singular bool) {
	p := len(unidentified)
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	lmax := vals[len(vals)-1]
	res.Condition = lmax / math.Max(vals[0], 1e-300)
	for k, l := range vals {
		if l > nullTolerance*lmax {
			for i := range p {
				for j := range p {
					cov.Set(i, j, cov.At(i, j)+vecs.At(i, k)*vecs.At(j, k)/l)
				}
			}
			continue
		}
		singular = true
		f.warnNull(&vecs, k, unidentified)
	}
	if !singular && res.Condition > 1e8 {
		f.warn("JᵀJ is badly conditioned (condition %.3g): the estimates are strongly correlated and the standard errors large", res.Condition)
	}
	return singular
}

// correlation returns the correlation matrix of a covariance.
func correlation(cov *mat.Dense) [][]float64 {
	p, _ := cov.Dims()
	c := make([][]float64, p)
	for i := range p {
		c[i] = make([]float64, p)
		for j := range p {
			c[i][j] = cov.At(i, j) / math.Sqrt(cov.At(i, i)*cov.At(j, j))
		}
	}
	return c
}

// estimates lists every parameter of the mode with its value, standard
// error (delta method for the log-scaled prefactors), its prefactor
// referred to T_ref, and whether it is fixed, identifiable or on a
// bound.
func (f *fitter) estimates(x []float64, v fitVec, p Params, cv *mat.Dense) []Estimate {
	u := 1 / (BoltzmannEV * f.tref)
	var out []Estimate
	for i := range nFit {
		if f.mode == Continuous && i == fitLnN0 || f.mode == SiteSaturated && i <= fitB {
			continue
		}
		e := Estimate{FitParameter: FitParameters[i], Value: siValue(p, i), Fixed: !slices.Contains(f.free, i), Identifiable: !f.unidentified[i],
			LogValue: math.NaN(), LogSE: math.NaN(), RefValue: math.NaN(), RefLogSE: math.NaN()}
		w := unit(i)
		if i == fitLnI0 || i == fitLnG0 {
			w = w.plus(-u, unit(i-1)) // the energy sits just before its prefactor
			e.RefValue = math.Exp(w.dot(v))
		}
		if e.Log {
			e.LogValue = v[i]
			e.LogSE, e.RefLogSE = 0, 0
		}
		if !e.Fixed && !e.Identifiable {
			e.SE, e.LogSE, e.RefValue = math.NaN(), math.NaN(), math.NaN()
		}
		if !e.Fixed && e.Identifiable {
			se := math.Sqrt(cv.At(i, i))
			e.SE = se
			if e.Log {
				e.LogSE = se
				e.SE = e.Value * se
				e.RefLogSE = math.Sqrt(quad(cv, w))
			}
			for j, c := range f.coords {
				if c.param == i && !f.absorbed[i] && f.atBound(x, j) {
					e.AtBound = true
					f.warn("%s ended on its bound (%g): the estimate and its standard error are not reliable; widen it with --bound", e.Key, e.Value)
				}
			}
		}
		out = append(out, e)
	}
	return out
}

// quad returns wᵀ·C·w.
func quad(C *mat.Dense, w fitVec) float64 {
	s := 0.0
	for i := range nFit {
		for j := range nFit {
			s += w[i] * C.At(i, j) * w[j]
		}
	}
	return s
}

// storedCovariance returns the covariance as the parameter file stores it:
// of the parameters the fit moved, in SI units of the values (delta
// method for the log-scaled prefactors, Cov(I0, x) = I0·Cov(ln I0, x));
// see Params.logCovariance for the way back. After a coverage-only fit
// it spans the combinations only (the absorbed parameters are held), so
// intervals of coverage are right and those of density are not given.
func (f *fitter) storedCovariance(p Params, cv *mat.Dense) *Covariance {
	var idx []int
	for _, i := range f.free {
		for _, c := range f.coords {
			if c.dir[i] != 0 {
				idx = append(idx, i)
				break
			}
		}
	}
	c := &Covariance{Matrix: make([][]float64, len(idx))}
	for a, i := range idx {
		c.Names = append(c.Names, FitParameters[i].Key)
		c.Matrix[a] = make([]float64, len(idx))
		for b, j := range idx {
			x := cv.At(i, j)
			if FitParameters[i].Log {
				x *= siValue(p, i)
			}
			if FitParameters[j].Log {
				x *= siValue(p, j)
			}
			c.Matrix[a][b] = x
		}
	}
	for a := range idx {
		for b := range a {
			c.Matrix[a][b] = c.Matrix[b][a]
		}
	}
	return c
}

// residualList returns each measurement against its prediction at x,
// worst (largest weighted residual) first, ties in row order. The
// predictions are the model values the fit already holds at x (see
// values); the order comes from sorting (|weighted|, row) keys, not the
// residual records.
func (f *fitter) residualList(x, r []float64) []Residual {
	vals := f.values(x, true)
	pos := make([]int, len(f.rows)) // row → used-observation position
	for k, rows := range f.idx {
		for _, i := range rows {
			if i >= 0 {
				pos[i] = k
			}
		}
	}
	// The key orders as |r| does: the IEEE 754 bits of a non-negative
	// float64 order as its value, +1 so that a NaN (key 0) comes last.
	type key struct {
		abs uint64
		row int
	}
	keys := make([]key, len(f.rows))
	for i := range keys {
		keys[i] = key{0, i}
		if a := math.Abs(r[i]); !math.IsNaN(a) {
			keys[i].abs = math.Float64bits(a) + 1
		}
	}
	slices.SortFunc(keys, func(a, b key) int {
		if a.abs != b.abs {
			if a.abs > b.abs {
				return -1
			}
			return 1
		}
		return a.row - b.row
	})
	out := make([]Residual, len(keys))
	for n, kk := range keys {
		k, row := kk.row, f.rows[kk.row]
		o, rv := f.all[row.obs], vals[pos[k]]
		rr := Residual{Label: o.Label, Weighted: r[k]}
		if row.density {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = MetricNucleiDensity, o.NucleiDensity, rv.N, r[k]*f.sd
		} else {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = MetricCoverage, o.Coverage, -math.Expm1(-rv.X), r[k]*f.sc
		}
		out[n] = rr
	}
	return out
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
