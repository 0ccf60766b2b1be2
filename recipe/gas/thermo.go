package gas

import (
	"fmt"
	"math"
)

// Temperature range (K) in which MethaneGibbsFormation is fitted to its
// sources. Outside it the nearest fit segment is extrapolated.
const (
	ThermoMinT = 298.15
	ThermoMaxT = 2500.0
)

// methaneFormationEnthalpy298 is ΔfH°(CH4, 298.15 K) in J/mol, the H constant
// of the NIST WebBook Shomate fit (−74.87310 kJ/mol).
const methaneFormationEnthalpy298 = -74.87310e3

// shomate holds one NIST WebBook Shomate segment, t = T/1000 K:
//
//	H° − H°298.15 = A·t + B·t²/2 + C·t³/3 + D·t⁴/4 − E/t + F − H   (kJ/mol)
//	S°            = A·ln t + B·t + C·t²/2 + D·t³/3 − E/(2t²) + G   (J/(mol·K))
type shomate struct {
	tmax                   float64 // upper end of the segment, K
	a, b, c, d, e, f, g, h float64
}

// NIST Chemistry WebBook Shomate coefficients (CH4 298–1300 K and H2 read;
// CH4 1300–6000 K F and G from memory, continuity at 1300 K
// checked: ΔH 0.013 kJ/mol, ΔS 0.01 J/(mol·K)).
var (
	methaneShomate = []shomate{
		{1300, -0.703029, 108.4773, -42.52157, 5.862788, 0.678565, -76.84376, 158.7163, -74.87310},
		{6000, 85.81217, 11.26467, -2.114146, 0.138190, -26.42221, -153.5327, 224.4143, -74.87310},
	}
	hydrogenShomate = []shomate{
		{1000, 33.066178, -11.363417, 11.432816, -2.772874, -0.158558, -9.980797, 172.707974, 0},
		{2500, 18.563083, 12.257357, -2.859786, 0.268238, 1.977990, -1.147438, 156.288133, 0},
	}
)

// shomateHS returns H°(T) − H°(298.15 K) in J/mol and S°(T) in J/(mol·K).
func shomateHS(segs []shomate, T float64) (dh, s float64) {
	p := segment(segs, T)
	t := T / 1000
	dh = p.a*t + p.b*t*t/2 + p.c*t*t*t/3 + p.d*t*t*t*t/4 - p.e/t + p.f - p.h
	s = p.a*math.Log(t) + p.b*t + p.c*t*t/2 + p.d*t*t*t/3 - p.e/(2*t*t) + p.g
	return dh * 1000, s
}

// upperT returns the upper end of the segment in K.
func (p shomate) upperT() float64 { return p.tmax }

// upperT returns the upper end of the segment in K.
func (p nasa9) upperT() float64 { return p.tmax }

// segment returns the first fit segment whose upper end is at or above T, or
// the last one (extrapolated) above the whole range.
func segment[S interface{ upperT() float64 }](segs []S, T float64) S {
	for _, sg := range segs {
		if T <= sg.upperT() {
			return sg
		}
	}
	return segs[len(segs)-1]
}

// nasa9 holds one NASA Glenn 9-coefficient segment (McBride, Zehe & Gordon,
// NASA/TP-2002-211556):
//
//	Cp/R = a1/T² + a2/T + a3 + a4·T + a5·T² + a6·T³ + a7·T⁴
//	H/RT = −a1/T² + a2·ln T/T + a3 + a4·T/2 + a5·T²/3 + a6·T³/4 + a7·T⁴/5 + b1/T
//	S/R  = −a1/(2T²) − a2/T + a3·ln T + a4·T + a5·T²/2 + a6·T³/3 + a7·T⁴/4 + b2
//
// H is the assigned enthalpy, zero at 298.15 K for a reference element.
type nasa9 struct {
	tmax float64
	a    [7]float64
	b1   float64
	b2   float64
}

// graphiteNASA are the NASA Glenn coefficients of C(gr), reference element,
// 200–600–2000–6000 K (from memory; checked: Cp, H and S continuous at 600 K
// and 2000 K to 1e-8 relative, H(298.15) = 0, S(298.15) = 5.734 J/(mol·K)
// against JANAF's 5.740, H(1000) − H(298.15) = 11.795 kJ/mol as in JANAF).
var graphiteNASA = []nasa9{
	{600, [7]float64{1.132856760e+05, -1.980421677e+03, 1.365384188e+01, -4.636096440e-02, 1.021333011e-04, -1.082893179e-07, 4.472258860e-11}, 8.943859760e+03, -7.295824740e+01},
	{2000, [7]float64{3.356004410e+05, -2.596528368e+03, 6.948841910e+00, -3.484836090e-03, 1.844192445e-06, -5.055205960e-10, 5.750639010e-14}, 1.398412456e+04, -4.477183040e+01},
	{6000, [7]float64{2.023105106e+05, -1.138235908e+03, 3.700279500e+00, -1.833807727e-04, 6.343683250e-08, -7.068589480e-12, 3.335435980e-16}, 5.848134850e+03, -2.350925275e+01},
}

