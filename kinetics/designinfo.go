package kinetics

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// designInfo holds the Fisher information of the existing runs and each
// candidate's information, in the fit's coordinates at the calibration.
type designInfo struct {
	p            int
	names, units []string
	tref         float64
	sc, sd       float64
	f0           *mat.SymDense   // existing runs
	cov, den     [][]float64     // per candidate: the coverage and density rows (nil: none)
	cand         []*mat.SymDense // per candidate: its information as designed
	ridge        []float64
	density      bool
	buf          []float64 // chol's work space
	// at are the coverage and density rows of the target's setting (nil:
	// none); g is the one the target criterion watches, nil for D.
	at [2][]float64
	g  []float64
}

// newDesignInfo evaluates the Jacobian rows of every existing run and
// every candidate with the fit's own machinery (fitter.jacobian at the
// start point), in coverage-only coordinates when coverageOnly; and, when
// at is not nil, the rows of the target's setting (designTarget).
func newDesignInfo(spec DesignSpec, pool []designPoint, coverageOnly bool, at *Prepared) (*designInfo, error) {
	all := append([]Observation(nil), spec.Existing...)
	for _, c := range pool {
		// The values are placeholders in range: only the Jacobian is used.
		all = append(all, Observation{Label: "candidate", Prepared: c.pr, Coverage: 0.5, NucleiDensity: 1e12})
	}
	if at != nil {
		all = append(all, Observation{Label: "target", Prepared: at, Coverage: 0.5, NucleiDensity: 1e12})
	}
	f, err := newFitter(spec.Params, FitSettings{Fixed: spec.Fixed, Coverage: true, Density: !coverageOnly})
	if err != nil {
		return nil, err
	}
	if err := f.addRows(all); err != nil {
		return nil, err
	}
	f.coordinates(coverageOnly)
	f.sc, f.sd = spec.CoverageScale, spec.DensityScale
	p := len(f.coords)
	J := mat.NewDense(len(f.rows), p, nil)
	f.jacobian(J, f.x0)
	d := &designInfo{p: p, tref: f.tref, sc: f.sc, sd: f.sd, f0: mat.NewSymDense(p, nil), density: spec.Density,
		cov: make([][]float64, len(pool)), den: make([][]float64, len(pool)), ridge: make([]float64, p)}
	for _, c := range f.coords {
		d.names, d.units = append(d.names, c.Name), append(d.units, c.Unit)
	}
	ne := len(spec.Existing)
	for k, o := range f.obs {
		for m, r := range f.idx[k] {
			if r < 0 {
				continue
			}
			row := mat.Row(nil, r, J)
			switch {
			case o == ne+len(pool):
				d.at[m] = row
			case o < ne:
				addOuter(d.f0, row)
			case m == 0:
				d.cov[o-ne] = row
			default:
				d.den[o-ne] = row
			}
		}
	}
	d.cand = make([]*mat.SymDense, len(pool))
	for c := range pool {
		d.cand[c] = d.candidateInfo(c, spec.Density)
		for j := range p {
			d.ridge[j] = math.Max(d.ridge[j], d.cand[c].At(j, j))
		}
	}
	for j := range p {
		d.ridge[j] = 1e-9 * math.Max(d.ridge[j]+d.f0.At(j, j), 1e-300)
	}
	return d, nil
}

// candidateInfo is candidate c's information: its coverage row, and its
// density row when density is measured.
func (d *designInfo) candidateInfo(c int, density bool) *mat.SymDense {
	F := mat.NewSymDense(d.p, nil)
	if d.cov[c] != nil {
		addOuter(F, d.cov[c])
	}
	if density && d.den[c] != nil {
		addOuter(F, d.den[c])
	}
	return F
}

// addOuter adds r·rᵀ to F.
func addOuter(F *mat.SymDense, r []float64) {
	for i := range r {
		for j := i; j < len(r); j++ {
			F.SetSym(i, j, F.At(i, j)+r[i]*r[j])
		}
	}
}

// total is the information of the existing runs and the picked
// candidates; extra[k], when extra is not nil, adds the density row of
// pick k as well.
func (d *designInfo) total(pick []int, extra []bool) *mat.SymDense {
	F := mat.NewSymDense(d.p, nil)
	F.CopySym(d.f0)
	for k, c := range pick {
		F.AddSym(F, d.cand[c])
		if extra != nil && extra[k] && !d.density && d.den[c] != nil {
			addOuter(F, d.den[c])
		}
	}
	return F
}

// logDet returns ln det(F + diag(ridge)).
func (d *designInfo) logDet(F *mat.SymDense) float64 { return d.logDetSum(F, nil) }

