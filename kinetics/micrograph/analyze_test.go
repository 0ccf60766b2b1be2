package micrograph

import (
	"bytes"
	"image"
	"image/jpeg"
	"image/png"
	"math"
	"testing"

	"golang.org/x/image/tiff"
)

const testPixel = 0.25e-6 // m; any positive size works, sizes scale with it

// baseSynth is a 640×480 field of 8×6 well-separated domains plus one on
// each border; the copper level is 150 of 255 with a ±15 % gradient,
// a 4 % grain texture and noise of σ = 4 gray levels.
func baseSynth(contrast float64, seed uint64) (scene, int) {
	ds, edge := separated(640, 480, 8, 6, seed, true)
	return scene{w: 640, h: 480, domains: ds, bare: 150, contrast: contrast,
		gradient: 0.5, texture: 0.04, noise: 4, seed: seed}, edge
}

func encode(t *testing.T, img image.Image, format string) image.Image {
	t.Helper()
	var buf bytes.Buffer
	var err error
	switch format {
	case "png":
		err = png.Encode(&buf, img)
	case "jpeg":
		err = jpeg.Encode(&buf, img, &jpeg.Options{Quality: 92})
	case "tiff":
		err = tiff.Encode(&buf, img, nil)
	}
	if err != nil {
		t.Fatal(err)
	}
	out, info, err := Decode(&buf, Limits{})
	if err != nil {
		t.Fatalf("decode %s: %v", format, err)
	}
	if info.Format != format {
		t.Fatalf("format: got %q want %q", info.Format, format)
	}
	return out
}

// TestSyntheticMicrographs checks coverage against the area integrated
// from the generator's geometry (tolerance 0.01 absolute, from the issue)
// and the domain counts exactly: the layout puts at least 8 px between
// domains, so every domain must come out as one component.
func TestSyntheticMicrographs(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name     string
		contrast float64
		pol      Polarity
		kind     string // gray8, gray16, rgba
		format   string // "" or png/jpeg/tiff round trip
		wantPol  Polarity
	}{
		{"darker auto gray8", 0.75, PolarityAuto, "gray8", "", DomainsDarker},
		{"brighter auto gray8", 1.3, PolarityAuto, "gray8", "", DomainsBrighter},
		{"darker given gray8 png", 0.75, DomainsDarker, "gray8", "png", DomainsDarker},
		{"brighter given gray16 tiff", 1.3, DomainsBrighter, "gray16", "tiff", DomainsBrighter},
		{"darker auto gray16 png", 0.8, PolarityAuto, "gray16", "png", DomainsDarker},
		{"brighter auto colour jpeg", 1.3, PolarityAuto, "rgba", "jpeg", DomainsBrighter},
		{"darker auto colour png", 0.75, PolarityAuto, "rgba", "png", DomainsDarker},
	}
	for i, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			s, edge := baseSynth(c.contrast, uint64(11+i))
			var img image.Image
			var truth float64
			switch c.kind {
			case "gray8":
				img, truth = s.gray8()
			case "gray16":
				img, truth = s.gray16()
			case "rgba":
				img, truth = s.rgba()
			}
			if c.format != "" {
				img = encode(t, img, c.format)
			}
			res, err := Analyze(img, Settings{PixelSize: testPixel, Polarity: c.pol})
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(res.Coverage-truth) > 0.01 {
				t.Errorf("coverage: got %.4f want %.4f ± 0.01", res.Coverage, truth)
			}
			wantInterior := len(s.domains) - edge
			if res.Interior != wantInterior || res.Edge != edge {
				t.Errorf("counts: got %d interior + %d edge, want %d + %d", res.Interior, res.Edge, wantInterior, edge)
			}
			// Counting frame: the left and top border domains count, the
			// right and bottom ones do not.
			if res.Counted != wantInterior+2 {
				t.Errorf("counted: got %d want %d", res.Counted, wantInterior+2)
			}
			if res.Polarity != c.wantPol {
				t.Errorf("polarity: got %v want %v (%s)", res.Polarity, c.wantPol, res.PolarityReason)
			}
			t.Logf("coverage %.4f truth %.4f threshold %.1f valley %.3f specks %d; %s", res.Coverage, truth, res.Threshold, res.ValleyRatio, res.Specks, res.PolarityReason)
		})
	}
}
