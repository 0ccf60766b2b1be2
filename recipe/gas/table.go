package gas

// Sources used in the table.
const (
	srcIUPAC     Source = "IUPAC 1995 standard atomic weights; NASA Glenn thermo data (read)"
	srcIUPACCalc Source = "computed from IUPAC 1995 atomic weights C 12.0107, H 1.00794, O 15.9994 (from memory)"
	srcAirMass   Source = "NASA Glenn thermo data, dry air (from memory)"
	srcMFCTable  Source = "thermal-MFC makers' gas correction factor tables (from memory)"
	srcMFCData   Source = "thermal-MFC makers' manual tables of d and c_p (from memory)"
	srcNFPA      Source = "NFPA 497 (2008)"
	srcIEC       Source = "IEC 60079-20-1 (2010)"
	srcVisc300   Source = "handbook dilute-gas viscosity at 300 K, CRC Handbook table (from memory)"
	srcVisc600   Source = "handbook dilute-gas viscosity at 600 K, CRC Handbook table (from memory)"
	srcDefN2     Source = "definition: factors are relative to N2"
)

// Structure factors s of the MFC correction-factor formula.
const (
	monatomic  = 1.030
	diatomic   = 1.000
	triatomic  = 0.941
	polyatomic = 0.880
)

// kelvin converts °C to K.
func kelvin(c float64) float64 { return c + ZeroCelsius }

// v builds a Value.
func v(x float64, s Source) Value { return Value{V: x, Source: s} }

// visc builds the viscosity model from values in µPa·s at 300 K and 600 K,
// trusted from 200 K to 1500 K.
func visc(mu300, mu600 float64) ViscosityData {
	return newViscosityData(
		ViscosityPoint{T: 300, Mu: v(mu300*1e-6, srcVisc300)},
		ViscosityPoint{T: 600, Mu: v(mu600*1e-6, srcVisc600)},
		200, 1500)
}

// flam builds both compilations' limits from percentages and °C.
func flam(nfpa, iec [3]float64) [compilationCount]FlammabilityLimits {
	mk := func(x [3]float64, s Source) FlammabilityLimits {
		return FlammabilityLimits{LFL: v(x[0]/100, s), UFL: v(x[1]/100, s), AutoIgnition: v(kelvin(x[2]), s)}
	}
	var out [compilationCount]FlammabilityLimits
	out[NFPA497] = mk(nfpa, srcNFPA)
	out[IEC60079] = mk(iec, srcIEC)
	return out
}

// withDefaults copies the default compilation's limits into the LFL, UFL and
// AutoIgnition fields.
func withDefaults(gs []Gas) []Gas {
	for i := range gs {
		l := gs[i].limits[DefaultCompilation]
		gs[i].LFL, gs[i].UFL, gs[i].AutoIgnition = l.LFL, l.UFL, l.AutoIgnition
	}
	return gs
}

