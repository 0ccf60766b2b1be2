// Package film turns optical and Raman measurements of a graphene film
// into layer counts and a quality class.
//
// Entry points: Layers (transmittance at 550 nm to a layer count),
// TransmittanceOf (its inverse), ClassifyRaman (2D/G, D/G and 2D width to
// monolayer-like, few-layer or defective), and the parsers
// ParseTransmittance and ParseRaman for the forms a person types
// ("97.6%", "2d/g=2.3,d/g=0.05,fwhm=30").
//
// Units: transmittance is a fraction in (0, 1]; Raman band widths are in
// cm⁻¹ (the unit every spectrometer reports, kept as is).
//
// # Layers from transmittance
//
// A free-standing film of N graphene layers with the universal optical
// conductance σ = e²/4ħ transmits
//
//	T(N) = (1 + N·πα/2)^(−2) ≈ 1 − N·πα,
//
// with α = 7.2973525693e-3 the fine-structure constant (CODATA 2018), so a
// monolayer absorbs πα ≈ 2.3 %. Solving for N,
//
//	N = (2/πα)·(T^(−1/2) − 1).
//
// On a transparent substrate the film's own transmittance is taken as
// T_film/T_substrate (the ratio to a bare-substrate reference), which
// neglects the change in reflection at the interface. Layers reports the
// fractional N and the nearest whole number.
//
// # Raman classes (common practice)
//
// Monolayer-like: I(2D)/I(G) ≥ 2 and, when given, a single narrow 2D band
// of FWHM ≤ 35 cm⁻¹ (about 25–35 cm⁻¹ for a monolayer). Defective:
// I(D)/I(G) ≥ 0.3. Otherwise few-layer. The thresholds are named
// constants and every Classification carries the ones used. D/G rises with
// defect density only until the mean distance between defects nears 3 nm
// and then falls, so a low D/G with a weak or broad 2D band may also mean
// heavy disorder; ClassifyRaman adds a note in that case.
//
// References:
//
//	R. R. Nair, P. Blake, A. N. Grigorenko, K. S. Novoselov, T. J. Booth,
//	T. Stauber, N. M. R. Peres, A. K. Geim, "Fine structure constant
//	defines visual transparency of graphene", Science 320, 1308, 2008.
//	E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA
//	recommended values of the fundamental physical constants: 2018",
//	Rev. Mod. Phys. 93, 025010, 2021.
//	L. G. Cançado et al., "Quantifying defects in graphene via Raman
//	spectroscopy at different excitation energies", Nano Lett. 11, 3190,
//	2011.
package film
