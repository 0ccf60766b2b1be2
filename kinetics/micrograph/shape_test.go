package micrograph

import (
	"math"
	"testing"
)

// TestShape checks the histogram shape measures on histograms worked by
// hand from the definitions in shape's doc comment: quantiles are the
// lowest level whose cumulative count reaches ⌈q·N⌉, the spread is the
// interquartile range over 1.349 (the normal distribution's IQR in σ),
// and the smoothing weights are exp(−d²/(2σ²)) with σ = 2 bins, cut at 3σ.
// Tolerance 1e-12 relative (float rounding); levels exactly.
func TestShape(t *testing.T) {
	t.Parallel()
	flat := make([]uint64, 256)
	for i := range flat {
		flat[i] = 1
	}
	spikes := make([]uint64, 256) // 1000 at level 0 and at level 255
	spikes[0], spikes[255] = 1000, 1000
	near := make([]uint64, 128) // two peaks 8 bins apart, ends held by 0.5 % each
	near[0], near[60], near[68], near[127] = 10000, 1000000, 1000000, 10000
	cases := []struct {
		name   string
		hist   []uint64
		t      int
		want   peaks
		peakOK bool // compare peak, spread and median too
	}{
		// N = 256, one count per level: q1 at ⌈64⌉ → level 63, q3 at ⌈192⌉
		// → 191, median at ⌈128⌉ → 127; coarse bins of 2 levels all hold 2,
		// so the smoothed histogram is flat and the ratio exactly 1.
		{"flat", flat, 127, peaks{peak: 0, spread: 128 / 1.349, median: 127, valleyRatio: 1}, true},
		// Coarse bins 0 and 127 hold 1000 each, every bin 7…120 is 0 after
		// smoothing: the valley is empty.
		{"two far spikes", spikes, 127, peaks{peak: 0, spread: 255 / 1.349, median: 0, valleyRatio: 0}, true},
		// t at the 99.9 % quantile (level 255): no upper class to measure.
		{"threshold at the top quantile", spikes, 255, peaks{valleyRatio: 1}, false},
		// t = 254 falls in the last coarse bin (254/2 = 127): nothing above.
		{"threshold in the last coarse bin", spikes, 254, peaks{valleyRatio: 1}, false},
		// Width 1 level per bin; the peaks at 60 and 68 smooth to c/W and
		// the valley at 64 to 2c·exp(−4²/8)/W (W the same weight sum): 2/e².
		{"two near peaks", near, 64, peaks{peak: 60, valleyRatio: 2 / math.E / math.E}, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := shape(c.hist, c.t)
			if !within(got.valleyRatio, c.want.valleyRatio, 1e-12) {
				t.Errorf("valley ratio: got %.15g want %.15g", got.valleyRatio, c.want.valleyRatio)
			}
			if c.peakOK && (got.peak != c.want.peak || !within(got.spread, c.want.spread, 1e-12) || got.median != c.want.median) {
				t.Errorf("peak, spread, median: got %d, %g, %g want %d, %g, %g",
					got.peak, got.spread, got.median, c.want.peak, c.want.spread, c.want.median)
			}
		})
	}
}

// within reports whether got is within rel (relative) of want, or both 0.
func within(got, want, rel float64) bool {
	return got == want || math.Abs(got-want) <= rel*math.Abs(want)
}
