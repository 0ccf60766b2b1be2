package safety

import "math"

// SweepFraction returns the fraction C/C0 left after N volume changes of a
// well-mixed flow-through purge: exp(−N) (Crowl & Louvar, sweep-through
// purging).
func SweepFraction(N float64) float64 { return math.Exp(-N) }

// SweepExchanges returns the volume changes N = ln(C0/C) a flow-through
// purge needs to take a fraction from C0 to C (0 when C ≥ C0).
func SweepExchanges(c0, c float64) float64 {
	if c >= c0 {
		return 0
	}
	return math.Log(c0 / c)
}

// CycleFraction returns the fraction C_n/C0 = (pLow/pHigh)^n left after n
// pump-and-backfill cycles between pLow and pHigh (Crowl & Louvar, vacuum
// and pressure purging).
func CycleFraction(pLow, pHigh float64, n int) float64 {
	return math.Pow(pLow/pHigh, float64(n))
}

// CyclesNeeded returns the fewest pump-and-backfill cycles between pLow and
// pHigh that take a fraction from c0 to at most c: ⌈ln(c/c0)/ln(pLow/pHigh)⌉.
// It returns 0 when c ≥ c0 and −1 when pLow ≥ pHigh (no cycle helps).
func CyclesNeeded(c0, c, pLow, pHigh float64) int {
	if c >= c0 {
		return 0
	}
	if pLow >= pHigh {
		return -1
	}
	n := math.Log(c/c0) / math.Log(pLow/pHigh)
	return int(math.Ceil(n - 1e-12))
}
