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

// powers writes 1, u, u², …, u^deg into p.
func powers(deg int, u float64, p []float64) {
	p[0] = 1
	for i := 1; i <= deg; i++ {
		p[i] = p[i-1] * u
	}
}

// monomials writes the monomials u^i·v^j, i+j ≤ deg, into out from the
// powers of u and v (powers).
func monomials(deg int, up, vp, out []float64) {
	k := 0
	for t := 0; t <= deg; t++ {
		for i := t; i >= 0; i-- {
			out[k] = up[i] * vp[t-i]
			k++
		}
	}
}

// basis writes the monomials u^i·v^j, i+j ≤ deg, into out.
func basis(deg int, u, v float64, out []float64) {
	var up, vp [MaxDegree + 1]float64
	powers(deg, u, up[:])
	powers(deg, v, vp[:])
	monomials(deg, up[:], vp[:], out)
}

func (bg *background) uv(x, y float64) (float64, float64) {
	return x*bg.scaleU - 1, y*bg.scaleV - 1
}

// dot is the surface's value from the monomials of a point.
func (bg *background) dot(mono []float64) float64 {
	s := 0.0
	for i, c := range bg.coef {
		s += c * mono[i]
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
	coef, resid := alternateFit(bg.gridDesign(xs, ys), zs)
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

// logLuma8[v] is ln(1 + 257·v), the log level of the 8-bit level v in
// 16-bit units: the same float64 as math.Log1p gives for it, looked up
// because 8-bit images are the common case and a grid holds some 37,000
// samples.
var logLuma8 = func() (t [256]float64) {
	for v := range t {
		t[v] = math.Log1p(float64(uint16(v) * 257))
	}
	return t
}()

// logLevel is ln(1 + v) for a 16-bit level v, from logLuma8 when v is an
// 8-bit level scaled by 257.
func logLevel(v uint16) float64 {
	if q := v / 257; q*257 == v {
		return logLuma8[q]
	}
	return math.Log1p(float64(v))
}

// sampleLogLuma samples img on a grid of about fitGrid×fitGrid pixels
// (cell centres). It returns the grid's columns xs and rows ys, in pixels
// from the image's corner, and ln(1 + luma) of the samples row by row,
// luma in 16-bit levels. Only the sampled pixels are read: the two common
// types directly, others one pixel at a time through convertRow, which
// gives a pixel the level it has in a converted row.
func sampleLogLuma(img image.Image) (xs, ys, zs []float64) {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	stepX := max(1, w/fitGrid)
	stepY := max(1, h/fitGrid)
	for x := stepX / 2; x < w; x += stepX {
		xs = append(xs, float64(x))
	}
	for y := stepY / 2; y < h; y += stepY {
		ys = append(ys, float64(y))
	}
	zs = make([]float64, 0, len(xs)*len(ys))
	for y := stepY / 2; y < h; y += stepY {
		switch m := img.(type) {
		case *image.Gray:
			row := m.Pix[m.PixOffset(b.Min.X, b.Min.Y+y):][:w]
			for x := stepX / 2; x < w; x += stepX {
				zs = append(zs, logLuma8[row[x]])
			}
		case *lumaImage:
			row := m.rowFrom(b.Min.X, b.Min.Y+y)[:w]
			for x := stepX / 2; x < w; x += stepX {
				zs = append(zs, logLevel(row[x]))
			}
		default:
			var v [1]uint16
			for x := stepX / 2; x < w; x += stepX {
				convertRow(img, b.Min.X+x, b.Min.Y+y, v[:])
				zs = append(zs, logLevel(v[0]))
			}
		}
	}
	return xs, ys, zs
}

// designMatrix is the least-squares design matrix of the samples, in one
// array: row i, the monomials u^i·v^j of sample i (basis), is
// a[i·nt : (i+1)·nt].
type designMatrix struct {
	nt int
	a  []float64
}

// row returns row i of d.
func (d designMatrix) row(i int) []float64 { return d.a[i*d.nt : (i+1)*d.nt : (i+1)*d.nt] }

// gridDesign returns the design matrix of the samples on the grid of
// columns xs and rows ys, row by row. Its rows are those basis gives for
// each point; the powers of u and v are computed once per column and row.
func (bg *background) gridDesign(xs, ys []float64) designMatrix {
	deg, nt := bg.deg, numTerms(bg.deg)
	d := designMatrix{nt: nt, a: make([]float64, len(xs)*len(ys)*nt)}
	np := deg + 1
	ups := make([]float64, len(xs)*np)
	for c, x := range xs {
		u, _ := bg.uv(x, 0)
		powers(deg, u, ups[c*np:(c+1)*np])
	}
	var vp [MaxDegree + 1]float64
	i := 0
	for _, y := range ys {
		_, v := bg.uv(0, y)
		powers(deg, v, vp[:])
		for c := range xs {
			monomials(deg, ups[c*np:(c+1)*np], vp[:], d.row(i))
			i++
		}
	}
	return d
}

// alternateFit runs the fitRounds rounds of the fit: least squares for the
// surface (and, from the second round on, the class step c when both
// classes hold more samples than the surface has terms), then the classes
// split anew by Otsu's threshold on the residuals. It returns the surface
// coefficients and the last residuals z − Q, or nil coefficients when the
// normal equations are singular.
func alternateFit(d designMatrix, zs []float64) (coef, resid []float64) {
	n, nt := len(zs), d.nt
	m := make([]bool, n)
	resid = make([]float64, n)
	bins := make([]uint8, n)
	surf := surfaceSums(d, zs)
	ones := 0 // samples with m set
	for round := range fitRounds {
		withStep := round > 0 && ones > nt && n-ones > nt
		c := solveLeastSquares(surf, d, zs, m, withStep)
		if c == nil {
			return nil, nil
		}
		coef = c[:nt]
		for i, z := range zs {
			a := d.row(i)[:len(coef)]
			s := 0.0
			for k, ck := range coef {
				s += ck * a[k]
			}
			resid[i] = z - s
		}
		ones = splitResiduals(resid, m, bins)
	}
	return coef, resid
}

// gainGrid evaluates the gain exp(Q̄ − Q) on knots every knotStride
// pixels in x and y (the last knot on the last pixel); between knots the
// gain is interpolated bilinearly, which for a surface of degree ≤ 4 over
// the whole image is exact to far below one gray level.
func (bg *background) gainGrid() {
	bg.nkx = (bg.w-1)/knotStride + 2
	bg.nky = (bg.h-1)/knotStride + 2
	bg.gain = make([]float32, bg.nkx*bg.nky)
	np := bg.deg + 1
	ups := make([]float64, bg.nkx*np) // powers of u at each column of knots
	for k := range bg.nkx {
		u, _ := bg.uv(float64(min(k*knotStride, bg.w-1)), 0)
		powers(bg.deg, u, ups[k*np:(k+1)*np])
	}
	var vp [MaxDegree + 1]float64
	mono := make([]float64, numTerms(bg.deg))
	for j := range bg.nky {
		_, v := bg.uv(0, float64(min(j*knotStride, bg.h-1)))
		powers(bg.deg, v, vp[:])
		for k := range bg.nkx {
			monomials(bg.deg, ups[k*np:(k+1)*np], vp[:], mono)
			bg.gain[j*bg.nkx+k] = float32(math.Exp(bg.mean - bg.dot(mono)))
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
func surfaceSums(d designMatrix, z []float64) normalSums {
	nt := d.nt
	s := normalSums{nt: nt, ata: make([]float64, nt*nt), atb: make([]float64, nt)}
	atb := s.atb[:nt]
	for i, zi := range z {
		a := d.row(i)
		for j, aj := range a {
			atb[j] += aj * zi
			// The row's sums from the diagonal on, as long as a[j:].
			row := s.ata[j*nt+j : (j+1)*nt][:len(a)-j]
			for k, ak := range a[j:] {
				row[k] += aj * ak
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
func solveLeastSquares(surf normalSums, d designMatrix, z []float64, m []bool, withStep bool) []float64 {
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
		m = m[:len(z)]
		for i, zi := range z {
			if !m[i] {
				continue
			}
			for j, v := range d.row(i)[:len(step)] {
				step[j] += v
			}
			count++
			sz += zi
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
// of a 256-bin histogram of the residuals and returns how many do. bin is
// scratch as long as resid: each residual's bin is computed once, for the
// histogram, and kept for the split.
func splitResiduals(resid []float64, m []bool, bin []uint8) (ones int) {
	// Two running extremes each, over the even and the odd residuals, so
	// that consecutive steps do not wait on each other. The builtin min
	// and max are commutative and associative, NaN and ±0 included, so
	// these are the extremes of a single pass.
	lo0, hi0 := math.Inf(1), math.Inf(-1)
	lo1, hi1 := lo0, hi0
	i := 0
	for ; i+1 < len(resid); i += 2 {
		r0, r1 := resid[i], resid[i+1]
		lo0, hi0 = min(lo0, r0), max(hi0, r0)
		lo1, hi1 = min(lo1, r1), max(hi1, r1)
	}
	if i < len(resid) {
		lo0, hi0 = min(lo0, resid[i]), max(hi0, resid[i])
	}
	lo, hi := min(lo0, lo1), max(hi0, hi1)
	if !(hi > lo) {
		clear(m)
		return 0
	}
	const bins = 256
	// Four histograms, summed after, so that neighbouring residuals,
	// often in one bin, do not queue on a single counter.
	var part [4][bins]uint64
	scale := (bins - 1) / (hi - lo)
	bin = bin[:len(resid)]
	for i, r := range resid {
		b := int((r - lo) * scale)
		part[i&3][b]++
		bin[i] = uint8(b)
	}
	var hist [bins]uint64
	for b := range hist {
		hist[b] = part[0][b] + part[1][b] + part[2][b] + part[3][b]
	}
	t, ok := Otsu(hist[:])
	if !ok {
		clear(m)
		return 0
	}
	m = m[:len(bin)]
	for i, b := range bin {
		above := int(b) > t
		m[i] = above
		if above {
			ones++
		}
	}
	return ones
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
