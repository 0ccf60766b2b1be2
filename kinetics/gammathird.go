package kinetics

import "math"

// gammaIncThird returns P(1/3, x), the regularised lower incomplete gamma
// function at a = 1/3, which the closed form of a constant-temperature
// step needs (see closedForm) once per run and evaluation of a fit:
//
//	P(a, x) = γ(a, x)/Γ(a),  γ(a, x) = ∫₀ˣ e^(−t)·t^(a−1) dt
//
// For x < a + 1 by the series
//
//	P(a, x) = e^(−x)·x^a/Γ(a) · Σₙ xⁿ/(a·(a+1)·…·(a+n)),
//
// else as 1 − Q(a, x) with Q's continued fraction
//
//	Q(a, x) = e^(−x)·x^a/Γ(a) · 1/(x+1−a− 1·(1−a)/(x+3−a− 2·(2−a)/(x+5−a− …)))
//
// evaluated by the modified Lentz method, both to the last bit of a
// float64. It is gonum's mathext.GammaIncReg(1/3, x) to about 1e-15
// relative with Γ(1/3) computed once, not per call. P(1/3, 0) = 0,
// P(1/3, x) = 1 from x = 37 on (+Inf included); NaN for NaN or x < 0.
//
// References:
//
//   - Abramowitz & Stegun, Handbook of Mathematical Functions, 6.5.29
//     (series) and 6.5.31 (continued fraction).
//   - W. H. Press et al., Numerical Recipes, 3rd ed., Cambridge (2007),
//     §6.2 (gser, gcf: the split at x = a + 1) and §5.2 (modified Lentz).
//
// (Equation and section numbers from memory.)
func gammaIncThird(x float64) float64 {
	P, _ := gammaIncThirdFront(x, math.Log(x))
	return P
}

// gammaIncThirdFront returns P(1/3, x) as gammaIncThird does, given also
// lnx = ln x, and the factor both expansions share, e^(−x)·x^(1/3)/Γ(1/3)
// (0 at x = 0), which closedForm's derivative D needs as well.
func gammaIncThirdFront(x, lnx float64) (P, front float64) {
	const a = 1.0 / 3
	switch {
	case math.IsNaN(x) || x < 0:
		return math.NaN(), math.NaN()
	case x == 0:
		return 0, 0
	}
	front = math.Exp(a*lnx - x - lgamma13) // e^(−x)·x^a/Γ(a)
	if x >= 37 {
		// Q(a, x) < x^(a−1)·e^(−x)/Γ(a) for a < 1, below 2^−55 here.
		return 1, front
	}
	if x < a+1 {
		term := 1 / a
		sum := term
		for n := 1; n < len(thirdPlusInv); n++ {
			term *= x * thirdPlusInv[n]
			sum += term
			if term < sum*0x1p-54 {
				break
			}
		}
		return sum * front, front
	}
	const tiny = 1e-300
	b := x + 1 - a
	c, d := 1/tiny, 1/b
	h := d
	for i := 1; i < 300; i++ {
		an := -float64(i) * (float64(i) - a)
		b += 2
		d = an*d + b
		if math.Abs(d) < tiny {
			d = tiny
		}
		c = b + an/c
		if math.Abs(c) < tiny {
			c = tiny
		}
		d = 1 / d
		step := d * c
		h *= step
		if math.Abs(step-1) < 0x1p-53 {
			break
		}
	}
	return 1 - front*h, front
}

// thirdPlusInv[n] is 1/(1/3 + n): the series of gammaIncThird multiplies
// by it instead of dividing. Below x = 4/3 the terms fall under 2^−54 of
// the sum within 40.
var thirdPlusInv = func() (t [48]float64) {
	for n := range t {
		t[n] = 1 / (1.0/3 + float64(n))
	}
	return t
}()
