package kinetics

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// result reports the fit at x: estimates with standard errors, the
// correlation and covariance of the free parameters, and the residuals.
func (f *fitter) result(x []float64) *FitResult {
	n, p := len(f.rows), len(x)
	v := f.vec(x)
	res := &FitResult{N: n, P: p, Runs: len(f.obs), CoverageScale: f.sc, DensityScale: f.sd,
		Status: f.status, Iterations: f.iters, Evaluations: f.evals,
		NucleationCorrelation: math.NaN(), GrowthCorrelation: math.NaN()}
	r := make([]float64, n)
	f.residuals(r, x)
	res.RSS = dot(r, r)
	res.ReducedChiSq = res.RSS / float64(n-p)
	cov, singular := f.covariance(res)
	res.Params = v.apply(f.start)
	free := map[int]int{}
	for j, i := range f.free {
		free[i] = j
		res.Free = append(res.Free, FitParameters[i].Key)
	}
	res.Correlation = correlation(cov)
	corr := func(a, b int) float64 {
		ja, oka := free[a]
		jb, okb := free[b]
		if !oka || !okb {
			return math.NaN()
		}
		return res.Correlation[ja][jb]
	}
	res.NucleationCorrelation, res.GrowthCorrelation = corr(fitEn, fitLnI0), corr(fitEg, fitLnG0)
	res.Estimates = f.estimates(v, res.Params, cov, free)
	res.Params.Covariance = nil
	if !singular {
		res.Params.Covariance = f.storedCovariance(res.Params, res.Free, cov)
	}
	res.Params.Runs = len(f.obs)
	res.Params.Source = fmt.Sprintf("fit of %d runs (%d measurements, %d free parameters), %s", len(f.obs), n, p, f.status)
	res.Residuals = f.residualList(res.Params, r)
	if f.status != Converged {
		f.warn("the fit did not converge (%s after %d iterations); the estimates are the best point reached", f.status, f.iters)
	}
	res.Warnings = f.warnings
	return res
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
	var A mat.SymDense
	A.SymOuterK(1, f.jac.T())
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
		if l > 1e-10*lmax {
			for i := range p {
				for j := range p {
					cov.Set(i, j, cov.At(i, j)+vecs.At(i, k)*vecs.At(j, k)/l)
				}
			}
			continue
		}
		singular = true
		var names []string
		for i := range p {
			if math.Abs(vecs.At(i, k)) > 0.1 {
				unidentified[i] = true
				names = append(names, FitParameters[f.free[i]].Short)
			}
		}
		f.warn("the data cannot identify %s separately (JᵀJ is singular, condition %.3g): hold some of them fixed or add runs that vary temperature, pressures and time", strings.Join(names, ", "), res.Condition)
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
// error (delta method for the log-scaled prefactors) and whether it is
// fixed or on a bound.
func (f *fitter) estimates(v fitVec, p Params, cov *mat.Dense, free map[int]int) []Estimate {
	var out []Estimate
	for i := range nFit {
		if f.mode == Continuous && i == fitLnN0 || f.mode == SiteSaturated && i <= fitB {
			continue
		}
		e := Estimate{FitParameter: FitParameters[i], Value: siValue(p, i), Fixed: true, LogValue: math.NaN(), LogSE: math.NaN()}
		if e.Log {
			e.LogValue = v[i]
			e.LogSE = 0
		}
		if j, ok := free[i]; ok {
			e.Fixed = false
			se := math.Sqrt(cov.At(j, j))
			e.SE = se
			if e.Log {
				e.LogSE = se
				e.SE = e.Value * se
			}
			e.AtBound = v[i] <= f.lo[i]+1e-12*math.Abs(f.lo[i]) || v[i] >= f.hi[i]-1e-12*math.Abs(f.hi[i])
			if e.AtBound {
				f.warn("%s ended on its bound (%g): the estimate and its standard error are not reliable", e.Key, e.Value)
			}
		}
		out = append(out, e)
	}
	return out
}

// storedCovariance returns the covariance as the parameter file stores it:
// in SI units of the values (delta method for the log-scaled prefactors,
// Cov(I0, x) = I0·Cov(ln I0, x)); see Params.logCovariance for the way
// back.
func (f *fitter) storedCovariance(p Params, names []string, cov *mat.Dense) *Covariance {
	n := len(names)
	c := &Covariance{Names: names, Matrix: make([][]float64, n)}
	for i := range n {
		c.Matrix[i] = make([]float64, n)
		for j := range n {
			x := cov.At(i, j)
			if FitParameters[f.free[i]].Log {
				x *= siValue(p, f.free[i])
			}
			if FitParameters[f.free[j]].Log {
				x *= siValue(p, f.free[j])
			}
			c.Matrix[i][j] = x
		}
	}
	for i := range n {
		for j := range i {
			c.Matrix[i][j] = c.Matrix[j][i]
		}
	}
	return c
}

// residualList returns each measurement against its prediction with p,
// worst (largest weighted residual) first.
func (f *fitter) residualList(p Params, r []float64) []Residual {
	var out []Residual
	for k, row := range f.rows {
		o := f.all[row.obs]
		theta, N := o.Prepared.Evaluate(p)
		rr := Residual{Label: o.Label, Weighted: r[k]}
		if row.density {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = MetricNucleiDensity, o.NucleiDensity, N, r[k]*f.sd
		} else {
			rr.Metric, rr.Measured, rr.Predicted, rr.Raw = MetricCoverage, o.Coverage, theta, r[k]*f.sc
		}
		out = append(out, rr)
	}
	sort.SliceStable(out, func(i, j int) bool {
		return math.Abs(out[i].Weighted) > math.Abs(out[j].Weighted)
	})
	return out
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
