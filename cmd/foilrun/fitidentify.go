package main

import (
	"fmt"
	"io"
	"math"

	"github.com/foilrun/foilrun/kinetics"
)

// fitCombinedJSON is a combination of parameters a coverage-only fit
// estimates in place of the separate ones (kinetics.Combined).
type fitCombinedJSON struct {
	Name     string   `json:"name"`
	Unit     string   `json:"unit"`
	Value    float64  `json:"value"`
	SE       *float64 `json:"se"`
	LogValue *float64 `json:"ln_value,omitempty"`
	LogSE    *float64 `json:"ln_se,omitempty"`
	Factor   *float64 `json:"factor,omitempty"` // ×/÷ exp(ln_se), for products
	AtBound  bool     `json:"at_bound"`
}

// estimatesJSON lists the estimates; a parameter the metrics cannot
// identify has no value and no standard error.
func estimatesJSON(es []kinetics.Estimate) []fitEstimateJSON {
	var out []fitEstimateJSON
	for _, e := range es {
		j := fitEstimateJSON{Parameter: e.Key, Short: e.Short, Unit: e.Unit, Fixed: e.Fixed, Identifiable: e.Identifiable, AtBound: e.AtBound}
		if e.Identifiable {
			j.Value, j.SE = opt6(e.Value), opt6(e.SE)
			if e.Log {
				j.LogValue, j.LogSE = opt6(e.LogValue), opt6(e.LogSE)
				j.RefValue, j.RefFactor = opt6(e.RefValue), opt6(math.Exp(e.RefLogSE))
			}
		}
		out = append(out, j)
	}
	return out
}

func combinedJSON(cs []kinetics.Combined) []fitCombinedJSON {
	out := []fitCombinedJSON{}
	for _, c := range cs {
		j := fitCombinedJSON{Name: c.Name, Unit: c.Unit, Value: round6(c.Value), SE: opt6(c.SE), AtBound: c.AtBound}
		if !math.IsNaN(c.LogValue) {
			j.LogValue, j.LogSE, j.Factor = opt6(c.LogValue), opt6(c.LogSE), opt6(math.Exp(c.LogSE))
		}
		out = append(out, j)
	}
	return out
}

// factorText is a ×/÷ uncertainty factor, or "not identified".
func factorText(f *float64) string {
	if f == nil {
		return "not identified"
	}
	return "×/÷ " + num(*f, 4)
}

// printReferred prints the reference temperature, the prefactors
// referred to it with their ×/÷ factors, the energy–prefactor
// correlations and, after a coverage-only fit, the combinations.
func printReferred(w io.Writer, r fitResultJSON) error {
	fmt.Fprintf(w, "reference temperature T_ref %s °C (median growth temperature of the runs)\n", fixed(r.ReferenceTemperatureC, 1))
	rates := map[string]string{"I0": "nucleation rate I0·exp(−En/kT_ref)", "G0": "growth rate G0·exp(−Eg/kT_ref)"}
	for _, e := range r.Estimates {
		if e.RefValue == nil || e.Fixed {
			continue
		}
		fmt.Fprintf(w, "%s: %s %s, %s\n", rates[e.Short], num(*e.RefValue, 5), e.Unit, factorText(e.RefFactor))
	}
	if r.NucleationCorrelation != nil || r.GrowthCorrelation != nil {
		fmt.Fprintf(w, "correlation En with ln I(T_ref): %s; Eg with ln G(T_ref): %s\n", corrText(r.NucleationCorrelation), corrText(r.GrowthCorrelation))
	}
	if len(r.Combined) == 0 {
		return nil
	}
	heading(w, "Identified from coverage")
	t := table{Header: []string{"combination", "value", "uncertainty", "unit"}, Numeric: []bool{false, true, false, false}}
	for _, c := range r.Combined {
		u := "± not identified"
		if c.SE != nil {
			u = "± " + num(*c.SE, 4)
		}
		if c.LogValue != nil {
			u = factorText(c.Factor)
		}
		t.add(c.Name, num(c.Value, 5), u, c.Unit)
	}
	return writeTable(w, t)
}
