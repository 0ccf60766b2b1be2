package micrograph

import (
	"encoding/json"
	"image"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// reference holds testdata/otsu_reference.json, made by
// testdata/otsu_reference.py with scikit-image 0.19.3 (threshold_otsu) and
// NumPy 1.24.2 (percentile, linear) from Debian bookworm.
type reference struct {
	Skimage string `json:"skimage"`
	Images  []struct {
		File      string `json:"file"`
		Threshold int    `json:"threshold"`
	} `json:"images"`
	Histograms []struct {
		Name      string   `json:"name"`
		Counts    []uint64 `json:"counts"`
		Threshold int      `json:"threshold"`
	} `json:"histograms"`
	Quantiles []struct {
		Data  []float64 `json:"data"`
		Q     float64   `json:"q"`
		Value float64   `json:"value"`
	} `json:"quantiles"`
}

func loadReference(t *testing.T) reference {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("testdata", "otsu_reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref reference
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	return ref
}

// nativeHistogram counts the gray levels of an 8- or 16-bit gray image in
// its own units.
func nativeHistogram(t *testing.T, img image.Image) []uint64 {
	switch m := img.(type) {
	case *image.Gray: // this package's decoder leaves a filter byte between rows
		h := make([]uint64, 256)
		b := m.Bounds()
		for y := b.Min.Y; y < b.Max.Y; y++ {
			for _, v := range m.Pix[m.PixOffset(b.Min.X, y):][:b.Dx()] {
				h[v]++
			}
		}
		return h
	case *image.Gray16:
		h := make([]uint64, 65536)
		for i := 0; i < len(m.Pix); i += 2 {
			h[int(m.Pix[i])<<8|int(m.Pix[i+1])]++
		}
		return h
	case *lumaImage: // a PNG from this package's decoder
		h := make([]uint64, 1<<m.depth)
		unit := 1
		if m.depth == 8 {
			unit = 257
		}
		for _, v := range m.pix {
			h[int(v)/unit]++
		}
		return h
	}
	t.Fatalf("unexpected image type %T", img)
	return nil
}

// TestOtsuAgainstSkimage: thresholds must equal scikit-image's exactly
// (same convention: lower class ≤ t, first maximum wins).
func TestOtsuAgainstSkimage(t *testing.T) {
	t.Parallel()
	ref := loadReference(t)
	for _, c := range ref.Images {
		t.Run(c.File, func(t *testing.T) {
			img, _, err := Load(filepath.Join("testdata", c.File), Limits{})
			if err != nil {
				t.Fatal(err)
			}
			got, ok := Otsu(nativeHistogram(t, img))
			if !ok || got != c.Threshold {
				t.Errorf("got %d (ok %v) want %d (skimage %s)", got, ok, c.Threshold, ref.Skimage)
			}
			// Through the 16-bit plane Analyze uses: an 8-bit level v is
			// 257·v there, and the threshold must land on the same level.
			p := toPlane(img, nil)
			t16, _ := Otsu(histogram(p))
			if b := bitDepth(img); b == 8 && t16 != 257*c.Threshold || b == 16 && t16 != c.Threshold {
				t.Errorf("16-bit plane: got %d for skimage's %d at %d bits", t16, c.Threshold, b)
			}
		})
	}
	for _, c := range ref.Histograms {
		t.Run(c.Name, func(t *testing.T) {
			if got, ok := Otsu(c.Counts); !ok || got != c.Threshold {
				t.Errorf("got %d (ok %v) want %d (skimage %s)", got, ok, c.Threshold, ref.Skimage)
			}
		})
	}
}

func TestOtsuDegenerate(t *testing.T) {
	t.Parallel()
	for _, h := range [][]uint64{nil, {}, {5}, {0, 0, 9, 0}} {
		if _, ok := Otsu(h); ok {
			t.Errorf("Otsu(%v): got ok, want not ok (fewer than two filled bins)", h)
		}
	}
	// Two filled bins: the split is between them (definition).
	if got, ok := Otsu([]uint64{0, 4, 0, 0, 1, 0}); !ok || got != 1 {
		t.Errorf("two bins: got %d %v want 1 true", got, ok)
	}
}

func TestQuantileAgainstNumpy(t *testing.T) {
	t.Parallel()
	ref := loadReference(t)
	for _, c := range ref.Quantiles {
		got := Quantile(c.Data, c.Q)
		if math.Abs(got-c.Value) > 1e-12*math.Abs(c.Value) { // float rounding only
			t.Errorf("q=%g: got %.12g want %.12g (numpy.percentile)", c.Q, got, c.Value)
		}
	}
}

// TestLabelConnectivity checks 8-connected component counts of small
// masks against counts by hand (a diagonal step joins, a gap does not).
func TestLabelConnectivity(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name string
		mask []string
		want int
	}{
		{"diagonal chain", []string{"#...", ".#..", "..#.", "...#"}, 1},
		{"anti-diagonal", []string{"...#", "..#.", ".#..", "#..."}, 1},
		{"checkerboard", []string{"#.#.", ".#.#", "#.#.", ".#.#"}, 1},
		{"gap of one", []string{"#.#", "#.#", "#.#"}, 2},
		{"U shape joins late", []string{"#..#", "#..#", "####"}, 1},
		{"two runs one below", []string{"##.##", "..#..", "....."}, 1},
		{"separate rows", []string{"###", "...", "###"}, 2},
		{"empty", []string{"...", "..."}, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := &plane{w: len(c.mask[0]), h: len(c.mask)}
			for _, row := range c.mask {
				for _, ch := range row {
					v := uint16(0)
					if ch == '#' {
						v = 1000
					}
					p.pix = append(p.pix, v)
				}
			}
			runs, rowStart := runsOf(p, 500, true)
			_, n := labelRuns(runs, rowStart, p.h)
			if n != c.want {
				t.Errorf("got %d components want %d", n, c.want)
			}
		})
	}
}
