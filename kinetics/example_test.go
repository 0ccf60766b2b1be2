package kinetics_test

import (
	"fmt"
	"math"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
)

// Predict the low-pressure template with the illustrative defaults.
func ExamplePredict() {
	r, err := recipe.LoadRecipe("../templates/recipe-lowpressure.yaml")
	if err != nil {
		fmt.Println(err)
		return
	}
	f, _, err := recipe.Resolve(r, "", "")
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := kinetics.Predict(recipe.Derive(r, f), kinetics.DefaultParams(), kinetics.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("coverage %.3f, %.0f nuclei/mm², domains %.0f µm, 99 %% after %.1f min\n",
		res.Coverage, res.NucleiDensity*1e-6, res.DomainSize*1e6, res.T99/60)
	// Output: coverage 1.000, 6208 nuclei/mm², domains 14 µm, 99 % after 2.0 min
}

// The Avrami limit at constant conditions.
func ExampleParams_NucleationRate() {
	p := kinetics.DefaultParams()
	I := p.NucleationRate(1273.15, 50, 30)
	G, _ := p.GrowthRate(1273.15, 50, 30)
	N := math.Gamma(4.0/3) * math.Cbrt(3/math.Pi) * math.Pow(I/G, 2.0/3)
	fmt.Printf("I = %.3g /m²/s, G = %.3g µm/min, N∞ = %.0f /mm²\n", I, G*6e7, N*1e-6)
	// Output: I = 8.51e+07 /m²/s, G = 9.26 µm/min, N∞ = 5913 /mm²
}
