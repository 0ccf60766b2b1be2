package kinetics

import "math"

// Coverage levels whose times Predict reports, and the extended coverage
// X = −ln(1 − θ) at each.
var (
	coverageLevels = [3]float64{0.5, 0.9, 0.99}
	extendedLevels = [3]float64{math.Ln2, math.Log(10), math.Log(100)}
)

// xCutoff is the extended coverage beyond which bare copper (exp(−X) <
// 2e-22) no longer adds nuclei worth counting.
const xCutoff = 50.0

// moments is the running state of the one-pass JMAK integration: the radius
// grown since the start R (m), the moments M0 = ∫I dτ (1/m²), M1 = ∫I·R dτ
// (1/m) and M2 = ∫I·R² dτ (1), and the nuclei density N = ∫I·(1−θ) dτ
// (1/m²).
type moments struct {
	R, M0, M1, M2, N float64
}

// extended returns X = κ·[R²·M0 − 2R·M1 + M2].
func (m moments) extended(kappa float64) float64 {
	x := kappa * (m.R*m.R*m.M0 - 2*m.R*m.M1 + m.M2)
	if x < 0 { // rounding when X ≈ 0
		return 0
	}
	return x
}

// slope returns dX/dt = 2κ·G·(R·M0 − M1) at growth rate G.
func (m moments) slope(kappa, G float64) float64 {
	return 2 * kappa * G * (m.R*m.M0 - m.M1)
}

// seed adds n nuclei per m² at once on bare copper (site-saturated mode).
func (m *moments) seed(kappa, n float64) {
	bare := math.Exp(-m.extended(kappa))
	m.M0 += n
	m.M1 += n * m.R
	m.M2 += n * m.R * m.R
	m.N += n * bare
}

// constant returns the moments (without N) after time s at constant rates
// I and G, in closed form:
//
//	R(s)  = R + G·s
//	M0(s) = M0 + I·s
//	M1(s) = M1 + I·(R·s + G·s²/2)
//	M2(s) = M2 + I·(R²·s + R·G·s² + G²·s³/3)
func (m moments) constant(I, G, s float64) moments {
	R := m.R
	return moments{
		R:  R + G*s,
		M0: m.M0 + I*s,
		M1: m.M1 + I*(R*s+G*s*s/2),
		M2: m.M2 + I*(R*R*s+R*G*s*s+G*G*s*s*s/3),
		N:  m.N,
	}
}

// Gauss–Legendre nodes and weights on [−1, 1], 8 points (Abramowitz &
// Stegun, Handbook of Mathematical Functions, table 25.4).
var (
	glNodes   = [8]float64{-0.9602898564975363, -0.7966664774136267, -0.5255324099163290, -0.1834346424956498, 0.1834346424956498, 0.5255324099163290, 0.7966664774136267, 0.9602898564975363}
	glWeights = [8]float64{0.1012285362903763, 0.2223810344533745, 0.3137066458778873, 0.3626837833783620, 0.3626837833783620, 0.3137066458778873, 0.2223810344533745, 0.1012285362903763}
)

// constantStep advances m by time s at constant rates I and G: the moments
// in closed form, N by composite 8-point Gauss–Legendre quadrature of
// I·exp(−X(τ)) over panels panels (up to where X reaches xCutoff).
func constantStep(m moments, kappa, I, G, s float64, panels int) moments {
	out := m.constant(I, G, s)
	if I == 0 || s <= 0 {
		return out
	}
	x := func(t float64) float64 { return m.constant(I, G, t).extended(kappa) }
	dx := func(t float64) float64 { return m.constant(I, G, t).slope(kappa, G) }
	end := s
	if out.extended(kappa) > xCutoff {
		if x(0) >= xCutoff {
			return out
		}
		end = solveIncreasing(x, dx, xCutoff, 0, s)
	}
	h := end / float64(panels)
	sum := 0.0
	for k := 0; k < panels; k++ {
		mid := (float64(k) + 0.5) * h
		for j, z := range glNodes {
			sum += glWeights[j] * math.Exp(-x(mid+z*h/2))
		}
	}
	out.N += I * sum * h / 2
	return out
}

