package kinetics

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"

	"github.com/foilrun/foilrun/recipe"
)

// ErrNoCovariance is returned when an interval is asked of parameters
// that carry no covariance (not from a fit, or a fit that could not
// identify every parameter).
var ErrNoCovariance = errors.New("the parameters carry no covariance; intervals need a params file written by foilrun fit")

// IntervalSettings tunes PredictInterval and SampleParams. The zero value
// works.
type IntervalSettings struct {
	// Level is the probability the equal-tailed interval holds, in
	// (0, 1); default 0.9.
	Level float64
	// Samples is the number of parameter sets drawn; default 400.
	Samples int
	// Seed of the PCG generator; the zero value means seed 1, so results
	// repeat run to run.
	Seed uint64
}

func (s IntervalSettings) withDefaults() IntervalSettings {
	if s.Level == 0 {
		s.Level = 0.9
	}
	if s.Samples <= 0 {
		s.Samples = 400
	}
	if s.Seed == 0 {
		s.Seed = 1
	}
	return s
}

// IntervalMethod says in words how PredictInterval works.
const IntervalMethod = "Monte Carlo: parameter sets drawn from the fit's multivariate normal in (energy, ln prefactor) coordinates, fixed seed; equal-tailed interval of the predictions (parameter uncertainty only, not run-to-run scatter)"

// HasCovariance reports whether p carries a usable covariance.
func (p Params) HasCovariance() bool { return p.Covariance != nil && len(p.Covariance.Names) > 0 }

// logCovariance returns the indexes (fit order) of the covariance's
// parameters and the covariance in fit coordinates: the file keeps it in
// SI units of the values (delta method for prefactors, Cov(I0, x) =
// I0·Cov(ln I0, x)), so log-scaled entries are divided back.
func (p Params) logCovariance() ([]int, *mat.SymDense, error) {
	c := p.Covariance
	if c == nil || len(c.Names) == 0 {
		return nil, nil, ErrNoCovariance
	}
	idx := make([]int, len(c.Names))
	for i, name := range c.Names {
		idx[i] = fitIndex(name)
		if idx[i] < 0 {
			return nil, nil, fmt.Errorf("covariance names unknown parameter %q", name)
		}
	}
	n := len(idx)
	S := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			x := c.Matrix[i][j]
			if FitParameters[idx[i]].Log {
				x /= siValue(p, idx[i])
			}
			if FitParameters[idx[j]].Log {
				x /= siValue(p, idx[j])
			}
			S.SetSym(i, j, x)
		}
	}
	return idx, S, nil
}

// SampleParams draws n parameter sets from the multivariate normal
// distribution with p's values as mean and p.Covariance as covariance, in
// fit coordinates (energies and orders as they are, prefactors as natural
// logarithms, so prefactors are log-normal and stay positive):
//
//	v_k = v̂ + L·z_k,  L·Lᵀ = Σ,  z_k ~ N(0, 1)
//
// L from a Cholesky factorisation, or from the eigen-decomposition when Σ
// is only positive semi-definite (negative eigenvalues from rounding are
// set to zero). The draws come from a PCG generator seeded with seed. It
// returns ErrNoCovariance when p has none.
//
// References: J. E. Gentle, Random Number Generation and Monte Carlo
// Methods, 2nd ed., Springer (2003), §5.3.1 (multivariate normal).
func SampleParams(p Params, n int, seed uint64) ([]Params, error) {
	idx, S, err := p.logCovariance()
	if err != nil {
		return nil, err
	}
	L, err := factor(S)
	if err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	mean := vecOf(p)
	d := len(idx)
	z := make([]float64, d)
	out := make([]Params, n)
	for k := range out {
		for i := range z {
			z[i] = rng.NormFloat64()
		}
		v := mean
		for i := range d {
			s := 0.0
			for j := range d {
				s += L.At(i, j) * z[j]
			}
			v[idx[i]] += s
		}
		q := v.apply(p)
		q.Covariance = nil
		out[k] = q
	}
	return out, nil
}

// factor returns L with L·Lᵀ = S.
func factor(S *mat.SymDense) (*mat.Dense, error) {
	d := S.SymmetricDim()
	var ch mat.Cholesky
	if ch.Factorize(S) {
		var L mat.TriDense
		ch.LTo(&L)
		return mat.DenseCopyOf(&L), nil
	}
	var eig mat.EigenSym
	if !eig.Factorize(S, true) {
		return nil, errors.New("covariance: eigen-decomposition failed")
	}
	vals := eig.Values(nil)
	var V mat.Dense
	eig.VectorsTo(&V)
	if vals[0] < -1e-8*math.Abs(vals[d-1]) {
		return nil, fmt.Errorf("covariance is not positive semi-definite (eigenvalue %g)", vals[0])
	}
	L := mat.NewDense(d, d, nil)
	for i := range d {
		for j := range d {
			L.Set(i, j, V.At(i, j)*math.Sqrt(math.Max(vals[j], 0)))
		}
	}
	return L, nil
}