// nasaHS returns H°(T) (J/mol, zero at 298.15 K for graphite) and S°(T) in
// J/(mol·K).
func nasaHS(segs []nasa9, T float64) (h, s float64) {
	p := segment(segs, T)
	a := p.a
	lnT := math.Log(T)
	T2, T3, T4 := T*T, T*T*T, T*T*T*T
	hRT := -a[0]/T2 + a[1]*lnT/T + a[2] + a[3]*T/2 + a[4]*T2/3 + a[5]*T3/4 + a[6]*T4/5 + p.b1/T
	sR := -a[0]/(2*T2) - a[1]/T + a[2]*lnT + a[3]*T + a[4]*T2/2 + a[5]*T3/3 + a[6]*T4/4 + p.b2
	return hRT * R * T, sR * R
}

// MethaneGibbsFormation returns the standard Gibbs energy of formation of
// methane, ΔfG°(CH4) in J/mol at p° = 1 bar, for C(graphite) + 2 H2 → CH4:
//
//	ΔfH°(T) = ΔfH°(298.15) + [H°−H°298](CH4) − [H°−H°298](C,gr) − 2·[H°−H°298](H2)
//	ΔfS°(T) = S°(CH4) − S°(C,gr) − 2·S°(H2)
//	ΔfG°(T) = ΔfH°(T) − T·ΔfS°(T)
//
// CH4 and H2 come from the NIST WebBook Shomate fits, graphite from the NASA
// Glenn 9-coefficient polynomials. The result is fitted from ThermoMinT to
// ThermoMaxT (298.15–2500 K); it reproduces NIST-JANAF ΔfG°(CH4) to 0.01 kJ/mol
// at 1000–1400 K (−50.77 kJ/mol at 298.15 K; 19.49, 41.52, 63.75 kJ/mol at
// 1000, 1200, 1400 K). It panics if T <= 0.
//
// References:
//   - NIST Chemistry WebBook, SRD 69: Shomate coefficients for CH4 and H2.
//   - B. J. McBride, M. J. Zehe, S. Gordon, NASA/TP-2002-211556 (2002): C(gr).
//   - M. W. Chase, NIST-JANAF Thermochemical Tables, 4th ed. (1998).
func MethaneGibbsFormation(T float64) float64 {
	if !(T > 0) {
		panic(fmt.Sprintf("gas: Gibbs energy at non-positive temperature %g K", T))
	}
	hc, sc := shomateHS(methaneShomate, T)
	hh, sh := shomateHS(hydrogenShomate, T)
	hg, sg := nasaHS(graphiteNASA, T)
	dh := methaneFormationEnthalpy298 + hc - hg - 2*hh
	ds := sc - sg - 2*sh
	return dh - T*ds
}

// MethaneDecompositionKp returns the equilibrium constant of
// CH4 ⇌ C(graphite) + 2 H2 at temperature T (K):
//
//	K_p = p_H2² / (p_CH4 · p°) = exp(ΔfG°(CH4) / (R·T)),  p° = 1 bar
//
// It panics if T <= 0.
func MethaneDecompositionKp(T float64) float64 {
	return math.Exp(MethaneGibbsFormation(T) / (R * T))
}

// EquilibriumMethanePressure returns the CH4 partial pressure in Pa that is in
// equilibrium with graphite at temperature T (K) and H2 partial pressure pH2
// (Pa), treating the gases as ideal:
//
//	p_CH4,eq = p_H2² / (K_p · p°)
//
// Above it graphite grows; below it hydrogen etches graphite. It panics if
// T <= 0 or pH2 < 0.
func EquilibriumMethanePressure(T, pH2 float64) float64 {
	if pH2 < 0 || math.IsNaN(pH2) {
		panic(fmt.Sprintf("gas: negative H2 pressure %g Pa", pH2))
	}
	return pH2 * pH2 / (MethaneDecompositionKp(T) * StandardPressure)
}

// Supersaturation returns the methane supersaturation with respect to graphite,
//
//	σ = p_CH4 / p_CH4,eq(T, p_H2)
//
// σ > 1 means graphite can grow, σ < 1 that it is etched, σ = 1 equilibrium.
// With no methane (pCH4 = 0) it returns 0, whatever pH2. With methane but no
// hydrogen (pH2 = 0) the equilibrium pressure is zero and it returns +Inf:
// nothing opposes deposition. It panics if T <= 0 or a pressure is negative.
func Supersaturation(T, pCH4, pH2 float64) float64 {
	if pCH4 < 0 || math.IsNaN(pCH4) {
		panic(fmt.Sprintf("gas: negative CH4 pressure %g Pa", pCH4))
	}
	eq := EquilibriumMethanePressure(T, pH2)
	if pCH4 == 0 {
		return 0
	}
	if eq == 0 {
		return math.Inf(1)
	}
	return pCH4 / eq
}
