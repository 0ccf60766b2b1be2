// Package safety analyses a derived recipe plan and the site it runs in for
// the hazards of hydrogen, methane and the inert gases of graphene CVD, and
// lays out the pre-run checklist. It supports, and does not replace, the
// site's gas-safety review, the local fire and compressed-gas codes and the
// people licensed to approve the set-up; nothing here says a set-up is safe.
//
// Entry points: Analyze (plan + site → Report with Findings), NewSheet
// (Report → the data of the printed checklist), and the formulas below as
// plain functions. Units are SI internally: K, Pa, mol/s, m³, m³/s, s;
// concentrations are volume (mole) fractions 0..1.
//
// # Flammable limits of a mixture (Le Chatelier)
//
// On a fuel-only basis, with y_i the share of fuel i among the fuels:
//
//	LFL_mix = 1 / Σ (y_i / LFL_i)      UFL_mix = 1 / Σ (y_i / UFL_i)
//
// A feed holding a fuel fraction φ (the rest inert) that mixes with air in
// the proportion a of feed to 1 − a of air holds fuel a·φ. The inert part
// is counted as if it were air: inert gas in reality narrows the flammable
// range, so this overstates it (the conservative side). The feed can form a
// flammable mixture with air when φ ≥ LFL_mix, for feed shares
//
//	a ∈ [LFL_mix/φ, min(1, UFL_mix/φ)]
//
// so a pure H2 or CH4 feed, above its UFL, cannot burn alone but passes
// through the whole flammable range as air leaks in. The limits are those
// of a compilation (NFPA 497 by default; see gas.Compilation) at about
// 20 °C and 1 atm: at furnace temperature the range widens, at low pressure
// it narrows; neither is credited.
//
// # Exhaust dilution
//
// All of a step's feed F (mol/s), of which F_f is fuel, leaves through the
// pump or the exhaust line. Holding the outlet at or below the fraction
// k = 25 % of LFL_mix (common practice for ventilation and exhaust design)
// needs an inert dilution flow
//
//	D = F_f / (k·LFL_mix) − F
//
// and with the furnace's dilution D_f the outlet holds F_f / (F + D_f).
// A purge that follows flammable gas first pushes out the tube's contents,
// bounded by the fuel the tube holds at the previous step's pressure,
// n_fuel = φ·p_prev·V/(R·T_room): the outlet carries (n_fuel/τ)·exp(−t/τ),
// τ = n_tube/F_out (F_out the purge flow, or the pump's draw when the purge
// opens a fuller tube to the pump).
//
// # Release into the room (well-mixed room)
//
// A release G (m³/s at 20 °C, 1 atm) into a room of volume V ventilated at
// Q = air changes × V, with a mixing factor m (1 = well mixed; default 1):
//
//	C(t) = (G/(m·Q)) · (1 − exp(−m·Q·t/V))   steady state C_ss = G/(m·Q)
//	t(C) = −(V/(m·Q)) · ln(1 − C/C_ss)        for C < C_ss
//
// (the well-mixed dilution model of Crowl & Louvar, ch. 3, with their
// non-ideal mixing factor; the same model is the basis of the general
// ventilation chapter of the ACGIH Industrial Ventilation manual). Each
// flammable line at its MFC's full scale, and separately the site's
// max_release, is judged against 25 % of LFL (stop) and the first detector
// alarm (warning). The average is the room's; near the leak it is higher.
//
// # Oxygen after an inert release
//
//	O2 = 0.209476 · (1 − C_ss)
//
// judged against the site's oxygen.deficient_below, by default 19.5 %
// (US OSHA 29 CFR 1910.134, one jurisdiction's level, named as the
// default in every message).
//
// # Purging the tube
//
// Flow-through (sweep) purge of a well-mixed volume with N volume changes,
// N = n_purge / n_tube, n_tube = P·V/(R·T) at the purge pressure and room
// temperature (fewer exchanges than at furnace temperature: the
// conservative side):
//
//	C = C0 · exp(−N)        air (20.95 % O2) to 1 % O2: N = ln 20.95 ≈ 3.04
//
// Pressure (pump-and-backfill) cycles from P_low (the step's pump_to,
// default just above base pressure) to P_high:
//
//	C_n = C0 · (P_low/P_high)^n
//
// with C0 what the tube held when the cycles began. A site whose
// purge_by_evacuation allows it counts pump-downs before the first fuel as
// the purge, each leaving p_low/p_high.
//
// and filling an evacuated tube from P0 to P with inert gas multiplies the
// fraction by P0/P. Before the first flammable gas the tube must hold at
// most 1 % O2 (PurgeOxygenTarget); when the tube is opened its fuel must be
// at most 25 % of LFL_mix (VentFuelTarget), so that no mixture with air can
// reach a quarter of the lower limit. Air leaking in at the leak check's
// pass figure dp/dt adds y_O2 = 0.2095·ṅ_leak/(ṅ + ṅ_leak), ṅ_leak =
// (dp/dt)·V/(R·T_room), to the O2 of the first fuel step's flow ṅ.
//
// # Autoignition and sequence
//
// Flammable gas above its autoignition temperature (of the chosen
// compilation: NFPA 497 by default, which lists H2 at 500 °C; IEC 60079-20-1
// lists 560 °C) ignites on contact with air without a spark. Such a run
// needs a leak check and an inert purge before the first flammable gas
// (stop without either), and a purge before vent. Venting above 200 °C is a
// stop, above 100 °C a warning (recipe.HotTemperature, recipe.VentTemperature).
// Cooling under hydrogen at atmospheric pressure is a warning: the gas
// contracts as it cools and an atmospheric tube can draw air back in
// through a leak or the exhaust.
//
// References:
//   - H. Le Chatelier, "Estimation of firedamp by flammability limits",
//     Ann. Mines 19 (1891) 388–395 (the mixing rule).
//   - D. A. Crowl and J. F. Louvar, Chemical Process Safety: Fundamentals
//     with Applications, 2nd ed., Prentice Hall (2001): ch. 3 (well-mixed
//     ventilation model, non-ideal mixing factor), ch. 6 (flammability of
//     mixtures, Le Chatelier worked example), ch. 7 (vacuum, pressure and
//     sweep-through purging).
//   - NFPA 497, Recommended Practice for the Classification of Flammable
//     Liquids, Gases, or Vapors (2008), flammability data table.
//   - IEC 60079-20-1, Explosive atmospheres – Material characteristics for
//     gas and vapour classification (2010).
//   - US OSHA 29 CFR 1910.134, Respiratory protection: oxygen-deficient
//     atmosphere below 19.5 % O2.
//   - ACGIH, Industrial Ventilation: A Manual of Recommended Practice,
//     general (dilution) ventilation chapter.
package safety