// Interval is an equal-tailed interval of a predicted quantity.
type Interval struct {
	Lo, Hi float64
}

// Uncertainty is the interval of each final predicted quantity.
type Uncertainty struct {
	Level   float64 // e.g. 0.9
	Samples int
	Seed    uint64
	Method  string // IntervalMethod

	Coverage      Interval // θ
	NucleiDensity Interval // 1/m²
	DomainSize    Interval // m
}

// Quantile returns the q-quantile of sorted xs by linear interpolation
// between order statistics (Hyndman & Fan type 7). It panics on an empty
// slice.
//
// References: R. J. Hyndman, Y. Fan, "Sample quantiles in statistical
// packages", Am. Stat. 50, 361 (1996).
func Quantile(sorted []float64, q float64) float64 {
	h := q * float64(len(sorted)-1)
	lo := int(math.Floor(h))
	if lo >= len(sorted)-1 {
		return sorted[len(sorted)-1]
	}
	if lo < 0 {
		return sorted[0]
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo])
}

func interval(xs []float64, level float64) Interval {
	sort.Float64s(xs)
	a := (1 - level) / 2
	return Interval{Quantile(xs, a), Quantile(xs, 1-a)}
}

// PredictInterval returns the equal-tailed interval at s.Level of the
// final coverage, nuclei density and domain size of a profile, by Monte
// Carlo over parameter sets from SampleParams (see IntervalMethod). It
// returns ErrNoCovariance when p has no covariance, and the errors of
// Prepare.
func PredictInterval(prof Profile, p Params, opts Options, s IntervalSettings) (Uncertainty, error) {
	s = s.withDefaults()
	if !(s.Level > 0 && s.Level < 1) {
		return Uncertainty{}, fmt.Errorf("interval level %g is outside (0, 1)", s.Level)
	}
	samples, err := SampleParams(p, s.Samples, s.Seed)
	if err != nil {
		return Uncertainty{}, err
	}
	pr, err := Prepare(prof, p, opts)
	if err != nil {
		return Uncertainty{}, err
	}
	cov, nd, ds := make([]float64, len(samples)), make([]float64, len(samples)), make([]float64, len(samples))
	for k, q := range samples {
		th, N := pr.Evaluate(q)
		cov[k], nd[k], ds[k] = th, N, DomainSize(th, N)
	}
	return Uncertainty{Level: s.Level, Samples: s.Samples, Seed: s.Seed, Method: IntervalMethod,
		Coverage: interval(cov, s.Level), NucleiDensity: interval(nd, s.Level), DomainSize: interval(ds, s.Level)}, nil
}

// WindowIntervals returns the interval of every point of a window map made
// from plan (Window), Intervals[iy][ix], each point's recipe rebuilt as
// Window builds it. Points are computed in parallel. It returns
// ErrNoCovariance when p has none. It panics if plan or m is nil.
func WindowIntervals(plan *recipe.Plan, m *Map, p Params, opts Options, s IntervalSettings) ([][]Uncertainty, error) {
	s = s.withDefaults()
	samples, err := SampleParams(p, s.Samples, s.Seed)
	if err != nil {
		return nil, err
	}
	r := plan.Recipe
	grow := r.FirstStep(recipe.KindGrow)
	if grow < 0 {
		return nil, fmt.Errorf("window: recipe %q has no grow step to vary", r.Name)
	}
	out := make([][]Uncertainty, len(m.Ys))
	for iy := range out {
		out[iy] = make([]Uncertainty, len(m.Xs))
	}
	var wg sync.WaitGroup
	var mu sync.Mutex
	var firstErr error
	jobs := make(chan int)
	for range runtime.NumCPU() {
		wg.Add(1)
		go func() {
			defer wg.Done()
			cov, nd, ds := make([]float64, len(samples)), make([]float64, len(samples)), make([]float64, len(samples))
			for k := range jobs {
				iy, ix := k/len(m.Xs), k%len(m.Xs)
				rr := *r
				rr.Steps = append([]recipe.Step(nil), r.Steps...)
				setParam(&rr.Steps[grow], m.X, m.Xs[ix])
				setParam(&rr.Steps[grow], m.Y, m.Ys[iy])
				pr, err := Prepare(NewProfile(recipe.Derive(&rr, plan.Furnace)), p, opts)
				if err != nil {
					mu.Lock()
					if firstErr == nil {
						firstErr = err
					}
					mu.Unlock()
					continue
				}
				for j, q := range samples {
					th, N := pr.Evaluate(q)
					cov[j], nd[j], ds[j] = th, N, DomainSize(th, N)
				}
				out[iy][ix] = Uncertainty{Level: s.Level, Samples: s.Samples, Seed: s.Seed, Method: IntervalMethod,
					Coverage: interval(cov, s.Level), NucleiDensity: interval(nd, s.Level), DomainSize: interval(ds, s.Level)}
			}
		}()
	}
	for k := range len(m.Xs) * len(m.Ys) {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	if firstErr != nil {
		return nil, firstErr
	}
	return out, nil
}