// logDetSum returns ln det(A + B + diag(ridge)) (B nil: none), −∞ when
// the sum is not positive definite: 2·Σ ln Uⱼⱼ of chol's factor.
func (d *designInfo) logDetSum(A, B *mat.SymDense) float64 {
	U, ok := d.chol(A, B)
	if !ok {
		return math.Inf(-1)
	}
	ld := 0.0
	for j := range d.p {
		ld += 2 * math.Log(U[j*d.p+j])
	}
	return ld
}

// crit is the criterion the exchange maximises at A + B: ln det for D,
// −gᵀ(A + B + diag(ridge))⁻¹g for the target (designTarget).
func (d *designInfo) crit(A, B *mat.SymDense) float64 {
	if d.g == nil {
		return d.logDetSum(A, B)
	}
	U, ok := d.chol(A, B)
	if !ok {
		return math.Inf(-1)
	}
	return -quadForm(U, d.p, d.g)
}

// chol factorises A + B + diag(ridge) = UᵀU in place on a buffer (U upper,
// row-major p×p) and reports whether the sum is positive definite. The
// exchange search calls it for every candidate and run, so it neither
// allocates nor estimates the condition number as mat.Cholesky does.
//
// References:
//
//   - G. H. Golub, C. F. Van Loan, Matrix Computations, 4th ed., Johns
//     Hopkins (2013), §4.2 (Cholesky). (From memory.)
func (d *designInfo) chol(A, B *mat.SymDense) ([]float64, bool) {
	p := d.p
	if len(d.buf) < p*p {
		d.buf = make([]float64, p*p)
	}
	U := d.buf[:p*p]
	a := A.RawSymmetric()
	for i := range p {
		for j := i; j < p; j++ {
			U[i*p+j] = a.Data[i*a.Stride+j]
		}
		U[i*p+i] += d.ridge[i]
	}
	if B != nil {
		b := B.RawSymmetric()
		for i := range p {
			for j := i; j < p; j++ {
				U[i*p+j] += b.Data[i*b.Stride+j]
			}
		}
	}
	for j := range p {
		s := U[j*p+j]
		for k := range j {
			s -= U[k*p+j] * U[k*p+j]
		}
		if !(s > 0) {
			return nil, false
		}
		u := math.Sqrt(s)
		U[j*p+j] = u
		for i := j + 1; i < p; i++ {
			s := U[j*p+i]
			for k := range j {
				s -= U[k*p+j] * U[k*p+i]
			}
			U[j*p+i] = s / u
		}
	}
	return U, true
}

// quadForm returns gᵀ(UᵀU)⁻¹g = |z|², Uᵀz = g solved forward.
func quadForm(U []float64, p int, g []float64) float64 {
	var zbuf [16]float64
	z := zbuf[:0]
	if p > len(zbuf) {
		z = make([]float64, 0, p)
	}
	q := 0.0
	for i := range p {
		s := g[i]
		for k := range i {
			s -= U[k*p+i] * z[k]
		}
		z = append(z, s/U[i*p+i])
		q += z[i] * z[i]
	}
	return q
}

// exchange runs the restarts of the exchange search and returns the best
// design (candidate indexes, sorted for a stable output).
func (d *designInfo) exchange(k, restarts int, rnd *rand.Rand) []int {
	var best []int
	bestVal := math.Inf(-1)
	for r := range restarts {
		pick := make([]int, k)
		if r == 0 {
			d.greedy(pick)
		} else {
			for i := range pick {
				pick[i] = rnd.IntN(len(d.cand))
			}
		}
		val := d.improve(pick)
		if val > bestVal+1e-12 {
			best, bestVal = append([]int(nil), pick...), val
		}
	}
	sortInts(best)
	return best
}

// greedy fills pick one run at a time, each the candidate that raises
// the criterion (crit) most given those before it.
func (d *designInfo) greedy(pick []int) {
	F := mat.NewSymDense(d.p, nil)
	F.CopySym(d.f0)
	for i := range pick {
		bc, bv := 0, math.Inf(-1)
		for c := range d.cand {
			if v := d.crit(F, d.cand[c]); v > bv {
				bc, bv = c, v
			}
		}
		pick[i] = bc
		F.AddSym(F, d.cand[bc])
	}
}

// improve exchanges runs of pick while one exchange raises the criterion
// (at most 50 passes) and returns its final value.
func (d *designInfo) improve(pick []int) float64 {
	F := d.total(pick, nil)
	cur := d.crit(F, nil)
	for pass := 0; pass < 50; pass++ {
		moved := false
		for i := range pick {
			without := subSym(F, d.cand[pick[i]])
			bc, bv := pick[i], cur
			for c := range d.cand {
				if v := d.crit(without, d.cand[c]); v > bv+1e-10 {
					bc, bv = c, v
				}
			}
			if bc != pick[i] {
				pick[i], cur, moved = bc, bv, true
				F.AddSym(without, d.cand[bc])
			}
		}
		if !moved {
			break
		}
	}
	return cur
}

