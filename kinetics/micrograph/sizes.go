package micrograph

import (
	"math"
	"slices"
)

// SizeStats summarises area-equivalent diameters, in metres.
//
//	d = 2·√(A/π)
//
// Quantiles interpolate linearly between order statistics (definition 7 of
// Hyndman and Fan, the default of R and NumPy): for sorted x₀ … x_{n−1},
// h = (n−1)·q and Q(q) = x_⌊h⌋ + (h − ⌊h⌋)·(x_⌊h⌋+1 − x_⌊h⌋).
//
// References:
//
//	R. J. Hyndman, Y. Fan, "Sample quantiles in statistical packages",
//	The American Statistician 50 (4), 361–365, 1996.
type SizeStats struct {
	N      int     // number of domains summarised
	Mean   float64 // m
	StdDev float64 // sample standard deviation (n−1), m; 0 when N < 2
	Min    float64 // m
	P10    float64 // 10th percentile, m
	Median float64 // m
	P90    float64 // 90th percentile, m
	Max    float64 // m
}

// Quantile returns the q-quantile (0 ≤ q ≤ 1) of sorted by linear
// interpolation (Hyndman–Fan definition 7). It panics if sorted is empty or
// q is outside [0, 1].
func Quantile(sorted []float64, q float64) float64 {
	if len(sorted) == 0 || !(q >= 0 && q <= 1) {
		panic("micrograph: Quantile of an empty slice or q outside [0, 1]")
	}
	h := float64(len(sorted)-1) * q
	i := int(math.Floor(h))
	if i >= len(sorted)-1 {
		return sorted[len(sorted)-1]
	}
	return sorted[i] + (h-float64(i))*(sorted[i+1]-sorted[i])
}

// summarise computes SizeStats of d (which it sorts).
func summarise(d []float64) SizeStats {
	s := SizeStats{N: len(d)}
	if len(d) == 0 {
		return s
	}
	slices.Sort(d)
	sum := 0.0
	for _, v := range d {
		sum += v
	}
	s.Mean = sum / float64(len(d))
	if len(d) > 1 {
		ss := 0.0
		for _, v := range d {
			ss += (v - s.Mean) * (v - s.Mean)
		}
		s.StdDev = math.Sqrt(ss / float64(len(d)-1))
	}
	s.Min, s.Max = d[0], d[len(d)-1]
	s.P10, s.Median, s.P90 = Quantile(d, 0.1), Quantile(d, 0.5), Quantile(d, 0.9)
	return s
}
