package kinetics

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// The bounds a fit used go into the params file it writes and come back
// as the default bounds of a later fit from that file. Data drawn with a
// methane order of 4.8 (as in TestFitStopsAtBound) fitted with a bound of
// 0 … 3 on a stops at 3; the written file records [0, 3] for a and
// DefaultBounds for the other free parameters; a second fit started from
// the file read back, with no bounds given, stops at 3 again.
func TestFitBoundsRoundTrip(t *testing.T) {
	t.Parallel()
	truth := fitTruth
	truth.A = 4.8
	obs := observations(t, synthRuns(60, 21, truth), fitStart())
	first, err := Fit(obs, fitStart(), FitSettings{Bounds: map[string][2]float64{"methane_order": {0, 3}}})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string][2]float64{"methane_order": {0, 3}}
	for _, key := range []string{"nucleation_energy", "nucleation_prefactor", "hydrogen_order", "growth_energy", "growth_prefactor"} {
		want[key] = DefaultBounds[key]
	}
	if !reflect.DeepEqual(first.Params.Bounds, want) {
		t.Fatalf("fit bounds: got %v, want %v", first.Params.Bounds, want)
	}
	file := FormatParams(first.Params)
	if !strings.Contains(string(file), "\n  methane_order: [0, 3]\n") {
		t.Errorf("params file:\n%s\nwant a line \"  methane_order: [0, 3]\" in its bounds block", file)
	}
	back, err := ParseParams("fitted.yaml", file)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back.Bounds, want) {
		t.Fatalf("read back: got %v, want %v", back.Bounds, want)
	}
	second, err := Fit(obs, back, FitSettings{})
	if err != nil {
		t.Fatal(err)
	}
	e := estimate(second, "methane_order")
	if !e.AtBound || math.Abs(e.Value-3) > 1e-9 {
		t.Errorf("second fit: methane_order %g at bound %v, want 3 at its bound (from the file)", e.Value, e.AtBound)
	}
	// A bound given to the second fit wins over the file's.
	third, err := Fit(obs, back, FitSettings{Bounds: map[string][2]float64{"methane_order": {0, 2}}})
	if err != nil {
		t.Fatal(err)
	}
	if e := estimate(third, "methane_order"); math.Abs(e.Value-2) > 1e-9 {
		t.Errorf("third fit: methane_order %g, want 2 (the given bound over the file's 3)", e.Value)
	}
}
