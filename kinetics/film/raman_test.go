package film

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

// TestClassifyRaman: cases on either side of each common-practice
// threshold (2D/G ≥ 2 with FWHM ≤ 35 cm⁻¹ monolayer-like; D/G ≥ 0.3
// defective) (common practice).
func TestClassifyRaman(t *testing.T) {
	cases := []struct {
		name string
		in   Raman
		want RamanClass
		note bool
	}{
		{"typical monolayer", Raman{TwoDG: 2.3, DG: 0.05, Width2D: 30}, MonolayerLike, false},
		{"at the 2D/G threshold", Raman{TwoDG: 2, DG: 0.05}, MonolayerLike, true},
		{"at the width threshold", Raman{TwoDG: 3, DG: 0.02, Width2D: 35}, MonolayerLike, false},
		{"broad 2D band", Raman{TwoDG: 2.5, DG: 0.05, Width2D: 50}, FewLayer, false},
		{"bilayer-like", Raman{TwoDG: 1.1, DG: 0.05, Width2D: 50}, FewLayer, false},
		{"at the D/G threshold", Raman{TwoDG: 2.5, DG: 0.3, Width2D: 30}, Defective, false},
		{"defective", Raman{TwoDG: 0.9, DG: 1.2}, Defective, false},
		{"weak 2D low D/G is ambiguous", Raman{TwoDG: 0.2, DG: 0.1, Width2D: 90}, FewLayer, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := ClassifyRaman(c.in)
			if err != nil {
				t.Fatal(err)
			}
			if got.Class != c.want {
				t.Errorf("got %s want %s (%s)", got.Class, c.want, got.Reason)
			}
			if got.Thresholds != DefaultThresholds() {
				t.Errorf("thresholds: got %+v want %+v", got.Thresholds, DefaultThresholds())
			}
			if hasNote := len(got.Notes) > 0; hasNote != c.note {
				t.Errorf("notes: got %q, want a note: %v", got.Notes, c.note)
			}
			if c.note && c.in.TwoDG < weak2DG && !strings.Contains(strings.Join(got.Notes, " "), "Cançado") {
				t.Errorf("ambiguity note should cite Cançado et al. 2011: %q", got.Notes)
			}
		})
	}
	for _, bad := range []Raman{{TwoDG: -1}, {DG: math.NaN()}, {Width2D: math.Inf(1)}} {
		if _, err := ClassifyRaman(bad); !errors.Is(err, ErrRaman) {
			t.Errorf("%+v: got %v want ErrRaman", bad, err)
		}
	}
	// Other thresholds are carried through.
	th := Thresholds{MonolayerMin2DG: 1.5, MonolayerMax2DWidth: 40, DefectiveMinDG: 0.1}
	got, _ := ClassifyRamanWith(Raman{TwoDG: 1.6, DG: 0.05, Width2D: 38}, th)
	if got.Class != MonolayerLike || got.Thresholds != th {
		t.Errorf("custom thresholds: got %s %+v", got.Class, got.Thresholds)
	}
}

func TestParseRaman(t *testing.T) {
	good := []struct {
		in   string
		want Raman
	}{
		{"2d/g=2.3,d/g=0.05,fwhm=30", Raman{2.3, 0.05, 30}},
		{" 2D/G = 2.3 , D/G=0.05 ", Raman{2.3, 0.05, 0}},
		{"d/g=0.1,2d/g=1,fwhm=33 cm-1", Raman{1, 0.1, 33}},
		{"2d/g=4,d/g=0,fwhm=28cm^-1", Raman{4, 0, 28}},
	}
	for _, c := range good {
		got, err := ParseRaman(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParseRaman(%q): got %+v, %v want %+v", c.in, got, err, c.want)
		}
	}
	bad := []struct{ in, text string }{
		{"", "empty"},
		{"2d/g=2.3", "d/g missing"},
		{"d/g=0.1", "2d/g missing"},
		{"2d/g=2.3,d/g=0.05,d/g=0.1", "given twice"},
		{"2d/g=2.3,d/g=-0.05", "d/g value \"-0.05\""},
		{"2d/g=x,d/g=0.05", "2d/g value \"x\""},
		{"2d/g=2.3,d/g=0.05,g=1", "unknown key \"g\""},
		{"2d/g 2.3,d/g=0.05", "not key=value"},
		{"2d/g=2.3,,d/g=0.05", "not key=value"},
		{"2d/g=2.3,d/g=0.05,fwhm=0", "width above 0"},
		{"2d/g=NaN,d/g=0.05", "2d/g value \"NaN\""},
	}
	for _, c := range bad {
		_, err := ParseRaman(c.in)
		if !errors.Is(err, ErrRaman) || !strings.Contains(err.Error(), c.text) {
			t.Errorf("ParseRaman(%q): got %v, want ErrRaman containing %q", c.in, err, c.text)
		}
	}
}

// FuzzParseRaman: never panics; what parses prints back to the same value.
func FuzzParseRaman(f *testing.F) {
	for _, s := range []string{"2d/g=2.3,d/g=0.05,fwhm=30", "d/g=0,2d/g=1", "2d/g=1,d/g=1,fwhm=3cm-1", ",", "=", "fwhm=Ⱥ"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		r, err := ParseRaman(s)
		if err != nil {
			return
		}
		back, err := ParseRaman(r.String())
		if err != nil || back != r {
			t.Fatalf("round trip of %q: %q gave %+v, %v", s, r.String(), back, err)
		}
		if _, err := ClassifyRaman(r); err != nil {
			t.Fatalf("parsed %q but classification failed: %v", s, err)
		}
	})
}

func ExampleClassifyRaman() {
	r, _ := ParseRaman("2d/g=2.3,d/g=0.05,fwhm=30")
	c, _ := ClassifyRaman(r)
	fmt.Println(c.Class+":", c.Reason)
	// Output: monolayer-like: 2D/G 2.3 ≥ 2 and D/G 0.05 < 0.3 and 2D FWHM 30 ≤ 35 cm⁻¹
}