// table is the gas table, in the order Known returns it. Densities are at
// 0 °C and 101 325 Pa in kg/m³ (= g/L); c_p values are the makers' cal/(g·°C)
// converted to J/(kg·K) (1 cal/(g·°C) = 4184 J/(kg·K)).
var table = withDefaults([]Gas{
	{
		Symbol: "H2", Name: "hydrogen", Role: Fuel, Flammable: true,
		MolarMass:       v(2.01588e-3, srcIUPAC),
		MFCFactor:       v(1.01, srcMFCTable),
		StandardDensity: v(0.0899, srcMFCData), SpecificHeat: v(3.419*4184, srcMFCData), StructureFactor: diatomic,
		limits:        flam([3]float64{4.0, 75, 500}, [3]float64{4.0, 77, 560}),
		ViscosityData: visc(8.9, 14.4),
	},
	{
		Symbol: "CH4", Name: "methane", Role: CarbonSource, Flammable: true, CarbonAtoms: 1,
		MolarMass:       v(16.04246e-3, srcIUPAC),
		MFCFactor:       v(0.72, srcMFCTable+"; another maker lists 0.77"),
		StandardDensity: v(0.715, srcMFCData), SpecificHeat: v(0.5328*4184, srcMFCData), StructureFactor: polyatomic,
		limits:        flam([3]float64{5.0, 15, 600}, [3]float64{4.4, 17, 600}),
		ViscosityData: visc(11.1, 19.5),
	},
	{
		Symbol: "Ar", Name: "argon", Role: Inert,
		MolarMass:       v(39.948e-3, srcIUPAC),
		MFCFactor:       v(1.39, srcMFCTable+"; another maker lists 1.40"),
		StandardDensity: v(1.782, srcMFCData), SpecificHeat: v(0.1244*4184, srcMFCData), StructureFactor: monatomic,
		ViscosityData: visc(22.7, 38.8),
	},
	{
		Symbol: "N2", Name: "nitrogen", Role: Inert,
		MolarMass:       v(28.0134e-3, srcIUPAC),
		MFCFactor:       v(1.00, srcDefN2),
		StandardDensity: v(1.250, srcMFCData), SpecificHeat: v(0.2485*4184, srcMFCData), StructureFactor: diatomic,
		ViscosityData: visc(17.9, 29.6),
	},
	{
		Symbol: "He", Name: "helium", Role: Inert,
		MolarMass:       v(4.002602e-3, srcIUPAC),
		MFCFactor:       v(1.45, srcMFCTable),
		StandardDensity: v(0.1786, srcMFCData), SpecificHeat: v(1.242*4184, srcMFCData), StructureFactor: monatomic,
		ViscosityData: visc(19.9, 32.3),
	},
	{
		Symbol: "C2H4", Name: "ethylene", Aliases: []string{"ethene"}, Role: CarbonSource, Flammable: true, CarbonAtoms: 2,
		MolarMass:       v(28.05316e-3, srcIUPACCalc),
		MFCFactor:       v(0.60, srcMFCTable),
		StandardDensity: v(1.251, srcMFCData), SpecificHeat: v(0.3651*4184, srcMFCData), StructureFactor: polyatomic,
		limits:        flam([3]float64{2.7, 36, 490}, [3]float64{2.3, 36, 440}),
		ViscosityData: visc(10.4, 19.1),
	},
	{
		Symbol: "C2H2", Name: "acetylene", Aliases: []string{"ethyne"}, Role: CarbonSource, Flammable: true, CarbonAtoms: 2, Decomposes: true,
		MolarMass:       v(26.03728e-3, srcIUPACCalc),
		MFCFactor:       v(0.58, srcMFCTable),
		StandardDensity: v(1.162, srcMFCData), SpecificHeat: v(0.4049*4184, srcMFCData), StructureFactor: polyatomic,
		limits:        flam([3]float64{2.5, 100, 305}, [3]float64{2.3, 100, 305}),
		ViscosityData: visc(10.2, 19.0),
	},
	{
		Symbol: "O2", Name: "oxygen", Role: Oxidiser, OxygenFraction: 1,
		MolarMass:       v(31.9988e-3, srcIUPACCalc),
		MFCFactor:       v(0.993, srcMFCTable),
		StandardDensity: v(1.427, srcMFCData), SpecificHeat: v(0.2193*4184, srcMFCData), StructureFactor: diatomic,
		ViscosityData: visc(20.7, 35.1),
	},
	{
		Symbol: "air", Name: "dry air", Role: Oxidiser, OxygenFraction: OxygenInAir,
		MolarMass:       v(28.9651e-3, srcAirMass),
		MFCFactor:       v(1.00, srcMFCTable),
		StandardDensity: v(1.293, srcMFCData), SpecificHeat: v(0.240*4184, srcMFCData), StructureFactor: diatomic,
		ViscosityData: visc(18.6, 30.8),
	},
})
