package gas

// Physical constants (exact in the SI since 2019) and reference conditions.
const (
	// R is the molar gas constant in J/(mol·K) (exact, SI 2019).
	R = 8.314462618
	// Boltzmann is the Boltzmann constant k_B in J/K (exact, SI 2019).
	Boltzmann = 1.380649e-23
	// Avogadro is the Avogadro constant N_A in 1/mol (exact, SI 2019).
	Avogadro = 6.02214076e23
	// ElementaryCharge is the elementary charge e in C (exact, SI 2019); one
	// electronvolt is e joules.
	ElementaryCharge = 1.602176634e-19
	// ZeroCelsius is 0 °C in K (the SI definition of the Celsius scale).
	ZeroCelsius = 273.15
	// StandardAtmosphere is one standard atmosphere in Pa (exact by definition).
	StandardAtmosphere = 101325.0
	// StandardPressure is the thermochemical standard pressure p° = 1 bar in Pa
	// (IUPAC; the NIST-JANAF and NASA Glenn tables use it).
	StandardPressure = 1e5
	// SCCMReferenceT is the temperature in K to which "standard" flows (sccm, slm)
	// refer: 0 °C at 101 325 Pa (SEMI convention as stated in MFC makers' documents).
	SCCMReferenceT = ZeroCelsius
	// SCCMReferenceP is the pressure in Pa to which "standard" flows refer.
	SCCMReferenceP = StandardAtmosphere
	// MolPerSCCMPerSecond is the molar flow in mol/s of one sccm:
	//
	//	1 sccm = 1e-6 m³/min at (273.15 K, 101 325 Pa) = 101325e-6 / (R·273.15) / 60 mol/s
	//	       ≈ 7.435839e-7 mol/s
	MolPerSCCMPerSecond = SCCMReferenceP * 1e-6 / (R * SCCMReferenceT) / 60
	// CopperMeltingPoint is the freezing point of copper in K on ITS-90
	// (1084.62 °C at 101 325 Pa; ITS-90 defining fixed points).
	CopperMeltingPoint = 1357.77
	// CopperMolarMass is the molar mass of copper in kg/mol (IUPAC standard
	// atomic weight 63.546).
	CopperMolarMass = 63.546e-3
	// CopperDensity is the density of solid copper at 20 °C in kg/m³
	// (8.96 g/cm³, handbook value; other sources give 8.89–8.94).
	CopperDensity = 8960.0
	// CopperFusionEnthalpy is copper's enthalpy of fusion in J/mol at the melting
	// point (13.26 kJ/mol, CRC Handbook of Chemistry and Physics, from memory).
	CopperFusionEnthalpy = 13.26e3
	// OxygenInAir is the mole fraction of O2 in dry air (NASA Glenn
	// thermodynamic data's air composition, 20.9476 %).
	OxygenInAir = 0.209476
)
