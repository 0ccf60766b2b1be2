package kinetics

import (
	"fmt"
	"math"

	"github.com/foilrun/foilrun/recipe/gas"
)

// conditions are the parameter-independent parts of the rates at one
// temperature and gas composition.
type conditions struct {
	etch          bool
	u             float64 // 1/(k·T), 1/eV
	lpc, lph, ldp float64 // ln(pC/p0), ln(max(pH, floor)/p0), ln((pC − pCeq)/p0)
}

func newConditions(T, pC, pH, p0 float64) conditions {
	eq := gas.EquilibriumMethanePressure(T, pH)
	c := conditions{u: 1 / (BoltzmannEV * T), lpc: math.Log(pC / p0), lph: math.Log(math.Max(pH, HydrogenFloor) / p0)}
	if pC <= eq {
		c.etch = true
		return c
	}
	c.ldp = math.Log((pC - eq) / p0)
	return c
}

func (c conditions) lnI(v *fitVec) float64 {
	return v[fitLnI0] - v[fitEn]*c.u + v[fitA]*c.lpc - v[fitB]*c.lph
}

func (c conditions) lnG(v *fitVec) float64 {
	return v[fitLnG0] - v[fitEg]*c.u + c.ldp - 0.5*c.lph
}

// rates returns I and G (0, 0 where the conditions etch).
func (c conditions) rates(v *fitVec) (I, G float64) {
	if c.etch {
		return 0, 0
	}
	return math.Exp(c.lnI(v)), math.Exp(c.lnG(v))
}

// prepSeg is one carbon segment of a Prepared profile.
type prepSeg struct {
	seg      int // index in Profile.Segments
	duration float64
	ramp     bool
	iso      conditions   // constant-temperature segment (at T1, as Predict)
	nodes    []conditions // ramp: at 0, h/2, h, 3h/2, … (2n+1 nodes)
	n        int
	h        float64
}

// Prepared is a profile with everything that does not depend on the model's
// rate parameters computed once: the temperature factor 1/kT, the pressure
// logarithms and the graphite-equilibrium CH4 pressure of every carbon
// step, and of every Runge–Kutta node of ramps with methane. Evaluate gives
// the same final coverage and nuclei density as PredictProfile (to rounding)
// at a fraction of the cost, for fits and searches that predict one profile
// many times. The reference pressure p0, shape, mode and numerics are fixed
// at preparation.
type Prepared struct {
	Profile Profile
	P0      float64 // reference pressure the logarithms use, Pa
	Shape   Shape
	Mode    Mode
	Options Options // numerics, defaults filled in

	segs []prepSeg
	nIso int // constant-temperature carbon segments that can grow or nucleate
}

// Prepare lays out a profile for repeated evaluation with parameters that
// share p's reference pressure, shape and mode. It returns the errors
// PredictProfile would for an unusable profile or invalid parameters.
func Prepare(prof Profile, p Params, opts Options) (*Prepared, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	// Reuse PredictProfile's checks of the profile.
	if _, err := PredictProfile(Profile{Segments: prof.Segments}, p, Options{Panels: 1, RampStep: math.Inf(1)}); err != nil {
		return nil, err
	}
	opts = opts.withDefaults()
	pr := &Prepared{Profile: prof, P0: p.P0, Shape: p.Shape, Mode: p.Mode, Options: opts}
	if pr.Mode == "" {
		pr.Mode = Continuous
	}
	for i, s := range prof.Segments {
		if !s.Carbon() {
			continue
		}
		ps := prepSeg{seg: i, duration: s.Duration}
		if s.Isothermal() || s.Duration == 0 {
			ps.iso = newConditions(s.T1, s.PC, s.PH, p.P0)
			if !ps.iso.etch {
				pr.nIso++
			}
		} else {
			ps.ramp = true
			ps.n = int(math.Ceil(s.Duration / opts.RampStep))
			if ps.n < 8 {
				ps.n = 8
			}
			ps.h = s.Duration / float64(ps.n)
			ps.nodes = make([]conditions, 2*ps.n+1)
			ps.nodes[0] = newConditions(s.TemperatureAt(0), s.PC, s.PH, p.P0)
			for k := 0; k < ps.n; k++ {
				t := float64(k) * ps.h
				ps.nodes[2*k+1] = newConditions(s.TemperatureAt(t+ps.h/2), s.PC, s.PH, p.P0)
				ps.nodes[2*k+2] = newConditions(s.TemperatureAt(t+ps.h), s.PC, s.PH, p.P0)
			}
		}
		pr.segs = append(pr.segs, ps)
	}
	return pr, nil
}

