package micrograph

import (
	"encoding/json"
	"fmt"
	"os"
	"testing"
)

// smoothReference is testdata/smooth_reference.json, made by
// testdata/smooth_reference.py with scipy.ndimage.correlate1d.
type smoothReference struct {
	MadeWith      string `json:"made_with"`
	Width, Height int
	Field         []uint16
	Cases         []struct {
		Radius int
		Want   []uint16
	}
}

// TestSmoothAgainstScipy: smooth must equal, pixel for pixel (tolerance 0),
// scipy's separable correlation with the binomial taps, mode 'nearest',
// rounded half up after each pass. It runs with 1 to 4 workers so the
// bands and the rows each makes beyond its ends are exercised, including bands shorter than
// the kernel (radius 8 over 11 rows).
func TestSmoothAgainstScipy(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile("testdata/smooth_reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref smoothReference
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) == 0 || len(ref.Field) != ref.Width*ref.Height {
		t.Fatalf("reference holds %d cases and %d pixels for %d×%d", len(ref.Cases), len(ref.Field), ref.Width, ref.Height)
	}
	for _, workers := range []int{1, 2, 3, 4} {
		for _, c := range ref.Cases {
			t.Run(fmt.Sprintf("r=%d/workers=%d", c.Radius, workers), func(t *testing.T) {
				p := &plane{w: ref.Width, h: ref.Height, pix: append([]uint16(nil), ref.Field...)}
				smooth(p, c.Radius, workers)
				for i, got := range p.pix {
					if got != c.Want[i] {
						t.Fatalf("pixel (%d, %d): got %d want %d (%s)", i%p.w, i/p.w, got, c.Want[i], ref.MadeWith)
					}
				}
			})
		}
	}
}
