package safety_test

import (
	"fmt"

	"github.com/foilrun/foilrun/recipe/safety"
)

// The Le Chatelier worked example of Crowl & Louvar (2nd ed., 2001).
func ExampleLeChatelier() {
	y := []float64{0.24, 0.61, 0.15} // hexane, methane, ethylene
	fmt.Printf("LFL %.4f %%\n", 100*safety.LeChatelier(y, []float64{0.012, 0.053, 0.031}))
	fmt.Printf("UFL %.3f %%\n", 100*safety.LeChatelier(y, []float64{0.075, 0.15, 0.32}))
	// Output:
	// LFL 2.7512 %
	// UFL 12.928 %
}

// Vacuum purge cycles to half an atmosphere: five take air's 21 % O2 below 1 %.
func ExampleCyclesNeeded() {
	fmt.Println(safety.CyclesNeeded(0.21, 0.01, 0.5, 1))
	// Output: 5
}
