// Package gas holds foilrun's gas property table and the gas-phase physics and
// thermochemistry the recipe checks build on. It imports nothing of foilrun's.
//
// Every number in the table is a Value: the number together with the source it
// came from, so that a report can say where a limit or factor was taken from.
// Values recalled but not checked against the source are marked "from memory".
//
// Units are SI throughout: kg/mol, K, Pa, Pa·s, J/mol, mol/(m²·s); fractions
// (mole fractions, flammable limits) are numbers from 0 to 1.
//
// Entry points:
//
//   - Lookup and Known: the gas table (H2, CH4, Ar, N2, He, C2H4, C2H2, O2, air).
//   - Gas.Viscosity, MixtureViscosity (Wilke), MeanFreePath: transport.
//   - Gas.Limits: lower/upper flammable limits and autoignition temperature from
//     a chosen compilation (NFPA 497 by default, or IEC 60079-20-1).
//   - MixtureMFCFactor: thermal mass-flow-controller gas correction factors.
//   - MethaneGibbsFormation, EquilibriumMethanePressure, Supersaturation: the
//     CH4 ⇌ C(graphite) + 2 H2 equilibrium.
//   - CopperVapourPressure, HertzKnudsenFlux, CopperRecessionRate: copper
//     evaporation, an upper bound.
//
// References:
//
//   - NFPA 497 (2008), Recommended Practice for the Classification of Flammable
//     Liquids, Gases, or Vapors; values read in the data files of the
//     general-purpose "chemicals" library (folder chemicals/Safety).
//   - IEC 60079-20-1 (2010), Explosive atmospheres – Material characteristics
//     for gas and vapour classification; read as above.
//   - NIST Chemistry WebBook, Shomate equation coefficients for CH4 and H2.
//   - B. J. McBride, M. J. Zehe, S. Gordon, NASA Glenn Coefficients for
//     Calculating Thermodynamic Properties of Individual Species,
//     NASA/TP-2002-211556 (2002): graphite, C(gr).
//   - M. W. Chase, NIST-JANAF Thermochemical Tables, 4th ed., J. Phys. Chem.
//     Ref. Data Monograph 9 (1998): check values for ΔfG°(CH4).
//   - C. R. Wilke, A Viscosity Equation for Gas Mixtures, J. Chem. Phys. 18,
//     517 (1950).
//   - R. B. Bird, W. E. Stewart, E. N. Lightfoot, Transport Phenomena, 2nd ed.
//     (2002): Wilke's rule worked example, Lennard-Jones parameters.
//   - W. Sutherland, The viscosity of gases and molecular force, Phil. Mag. 36,
//     507 (1893).
//   - C. B. Alcock, V. P. Itkin, M. K. Horrigan, Vapour pressure equations for
//     the metallic elements: 298–2500 K, Can. Metall. Q. 23, 309 (1984).
//   - K. W. Kolasinski, Surface Science, 3rd ed. (2012): Hertz–Knudsen equation.
//   - ITS-90, the International Temperature Scale of 1990: copper point.
package gas
