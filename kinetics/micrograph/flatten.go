package micrograph

import (
	"image"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Flattening removes uneven illumination. Illumination multiplies the
// reflectance, so the fit is done on log gray levels, where it adds:
//
//	ln(1 + I(x, y)) ≈ Q(u, v) + c·m(x, y)
//
// Q is a polynomial of total degree D in the normalised coordinates
// u, v ∈ [−1, 1], m is 1 on pixels of the upper Otsu class and 0 on the
// lower, and c is the log contrast between the two classes. Fitting the
// class step together with the surface keeps the domains from pulling the
// background estimate towards themselves. The fit alternates: least squares
// for Q and c on a grid of about 192×192 sampled pixels, then Otsu's
// threshold on the residuals ln(1+I) − Q for a new m (four rounds; the
// first without c). Every pixel is then divided by the illumination:
//
//	I'(x, y) = I(x, y) · exp(Q̄ − Q(u, v))
//
// with Q̄ the mean of Q over the image, so levels keep their scale where
// the illumination is at its mean. A low-order surface was chosen over a
// large box blur because a blur follows dense clusters of domains and
// fades their contrast, while a degree-2 surface cannot.

const (
	fitGrid    = 192 // sampled pixels per image side, about
	fitRounds  = 4
	knotStride = 32 // pixels between exact evaluations of the surface along a row
)

type background struct {
	deg    int
	w, h   int
	coef   []float64
	mean   float64
	scaleU float64
	scaleV float64

	nkx, nky int       // knots along x and y
	gain     []float32 // exp(Q̄ − Q) at the knots, row-major
}

func numTerms(deg int) int { return (deg + 1) * (deg + 2) / 2 }

// basis writes the monomials u^i·v^j, i+j ≤ deg, into out.
func basis(deg int, u, v float64, out []float64) {
	var up, vp [9]float64
	up[0], vp[0] = 1, 1
	for i := 1; i <= deg; i++ {
		up[i], vp[i] = up[i-1]*u, vp[i-1]*v
	}
	k := 0
	for t := 0; t <= deg; t++ {
		for i := t; i >= 0; i-- {
			out[k] = up[i] * vp[t-i]
			k++
		}
	}
}

func (bg *background) uv(x, y float64) (float64, float64) {
	return x*bg.scaleU - 1, y*bg.scaleV - 1
}

func (bg *background) eval(x, y float64, tmp []float64) float64 {
	u, v := bg.uv(x, y)
	basis(bg.deg, u, v, tmp)
	s := 0.0
	for i, c := range bg.coef {
		s += c * tmp[i]
	}
	return s
}

// fitBackground fits the surface of total degree deg (1..MaxDegree) to
// the luma of img, sampled on a grid. It returns nil when the normal
// equations are singular.
func fitBackground(img image.Image, deg int) *background {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	bg := &background{deg: deg, w: w, h: h}
	if w > 1 {
		bg.scaleU = 2 / float64(w-1)
	}
	if h > 1 {
		bg.scaleV = 2 / float64(h-1)
	}
	xs, ys, zs := sampleLogLuma(img)
	rows := bg.design(xs, ys)
	coef, resid := alternateFit(rows, zs)
	if coef == nil {
		return nil
	}
	bg.coef = coef
	// Mean of Q over the sample grid, which covers the image evenly.
	sum := 0.0
	for i := range zs {
		sum += zs[i] - resid[i]
	}
	bg.mean = sum / float64(len(zs))
	bg.gainGrid()
	return bg
}

// sampleLogLuma samples img on a grid of about fitGrid×fitGrid pixels
// (cell centres) and returns their coordinates in pixels from the image's
// corner and ln(1 + luma), luma in 16-bit levels.
func sampleLogLuma(img image.Image) (xs, ys, zs []float64) {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	stepX := max(1, w/fitGrid)
	stepY := max(1, h/fitGrid)
	n := ((h - stepY/2 + stepY - 1) / stepY) * ((w - stepX/2 + stepX - 1) / stepX)
	xs, ys, zs = make([]float64, 0, n), make([]float64, 0, n), make([]float64, 0, n)
	row := make([]uint16, w)
	for y := stepY / 2; y < h; y += stepY {
		convertRow(img, b.Min.X, b.Min.Y+y, row)
		for x := stepX / 2; x < w; x += stepX {
			xs = append(xs, float64(x))
			ys = append(ys, float64(y))
			zs = append(zs, math.Log1p(float64(row[x])))
		}
	}
	return xs, ys, zs
}

// design returns the least-squares design matrix of the samples: one row
// of monomials u^i·v^j (basis) per sample, in one backing array.
func (bg *background) design(xs, ys []float64) [][]float64 {
	nt := numTerms(bg.deg)
	rows := make([][]float64, len(xs))
	flat := make([]float64, len(xs)*nt)
	for i := range rows {
		rows[i] = flat[i*nt : (i+1)*nt]
		u, v := bg.uv(xs[i], ys[i])
		basis(bg.deg, u, v, rows[i])
	}
	return rows
}

// alternateFit runs the fitRounds rounds of the fit: least squares for the
// surface (and, from the second round on, the class step c when both
// classes hold more samples than the surface has terms), then the classes
// split anew by Otsu's threshold on the residuals. It returns the surface
// coefficients and the last residuals z − Q, or nil coefficients when the
// normal equations are singular.
func alternateFit(rows [][]float64, zs []float64) (coef, resid []float64) {
	n, nt := len(zs), len(rows[0])
	m := make([]bool, n)
	resid = make([]float64, n)
	surf := surfaceSums(rows, zs)
	for round := range fitRounds {
		withStep := round > 0 && bothClassesFit(m, nt)
		c := solveLeastSquares(surf, rows, zs, m, withStep)
		if c == nil {
			return nil, nil
		}
		coef = c[:nt]
		for i := range zs {
			s := 0.0
			for k, ck := range coef {
				s += ck * rows[i][k]
			}
			resid[i] = zs[i] - s
		}
		splitResiduals(resid, m)
	}
	return coef, resid
}

// bothClassesFit reports whether both classes of m hold more than nt
// samples, enough to fit the class step beside a surface of nt terms.
func bothClassesFit(m []bool, nt int) bool {
	ones := 0
	for _, b := range m {
		if b {
			ones++
		}
	}
	return ones > nt && len(m)-ones > nt
}

// gainGrid evaluates the gain exp(Q̄ − Q) on knots every knotStride
// pixels in x and y (the last knot on the last pixel); between knots the
// gain is interpolated bilinearly, which for a surface of degree ≤ 4 over
// the whole image is exact to far below one gray level.
func (bg *background) gainGrid() {
	bg.nkx = (bg.w-1)/knotStride + 2
	bg.nky = (bg.h-1)/knotStride + 2
	bg.gain = make([]float32, bg.nkx*bg.nky)
	tmp := make([]float64, numTerms(bg.deg))
	for j := range bg.nky {
		y := min(j*knotStride, bg.h-1)
		for k := range bg.nkx {
			x := min(k*knotStride, bg.w-1)
			bg.gain[j*bg.nkx+k] = float32(math.Exp(bg.mean - bg.eval(float64(x), float64(y), tmp)))
		}
	}
}

// normalSums are the sums of the normal equations of the surface alone,
// Σ row_j·row_k (j ≤ k, row-major nt×nt) and Σ row_j·z, summed over the
// samples in order. They do not change between the rounds of the fit.
type normalSums struct {
	nt  int
	ata []float64
	atb []float64
}

// surfaceSums sums the normal equations of the surface over the samples.
func surfaceSums(rows [][]float64, z []float64) normalSums {
	nt := len(rows[0])
	s := normalSums{nt: nt, ata: make([]float64, nt*nt), atb: make([]float64, nt)}
	for i, a := range rows {
		a = a[:nt]
		for j, aj := range a {
			s.atb[j] += aj * z[i]
			row := s.ata[j*nt : (j+1)*nt]
			for k := j; k < nt; k++ {
				row[k] += aj * a[k]
			}
		}
	}
	return s
}

// solveLeastSquares solves the normal equations for z ≈ Σ c_k·row_k
// (+ c_step·m when withStep), from the surface's sums surf and, for the
// step, the sums over the samples with m set: Σ row_j, their count and
// Σ z. These are the sums the full design matrix (the surface's columns
// and a 0/1 column) gives, in the same order, so the result does not
// depend on how they are split. It returns nil if the equations are
// singular.
func solveLeastSquares(surf normalSums, rows [][]float64, z []float64, m []bool, withStep bool) []float64 {
	nt := surf.nt
	np := nt
	if withStep {
		np++
	}
	ata := mat.NewSymDense(np, nil)
	atb := mat.NewVecDense(np, nil)
	for j := range nt {
		atb.SetVec(j, surf.atb[j])
		for k := j; k < nt; k++ {
			ata.SetSym(j, k, surf.ata[j*nt+k])
		}
	}
	if withStep {
		step := make([]float64, nt) // Σ row_j over the samples with m set
		var count, sz float64
		for i, r := range rows {
			if !m[i] {
				continue
			}
			for j, v := range r[:nt] {
				step[j] += v
			}
			count++
			sz += z[i]
		}
		for j := range nt {
			ata.SetSym(j, nt, step[j])
		}
		ata.SetSym(nt, nt, count)
		atb.SetVec(nt, sz)
	}
	var ch mat.Cholesky
	if !ch.Factorize(ata) {
		return nil
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, atb); err != nil {
		return nil
	}
	out := make([]float64, np)
	for j := range np {
		out[j] = x.AtVec(j)
	}
	return out
}

// splitResiduals sets m[i] to whether resid[i] lies above Otsu's threshold
// of a 256-bin histogram of the residuals.
func splitResiduals(resid []float64, m []bool) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range resid {
		lo, hi = min(lo, r), max(hi, r)
	}
	if !(hi > lo) {
		clear(m)
		return
	}
	const bins = 256
	var hist [bins]uint64
	scale := (bins - 1) / (hi - lo)
	for _, r := range resid {
		hist[int((r-lo)*scale)]++
	}
	t, ok := Otsu(hist[:])
	for i, r := range resid {
		m[i] = ok && int((r-lo)*scale) > t
	}
}

