package chart

import (
	"bytes"
	"strings"
	"testing"
)

// Every colour of the map's palette is set, the middle one too (gonum's
// own Palette of the reversed luminance map left index 127 of 255 nil,
// drawn as a white cell), and the colours run from light to dark.
func TestSamplePalette(t *testing.T) {
	cm, err := Sequential(0, 100)
	if err != nil {
		t.Fatal(err)
	}
	pal, err := samplePalette(cm, 255)
	if err != nil {
		t.Fatal(err)
	}
	cs := pal.Colors()
	if len(cs) != 255 {
		t.Fatalf("got %d colours, want 255", len(cs))
	}
	lum := func(i int) uint32 { r, g, b, _ := cs[i].RGBA(); return r + g + b }
	for i, c := range cs {
		if c == nil {
			t.Fatalf("colour %d of 255 is nil", i)
		}
	}
	if !(lum(0) > lum(127) && lum(127) > lum(254)) {
		t.Errorf("got sums of RGB %d, %d, %d at the low end, middle and high end; want them falling (light to dark)", lum(0), lum(127), lum(254))
	}
}

// The SVG colour bar is drawn as vector bands, not as a one-pixel-wide
// image (which a browser keeps at its aspect ratio: a thin line).
func TestColourBarIsVector(t *testing.T) {
	m := HeatMap{Title: "bar", XLabel: "x", YLabel: "y", ZLabel: "z (%)",
		X: []float64{1, 2}, Y: []float64{1, 2}, Z: [][]float64{{0, 50}, {50, 100}}}
	var out bytes.Buffer
	if err := WriteHeatMap(&out, "m.svg", m); err != nil {
		t.Fatal(err)
	}
	if n := strings.Count(out.String(), "<image"); n != 0 {
		t.Errorf("got %d <image> elements in the SVG, want none (the bar and the cells are vector shapes)", n)
	}
}
