package safety

import (
	"fmt"
	"math"
)

// LeChatelier returns the flammable limit of a fuel mixture from the shares
// y (fuel-only basis, summing to 1) and each fuel's limit (LFL or UFL,
// volume fractions):
//
//	L_mix = 1 / Σ (y_i / L_i)
//
// It panics if the slices differ in length, any limit is not positive or
// the shares do not sum to 1 within 1e-9 (misuse of the rule).
func LeChatelier(y, limit []float64) float64 {
	if len(y) != len(limit) || len(y) == 0 {
		panic(fmt.Sprintf("safety: LeChatelier needs equal, non-empty slices (got %d and %d)", len(y), len(limit)))
	}
	sum, total := 0.0, 0.0
	for i := range y {
		if !(limit[i] > 0) {
			panic(fmt.Sprintf("safety: LeChatelier limit %d is %g, want > 0", i, limit[i]))
		}
		sum += y[i] / limit[i]
		total += y[i]
	}
	if math.Abs(total-1) > 1e-9 {
		panic(fmt.Sprintf("safety: LeChatelier shares sum to %g, want 1", total))
	}
	return 1 / sum
}

// AirMixRange returns the range of feed shares a (feed : air = a : 1 − a)
// for which a feed holding fuel fraction phi, with fuel-basis limits lfl
// and ufl, mixes with air into a flammable mixture, counting the feed's
// inert part as air (the conservative side):
//
//	a ∈ [lfl/phi, min(1, ufl/phi)]
//
// ok is false when phi < lfl: no mixture with air reaches the LFL.
func AirMixRange(phi, lfl, ufl float64) (lo, hi float64, ok bool) {
	if phi <= 0 || phi < lfl {
		return 0, 0, false
	}
	return lfl / phi, math.Min(1, ufl/phi), true
}

// DilutionNeeded returns the inert flow (mol/s) to add to a stream of total
// flow total holding fuel flow fuel so that the fuel fraction is at most
// k·lfl: D = fuel/(k·lfl) − total, and 0 when none is needed.
func DilutionNeeded(fuel, total, lfl, k float64) float64 {
	if fuel <= 0 {
		return 0
	}
	return math.Max(0, fuel/(k*lfl)-total)
}