// applyRow writes into dst row y of the image divided by the fitted
// illumination: src holds the row's levels, in 16-bit units once
// multiplied by unit (257 for 8-bit levels, 1 for 16-bit; src and dst may
// be the same row); knots is scratch of bg.nkx values.
func applyRow[T uint8 | uint16](bg *background, y int, src []T, unit uint16, dst []uint16, knots []float32) {
	j := y / knotStride
	y0 := j * knotStride
	fy := float32(y-y0) / float32(max(min(y0+knotStride, bg.h-1)-y0, 1))
	g0, g1 := bg.gain[j*bg.nkx:(j+1)*bg.nkx], bg.gain[(j+1)*bg.nkx:(j+2)*bg.nkx]
	for k := range knots {
		knots[k] = g0[k] + fy*(g1[k]-g0[k])
	}
	w := len(dst)
	src = src[:w]
	// The gain is interpolated along each segment of knotStride pixels by
	// repeated addition; two segments are run side by side so that their
	// chains of additions overlap (each is the same chain as alone).
	seg := func(k int) (g, dg float32) {
		x0 := k * knotStride
		span := float32(max(min(x0+knotStride, w-1)-x0, 1))
		return knots[k], (knots[k+1] - knots[k]) / span
	}
	k := 0
	for ; (k+2)*knotStride <= w; k += 2 {
		ga, dga := seg(k)
		gb, dgb := seg(k + 1)
		x0 := k * knotStride
		ina, outa := (*[knotStride]T)(src[x0:]), (*[knotStride]uint16)(dst[x0:])
		inb, outb := (*[knotStride]T)(src[x0+knotStride:]), (*[knotStride]uint16)(dst[x0+knotStride:])
		for x := range knotStride {
			fa := float32(uint16(ina[x])*unit)*ga + 0.5
			fb := float32(uint16(inb[x])*unit)*gb + 0.5
			ga += dga
			gb += dgb
			outa[x], outb[x] = gainLevel(fa), gainLevel(fb)
		}
	}
	for ; k*knotStride < w; k++ {
		g, dg := seg(k)
		x0 := k * knotStride
		out := dst[x0:min(x0+knotStride, w)]
		for x, v := range src[x0 : x0+len(out)] {
			out[x] = gainLevel(float32(uint16(v)*unit)*g + 0.5)
			g += dg
		}
	}
}

// gainLevel is a flattened level f + 0.5 (f ≥ 0) rounded down to a 16-bit
// level, saturating at 65535.
func gainLevel(f float32) uint16 {
	if f >= 65535 {
		return 65535
	}
	return uint16(f)
}