// HasCarbon reports whether methane flows in any step of the profile.
func (pr *Prepared) HasCarbon() bool { return len(pr.segs) > 0 }

// CarbonTemperatures returns the lowest and highest temperature (K) at
// which methane flows; NaN, NaN without carbon.
func (pr *Prepared) CarbonTemperatures() (lo, hi float64) {
	lo, hi = math.NaN(), math.NaN()
	for _, ps := range pr.segs {
		s := pr.Profile.Segments[ps.seg]
		a, b := math.Min(s.T0, s.T1), math.Max(s.T0, s.T1)
		if !ps.ramp {
			a, b = s.T1, s.T1
		}
		if math.IsNaN(lo) || a < lo {
			lo = a
		}
		if math.IsNaN(hi) || b > hi {
			hi = b
		}
	}
	return lo, hi
}

// Evaluate returns the final coverage θ and nuclei density N (1/m²) for
// parameters p, as PredictProfile would. It panics if p's reference
// pressure, shape or mode differ from the ones prepared for.
func (pr *Prepared) Evaluate(p Params) (theta, N float64) {
	pr.mustMatch(p)
	v := vecOf(p)
	X, N := pr.final(&v, nil, -1, math.NaN())
	return -math.Expm1(-X), N
}

// closed reports whether the profile's only carbon step is at constant
// temperature in continuous mode, where coverage and nuclei density have
// a closed form (see closedForm).
func (pr *Prepared) closed() bool {
	return pr.Mode == Continuous && len(pr.segs) == 1 && !pr.segs[0].ramp
}

// closedForm returns, for constant I = exp(lnI) and G = exp(lnG) over t
// seconds from bare copper,
//
//	X = c·t³,  c = κ·I·G²/3
//	N = I·∫₀ᵗ exp(−c·τ³) dτ = I·c^(−1/3)·Γ(4/3)·P(1/3, X)
//
// (P the regularised lower incomplete gamma function) and the derivatives
// ∂ln N/∂ln I = 2/3 + D and ∂ln N/∂ln G = −2/3 + 2D with
// D = ∂ln P/∂ln X = X^(1/3)·e^(−X)/(Γ(1/3)·P). It agrees with the
// Gauss–Legendre quadrature of PredictProfile to about 1e-10 relative.
//
// References: Abramowitz & Stegun, Handbook of Mathematical Functions,
// 6.5.1 (incomplete gamma function).
func closedForm(kappa, lnI, lnG, t float64) (X, N, dI, dG float64) {
	if !(t > 0) {
		return 0, 0, 0, 0
	}
	lnc := math.Log(kappa/3) + lnI + 2*lnG
	return closedAt(lnI, lnc, lnc+3*math.Log(t))
}

// closedAt is closedForm from ln I, ln c and ln X = ln c + 3·ln t (the
// fit's table of closed-form runs keeps the logarithms of κ/3 and t).
func closedAt(lnI, lnc, lnX float64) (X, N, dI, dG float64) {
	X = math.Exp(lnX)
	P, front := gammaIncThirdFront(X, lnX)
	N = math.Exp(lnI-lnc/3) * gamma43 * P
	D := 0.0
	if P > 0 {
		D = front / P
	}
	return X, N, 2.0/3 + D, -2.0/3 + 2*D
}

var (
	gamma43  = math.Gamma(4.0 / 3)
	lgamma13 = math.Log(math.Gamma(1.0 / 3))
)

