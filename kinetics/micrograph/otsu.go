package micrograph

import "math"

// Otsu returns Otsu's threshold of a histogram: the bin index t that
// maximises the between-class variance when class 1 holds bins 0…t and
// class 2 holds bins t+1…n−1,
//
//	σ_B²(t) ∝ w₁(t)·w₂(t)·(μ₁(t) − μ₂(t))²,
//
// with w the class counts and μ the class means of the bin indices. The
// first maximum wins a tie. This is the convention of scikit-image's
// threshold_otsu, which returns the bin value t and puts pixels ≤ t in the
// lower class. ok is false when fewer than two bins are non-empty.
//
// References:
//
//	N. Otsu, "A threshold selection method from gray-level histograms",
//	IEEE Trans. Systems, Man, and Cybernetics 9 (1), 62–66, 1979.
func Otsu(hist []uint64) (t int, ok bool) {
	var total, moment float64
	filled := 0
	for i, c := range hist {
		if c > 0 {
			filled++
		}
		total += float64(c)
		moment += float64(c) * float64(i)
	}
	if filled < 2 {
		return 0, false
	}
	best := math.Inf(-1)
	var w1, s1 float64
	for i := 0; i < len(hist)-1; i++ {
		c := float64(hist[i])
		w1 += c
		s1 += c * float64(i)
		w2 := total - w1
		if w1 == 0 || w2 == 0 {
			continue
		}
		d := s1/w1 - (moment-s1)/w2
		if v := w1 * w2 * d * d; v > best {
			best, t = v, i
		}
	}
	return t, true
}

// histogram counts the 16-bit levels of p.
func histogram(p *plane) []uint64 {
	parts := make(chan []uint32, 64)
	parallel(p.h, func(lo, hi int) {
		h := make([]uint32, 65536)
		for _, v := range p.pix[lo*p.w : hi*p.w] {
			h[v]++
		}
		parts <- h
	})
	close(parts)
	out := make([]uint64, 65536)
	for h := range parts {
		for i, c := range h {
			out[i] += uint64(c)
		}
	}
	return out
}

// peaks describes the shape of a histogram around Otsu's threshold t.
type peaks struct {
	peak        int     // most frequent level
	spread      float64 // robust standard deviation: interquartile range / 1.349
	valleyRatio float64 // smoothed count at the valley / lower of the two peaks
	median      float64
}

// quantileLevel returns the lowest level at or below which a fraction q of
// the counts lie.
func quantileLevel(hist []uint64, total uint64, q float64) int {
	want := uint64(math.Ceil(q * float64(total)))
	var cum uint64
	for i, c := range hist {
		cum += c
		if cum >= want && cum > 0 {
			return i
		}
	}
	return len(hist) - 1
}

// shape measures the two-peak structure of hist about threshold t. The
// histogram is regrouped into 128 bins between its 0.1 % and 99.9 %
// quantiles and smoothed with a Gaussian of σ = 2 bins; the valley ratio is
// the lowest smoothed count between the highest bin on each side of t,
// divided by the lower of those two highest bins. A one-peaked histogram
// gives a ratio near 1, two separate peaks a ratio near 0.
func shape(hist []uint64, t int) peaks {
	var total uint64
	peak := 0
	for i, c := range hist {
		total += c
		if c > hist[peak] {
			peak = i
		}
	}
	q1 := quantileLevel(hist, total, 0.25)
	q3 := quantileLevel(hist, total, 0.75)
	pk := peaks{
		peak:   peak,
		spread: float64(q3-q1) / 1.349,
		median: float64(quantileLevel(hist, total, 0.5)),
	}
	lo := quantileLevel(hist, total, 0.001)
	hi := quantileLevel(hist, total, 0.999)
	if t < lo || t >= hi {
		pk.valleyRatio = 1
		return pk
	}
	width := float64(hi-lo+1) / shapeBins
	sm := smoothedCoarse(hist, lo, hi, width)
	pk.valleyRatio = valleyRatio(&sm, min(int(float64(t-lo)/width), shapeBins-1))
	return pk
}

// shapeBins is the number of coarse bins shape regroups a histogram into.
const shapeBins = 128

// smoothedCoarse regroups hist[lo…hi] into shapeBins bins of the given
// width (in levels) and smooths them with a Gaussian of σ = 2 bins cut at
// 3σ, renormalised where the window meets the ends:
//
//	s_i = Σ_j w_ij·c_j / Σ_j w_ij,   w_ij = exp(−(i−j)²/(2σ²)),   |i−j| ≤ 3σ
func smoothedCoarse(hist []uint64, lo, hi int, width float64) [shapeBins]float64 {
	const bins = shapeBins
	var coarse [bins]float64
	for i := lo; i <= hi; i++ {
		coarse[min(int(float64(i-lo)/width), bins-1)] += float64(hist[i])
	}
	var sm [bins]float64
	const sigma = 2.0
	for i := range bins {
		var s, ws float64
		for j := max(0, i-3*int(sigma)); j <= min(bins-1, i+3*int(sigma)); j++ {
			w := math.Exp(-0.5 * float64((i-j)*(i-j)) / (sigma * sigma))
			s += w * coarse[j]
			ws += w
		}
		sm[i] = s / ws
	}
	return sm
}

// valleyRatio returns the lowest of the smoothed counts sm between the
// highest bin at or below tb (the threshold's bin) and the highest bin
// above it, divided by the lower of those two peaks; 1 when there is no
// bin above tb or the lower peak is empty.
func valleyRatio(sm *[shapeBins]float64, tb int) float64 {
	left, right := 0, tb+1
	for i := 0; i <= tb; i++ {
		if sm[i] > sm[left] {
			left = i
		}
	}
	if right >= shapeBins {
		return 1
	}
	for i := tb + 1; i < shapeBins; i++ {
		if sm[i] > sm[right] {
			right = i
		}
	}
	valley := math.Inf(1)
	for i := left; i <= right; i++ {
		valley = min(valley, sm[i])
	}
	lower := min(sm[left], sm[right])
	if lower <= 0 {
		return 1
	}
	return valley / lower
}
