package kinetics

import (
	"fmt"
	"testing"
)

// BenchmarkFitIterations fits 50, 500 and 5,000 synthetic runs (both
// metrics, two-stage weights) and reports the Levenberg–Marquardt
// iterations and residual evaluations of one fit beside its time.
// Target (issue 18): at most 10 iterations.
func BenchmarkFitIterations(b *testing.B) {
	for _, n := range []int{50, 500, 5000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			obs := observations(b, synthRuns(n, 1, fitTruth), fitStart())
			var res *FitResult
			for b.Loop() {
				var err error
				if res, err = Fit(obs, fitStart(), FitSettings{}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(res.Iterations), "iterations")
			b.ReportMetric(float64(res.Evaluations), "evaluations")
		})
	}
}