// final returns the final extended coverage X and nuclei density N (see
// run for the arguments).
func (pr *Prepared) final(v *fitVec, iso []float64, seg int, dur float64) (X, N float64) {
	if pr.closed() {
		ps := &pr.segs[0]
		if ps.iso.etch {
			return 0, 0
		}
		d := ps.duration
		if ps.seg == seg {
			d = dur
		}
		lnI, lnG := ps.iso.lnI(v), ps.iso.lnG(v)
		if iso != nil {
			lnI, lnG = iso[0], iso[1]
		}
		X, N, _, _ = closedForm(pr.Shape.Kappa(), lnI, lnG, d)
		return X, N
	}
	m := pr.run(v, iso, seg, dur)
	return m.extended(pr.Shape.Kappa()), m.N
}

func (pr *Prepared) mustMatch(p Params) {
	mode := p.Mode
	if mode == "" {
		mode = Continuous
	}
	if p.P0 != pr.P0 || p.Shape.Kappa() != pr.Shape.Kappa() || mode != pr.Mode {
		panic(fmt.Sprintf("kinetics: Prepared for p0 %g Pa, %s, %s evaluated with p0 %g Pa, %s, %s", pr.P0, pr.Shape, pr.Mode, p.P0, p.Shape, mode))
	}
}

// run integrates the carbon segments. iso, when not nil, overrides ln I and
// ln G of the constant-temperature growing segments (2 per segment, in
// order). When seg ≥ 0 the segment with that Profile index runs for dur
// seconds instead of its own duration.
func (pr *Prepared) run(v *fitVec, iso []float64, seg int, dur float64) moments {
	kappa := pr.Shape.Kappa()
	site := pr.Mode == SiteSaturated
	N0 := math.Exp(v[fitLnN0])
	var m moments
	seeded := false
	k := 0
	for i := range pr.segs {
		ps := &pr.segs[i]
		d := ps.duration
		if ps.seg == seg {
			d = dur
		}
		if !ps.ramp {
			if ps.iso.etch {
				continue
			}
			var I, G float64
			if iso != nil {
				I, G = math.Exp(iso[2*k]), math.Exp(iso[2*k+1])
			} else {
				I, G = ps.iso.rates(v)
			}
			k++
			if site {
				if !seeded && G > 0 {
					m.seed(kappa, N0)
					seeded = true
				}
				I = 0
			}
			m = constantStep(m, kappa, I, G, d, pr.Options.Panels)
			continue
		}
		rate := func(c conditions) (float64, float64) {
			I, G := c.rates(v)
			if site {
				I = 0
			}
			return I, G
		}
		ia, ga := rate(ps.nodes[0])
		for j := 0; j < ps.n; j++ {
			ib, gb := rate(ps.nodes[2*j+1])
			ic, gc := rate(ps.nodes[2*j+2])
			if site && !seeded && (ga > 0 || gb > 0) {
				m.seed(kappa, N0)
				seeded = true
			}
			m = rk4(m, kappa, ps.h, ia, ga, ib, gb, ic, gc)
			ia, ga = ic, gc
		}
	}
	return m
}

// isoChannels returns ln I and ln G of each constant-temperature growing
// segment, and their gradients with respect to v.
func (pr *Prepared) isoChannels(v *fitVec, ch []float64) []float64 {
	ch = ch[:0]
	for _, ps := range pr.segs {
		if !ps.ramp && !ps.iso.etch {
			ch = append(ch, ps.iso.lnI(v), ps.iso.lnG(v))
		}
	}
	return ch
}

// channelGrad adds d·∂(channel c)/∂v to g.
func (pr *Prepared) channelGrad(c int, d float64, g *fitVec) {
	k := 0
	for _, ps := range pr.segs {
		if ps.ramp || ps.iso.etch {
			continue
		}
		if k == c/2 {
			if c%2 == 0 {
				g[fitLnI0] += d
				g[fitEn] -= d * ps.iso.u
				g[fitA] += d * ps.iso.lpc
				g[fitB] -= d * ps.iso.lph
			} else {
				g[fitLnG0] += d
				g[fitEg] -= d * ps.iso.u
			}
			return
		}
		k++
	}
}
