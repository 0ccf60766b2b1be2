package gas_test

import (
	"fmt"

	"github.com/foilrun/foilrun/recipe/gas"
)

func ExampleLookup() {
	g, err := gas.Lookup("methane")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s: M = %.5f g/mol, LFL %.1f %% (%s)\n", g.Symbol, g.MolarMass.V*1e3, g.LFL.V*100, g.LFL.Source)
	lfl, _, _ := g.Limits(gas.IEC60079)
	fmt.Printf("LFL %.1f %% (%s)\n", lfl.V*100, lfl.Source)
	_, err = gas.Lookup("metane")
	fmt.Println(err != nil)
	// Output:
	// CH4: M = 16.04246 g/mol, LFL 5.0 % (NFPA 497 (2008))
	// LFL 4.4 % (IEC 60079-20-1 (2010))
	// true
}

func ExampleMixtureMFCFactor() {
	ar, _ := gas.Lookup("Ar")
	n2, _ := gas.Lookup("N2")
	fmt.Printf("%.3f\n", gas.MixtureMFCFactor([]gas.Gas{ar, n2}, []float64{150, 50}))
	// Output: 1.302
}

func ExampleEquilibriumMethanePressure() {
	const torr = gas.StandardAtmosphere / 760
	T := 1300.0 // K
	fmt.Printf("ΔfG°(CH4) = %.2f kJ/mol\n", gas.MethaneGibbsFormation(T)/1000)
	fmt.Printf("p(CH4, eq) = %.3g Pa\n", gas.EquilibriumMethanePressure(T, torr))
	fmt.Printf("supersaturation at 0.1 Torr CH4: %.3g\n", gas.Supersaturation(T, 0.1*torr, torr))
	// Output:
	// ΔfG°(CH4) = 52.62 kJ/mol
	// p(CH4, eq) = 0.00137 Pa
	// supersaturation at 0.1 Torr CH4: 9.76e+03
}