// solveIncreasing returns t in [lo, hi] with f(t) = y for a non-decreasing
// f with f(lo) ≤ y ≤ f(hi) and derivative df: Newton's method kept inside
// the bracket, falling back to bisection, to about 1e-14 relative.
func solveIncreasing(f, df func(float64) float64, y, lo, hi float64) float64 {
	t := (lo + hi) / 2
	for i := 0; i < 100; i++ {
		v := f(t) - y
		if v == 0 {
			return t
		}
		if v < 0 {
			lo = t
		} else {
			hi = t
		}
		next := (lo + hi) / 2
		if d := df(t); d > 0 {
			if n := t - v/d; n > lo && n < hi {
				next = n
			}
		}
		if math.Abs(next-t) <= 1e-14*math.Max(math.Abs(t), 1e-300) || hi-lo <= 1e-15*math.Abs(hi) {
			return next
		}
		t = next
	}
	return t
}

// rampRates gives I and G at time t of a ramp sub-step.
type rampRates func(t float64) (I, G float64)

// derivative is dy/dt of (R, M0, M1, M2, N).
func derivative(m moments, kappa, I, G float64) moments {
	return moments{R: G, M0: I, M1: I * m.R, M2: I * m.R * m.R, N: I * math.Exp(-m.extended(kappa))}
}

func (m moments) plus(d moments, h float64) moments {
	return moments{m.R + h*d.R, m.M0 + h*d.M0, m.M1 + h*d.M1, m.M2 + h*d.M2, m.N + h*d.N}
}

// rk4 advances m over [t, t+h] by one classical fourth-order Runge–Kutta
// step; ia, ga are the rates at t, ib, gb at t+h/2 and ic, gc at t+h.
func rk4(m moments, kappa, h, ia, ga, ib, gb, ic, gc float64) moments {
	k1 := derivative(m, kappa, ia, ga)
	k2 := derivative(m.plus(k1, h/2), kappa, ib, gb)
	k3 := derivative(m.plus(k2, h/2), kappa, ib, gb)
	k4 := derivative(m.plus(k3, h), kappa, ic, gc)
	return moments{
		R:  m.R + h/6*(k1.R+2*k2.R+2*k3.R+k4.R),
		M0: m.M0 + h/6*(k1.M0+2*k2.M0+2*k3.M0+k4.M0),
		M1: m.M1 + h/6*(k1.M1+2*k2.M1+2*k3.M1+k4.M1),
		M2: m.M2 + h/6*(k1.M2+2*k2.M2+2*k3.M2+k4.M2),
		N:  m.N + h/6*(k1.N+2*k2.N+2*k3.N+k4.N),
	}
}

// hermite returns the time in [0, h] at which the cubic Hermite interpolant
// through (0, x0, d0) and (h, x1, d1) reaches y (x0 < y ≤ x1).
func hermite(x0, d0, x1, d1, h, y float64) float64 {
	f := func(t float64) float64 {
		u := t / h
		h00 := (1 + 2*u) * (1 - u) * (1 - u)
		h10 := u * (1 - u) * (1 - u)
		h01 := u * u * (3 - 2*u)
		h11 := u * u * (u - 1)
		return h00*x0 + h10*h*d0 + h01*x1 + h11*h*d1
	}
	// The interpolant may be slightly non-monotone; bisection still finds a
	// crossing because f(0) < y ≤ f(h).
	lo, hi := 0.0, h
	for i := 0; i < 100 && hi-lo > 1e-12*h; i++ {
		mid := (lo + hi) / 2
		if f(mid) < y {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// DomainSize returns the area-equivalent domain diameter sqrt(4θ/(π·N)) in m
// for coverage θ and nuclei density N (1/m²); 0 when N is 0.
func DomainSize(theta, N float64) float64 {
	if N <= 0 {
		return 0
	}
	return math.Sqrt(4 * theta / (math.Pi * N))
}
