package film

import (
	"errors"
	"fmt"
	"math"
	"testing"
)

// TestMonolayerAgainstNair: Nair et al. (Science 320, 1308, 2008) measure
// an absorbance of πα ≈ 2.3 % per layer, T ≈ 97.7 %. The model must give
// that for N = 1 (±0.05 percentage points: the paper quotes 2.3 % to two
// figures) and read it back as one layer.
func TestMonolayerAgainstNair(t *testing.T) {
	if got := 1 - TransmittanceOf(1); math.Abs(got-0.023) > 0.0005 {
		t.Errorf("absorbance of one layer: got %.5f want 0.023 ± 0.0005 (Nair et al. 2008)", got)
	}
	// πα itself, the paper's figure: 0.022925 (CODATA 2018 α).
	if got := math.Pi * FineStructure; math.Abs(got-0.022925) > 5e-7 {
		t.Errorf("πα: got %.7f want 0.022925", got)
	}
	cases := []struct {
		name       string
		t, sub     float64
		want       int
		frac, ftol float64
		source     string
	}{
		{"Nair 97.7 %", 0.977, 0, 1, 1.0, 0.05, "Nair et al. 2008: T ≈ 97.7 % for one layer"},
		{"about 98 % transparent", 0.98, 0, 1, 0.88, 0.05, "common practice: a monolayer is about 98 % transparent"},
		{"two layers 95.4 %", 0.954, 0, 2, 2.05, 0.05, "Nair et al. 2008: 2.3 % absorbed per layer, T ≈ 1 − 2·0.023"},
		{"on glass", 0.92 * 0.977, 0.92, 1, 1.0, 0.05, "the same monolayer on a substrate of T = 92 %"},
		{"bare", 1, 0, 0, 0, 1e-12, "T = 1 is no film (definition)"},
		{"film equals substrate", 0.9, 0.9, 0, 0, 1e-12, "ratio 1 is no film (definition)"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			e, err := Layers(c.t, c.sub)
			if err != nil {
				t.Fatal(err)
			}
			if e.Nearest != c.want || math.Abs(e.Layers-c.frac) > c.ftol {
				t.Errorf("got %d (%.4f) want %d (%.2f ± %g); %s", e.Nearest, e.Layers, c.want, c.frac, c.ftol, c.source)
			}
		})
	}
}

// TestLayersInvertsTransmittance: Layers(TransmittanceOf(n)) = n to
// rounding (the two equations are exact inverses).
func TestLayersInvertsTransmittance(t *testing.T) {
	for n := 0.0; n <= 10; n += 0.5 {
		e, err := Layers(TransmittanceOf(n), 0)
		if err != nil || math.Abs(e.Layers-n) > 1e-9 {
			t.Errorf("n=%g: got %g, %v", n, e.Layers, err)
		}
	}
}

func TestLayersBadInput(t *testing.T) {
	for _, c := range []struct {
		name   string
		t, sub float64
	}{
		{"zero", 0, 0}, {"negative", -0.5, 0}, {"above one", 1.02, 0}, {"percent not converted", 97.6, 0},
		{"NaN", math.NaN(), 0}, {"above substrate", 0.95, 0.9}, {"substrate above one", 0.9, 1.5},
		{"negative substrate", 0.9, -0.9},
	} {
		if _, err := Layers(c.t, c.sub); !errors.Is(err, ErrTransmittance) {
			t.Errorf("%s: got %v, want ErrTransmittance", c.name, err)
		}
	}
}

func TestParseTransmittance(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"97.6%", 0.976, true}, {" 97.6 % ", 0.976, true}, {"0.976", 0.976, true}, {"1", 1, true},
		{"", 0, false}, {"%", 0, false}, {"abc", 0, false}, {"NaN%", 0, false}, {"Inf", 0, false},
	} {
		got, err := ParseTransmittance(c.in)
		if (err == nil) != c.ok || c.ok && math.Abs(got-c.want) > 1e-15 {
			t.Errorf("ParseTransmittance(%q): got %g, %v want %g ok=%v", c.in, got, err, c.want, c.ok)
		}
	}
}

func FuzzParseTransmittance(f *testing.F) {
	for _, s := range []string{"97.6%", "0.976", "", "%", "1e400", "-0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParseTransmittance(s)
		if err != nil {
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("%q: got %g", s, v)
		}
		Layers(v, 0) // must not panic
	})
}

// 97.6 % by hand: (0.976^(−1/2) − 1)·2/(πα) = 0.012223·87.24 = 1.066.
func ExampleLayers() {
	e, _ := Layers(0.976, 0)
	fmt.Printf("%.2f layers, nearest %d\n", e.Layers, e.Nearest)
	// Output: 1.07 layers, nearest 1
}