// subSym returns A − B.
func subSym(A, B *mat.SymDense) *mat.SymDense {
	n := A.SymmetricDim()
	C := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			C.SetSym(i, j, A.At(i, j)-B.At(i, j))
		}
	}
	return C
}

func sortInts(a []int) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j] < a[j-1]; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

// pinv returns the pseudo-inverse of F, from the eigen-decomposition of F
// scaled to unit diagonal (as the fit's covariance), and which
// coordinates a null direction (eigenvalue below nullTolerance of the
// largest) touches.
func (d *designInfo) pinv(F *mat.SymDense) (*mat.Dense, []bool) {
	scale := make([]float64, d.p)
	for j := range scale {
		scale[j] = math.Sqrt(F.At(j, j))
		if scale[j] == 0 {
			scale[j] = 1
		}
	}
	S := mat.NewSymDense(d.p, nil)
	for i := range d.p {
		for j := i; j < d.p; j++ {
			S.SetSym(i, j, F.At(i, j)/(scale[i]*scale[j]))
		}
	}
	cov := mat.NewDense(d.p, d.p, nil)
	unid := make([]bool, d.p)
	var eig mat.EigenSym
	if !eig.Factorize(S, true) {
		for i := range unid {
			unid[i] = true
		}
		return cov, unid
	}
	vals := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	lmax := vals[len(vals)-1]
	for k, l := range vals {
		if !(l > nullTolerance*lmax) {
			for i := range d.p {
				if math.Abs(vecs.At(i, k)) > 0.1 {
					unid[i] = true
				}
			}
			continue
		}
		for i := range d.p {
			for j := range d.p {
				cov.Set(i, j, cov.At(i, j)+vecs.At(i, k)*vecs.At(j, k)/(l*scale[i]*scale[j]))
			}
		}
	}
	return cov, unid
}

// se returns the expected standard errors √(F⁻¹)ⱼⱼ, NaN where not
// identified.
func (d *designInfo) se(F *mat.SymDense) []float64 {
	cov, unid := d.pinv(F)
	out := make([]float64, d.p)
	for j := range out {
		out[j] = math.Sqrt(cov.At(j, j))
		if unid[j] || F.At(j, j) == 0 {
			out[j] = math.NaN()
		}
	}
	return out
}

// coverageInterval is the 95 % interval of candidate c's coverage θ from
// the existing runs' information: cloglog θ ± 1.96·σc·√(jᵀF₀⁻¹j), with j
// its coverage row; NaN, NaN when the existing runs do not identify it.
func (d *designInfo) coverageInterval(c int, theta float64) (lo, hi float64) {
	v := d.predVar(d.f0, d.cov[c])
	if math.IsNaN(v) {
		return math.NaN(), math.NaN()
	}
	h := 1.959964 * d.sc * math.Sqrt(v) // z of 97.5 %, A&S table 26.1
	c0 := math.Log(-math.Log1p(-math.Min(math.Max(theta, 1e-300), 1-1e-16)))
	back := func(x float64) float64 { return -math.Expm1(-math.Exp(x)) }
	return back(c0 - h), back(c0 + h)
}

// predVar is jᵀF⁺j, the expected variance of a prediction with the
// (σ-scaled) row j in units of σ², with the pseudo-inverse of F; NaN when
// j is nil, F is empty or j touches a direction F does not identify.
func (d *designInfo) predVar(F *mat.SymDense, row []float64) float64 {
	if row == nil || (d.p > 0 && F.At(0, 0) == 0) {
		return math.NaN()
	}
	cov, unid := d.pinv(F)
	v := 0.0
	for i := range d.p {
		if unid[i] && row[i] != 0 {
			return math.NaN()
		}
		for j := range d.p {
			v += row[i] * cov.At(i, j) * row[j]
		}
	}
	return math.Max(v, 0)
}

// result fills the criterion's coordinates and standard errors.
func (d *designInfo) result(pick []int) *DesignResult {
	after := d.total(pick, nil)
	return &DesignResult{Names: d.names, Units: d.units, SENow: d.se(d.f0), SEAfter: d.se(after),
		LogDetNow: d.logDet(d.f0), LogDetAfter: d.logDet(after), ReferenceTemperature: d.tref,
		CoverageScale: d.sc, DensityScale: d.sd}
}
