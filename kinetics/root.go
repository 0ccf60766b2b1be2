package kinetics

import (
	"math"
	"sort"
)

// crossing returns the earliest t in [tlo, thi] at which the target's
// (increasing) quantity reaches its value for v; +Inf if it does not by thi.
func (s *searcher) crossing(pr *Prepared, v *fitVec, tg Target) float64 {
	g := func(lt float64) float64 {
		t := math.Exp(lt)
		var y float64
		if tg.Quantity == MetricCoverage {
			X, _ := pr.final(v, nil, s.grow, t)
			y = math.Log(X) - math.Log(-math.Log1p(-tg.Value))
		} else {
			y = math.Log(s.quantity(pr, v, tg, t)) - math.Log(tg.Value)
		}
		if math.IsNaN(y) || y < -700 {
			return -700
		}
		return math.Min(y, 700)
	}
	a, b := math.Log(s.tlo), math.Log(s.thi)
	fa, fb := g(a), g(b)
	if fa >= 0 {
		return s.tlo
	}
	if fb < 0 {
		return math.Inf(1)
	}
	return math.Exp(illinois(g, a, b, fa, fb))
}

// illinois returns the upper end of a bracket [a, b] of a root of an
// increasing g, g(a) = fa < 0 ≤ fb = g(b), shrunk by the Illinois variant
// of regula falsi to a width of 1e-9 or 100 steps: the secant point
//
//	c = (a·fb − b·fa)/(fb − fa)
//
// replaces the end of its sign, and when the same end is kept twice in a
// row its function value is halved, which makes convergence superlinear
// (order about 1.44). A secant point outside (a, b) is replaced by the
// midpoint. The upper end is returned so that g ≥ 0 there.
//
// References: M. Dowell, P. Jarratt, "A modified regula falsi method for
// computing the root of an equation", BIT 11, 168 (1971) (from memory).
func illinois(g func(float64) float64, a, b, fa, fb float64) float64 {
	side := 0
	for i := 0; i < 100 && b-a > 1e-9; i++ {
		c := (a*fb - b*fa) / (fb - fa)
		if !(c > a && c < b) {
			c = (a + b) / 2
		}
		fc := g(c)
		if fc >= 0 {
			b, fb = c, fc
			if side == 1 {
				fa /= 2
			}
			side = 1
		} else {
			a, fa = c, fc
			if side == -1 {
				fb /= 2
			}
			side = -1
		}
	}
	return b
}

// solveTime returns the earliest grow time at which every ">=" target
// holds (at the interval's bound with Confidence); the shortest time
// allowed when there is none.
func (s *searcher) solveTime(pr *Prepared) float64 {
	t := s.tlo
	ts := make([]float64, len(s.samples))
	for _, tg := range s.spec.Targets {
		if !tg.AtLeast {
			continue
		}
		var tt float64
		if s.samples == nil {
			tt = s.crossing(pr, &s.v, tg)
		} else {
			for k := range s.samples {
				ts[k] = s.crossing(pr, &s.samples[k], tg)
			}
			sort.Float64s(ts)
			tt = quantileInf(ts, s.q)
		}
		t = math.Max(t, tt)
	}
	return t
}

// quantileInf is Quantile that tolerates +Inf entries.
func quantileInf(sorted []float64, q float64) float64 {
	h := q * float64(len(sorted)-1)
	hi := int(math.Ceil(h))
	if math.IsInf(sorted[min(hi, len(sorted)-1)], 1) {
		return math.Inf(1)
	}
	return Quantile(sorted, q)
}
