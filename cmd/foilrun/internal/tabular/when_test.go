package tabular

import (
	"math/rand/v2"
	"testing"
	"time"
)

// When gives what the standard library's time.Format with the layout
// "2006-01-02 15:04" gives in the local zone, on named times (the zero
// time, the ends of the four-digit years, a leap day, years outside 0 to
// 9999) and 20,000 random instants between the years 1 and 9999, in
// three zones.
func TestWhenIsFormat(t *testing.T) {
	defer func(l *time.Location) { time.Local = l }(time.Local)
	named := []time.Time{
		time.Date(2026, 3, 2, 9, 5, 0, 0, time.UTC),
		time.Date(2024, 2, 29, 23, 59, 59, 999, time.UTC),
		time.Date(0, 1, 1, 0, 0, 0, 0, time.UTC),
		time.Date(9999, 12, 31, 23, 59, 0, 0, time.UTC),
		time.Date(-5, 6, 1, 12, 0, 0, 0, time.UTC),
		time.Date(12345, 6, 1, 12, 0, 0, 0, time.UTC),
	}
	rng := rand.New(rand.NewPCG(3, 4))
	lo, hi := time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC).Unix(), time.Date(9999, 1, 1, 0, 0, 0, 0, time.UTC).Unix()
	for _, zone := range []*time.Location{time.UTC, time.FixedZone("UTC+05:45", 5*3600+45*60), time.FixedZone("UTC-03:30", -(3*3600 + 30*60))} {
		time.Local = zone
		if got := When(time.Time{}); got != "" {
			t.Errorf("zero time: got %q, want \"\"", got)
		}
		times := append([]time.Time(nil), named...)
		for range 20000 {
			times = append(times, time.Unix(lo+rng.Int64N(hi-lo), 0))
		}
		for _, tm := range times {
			if got, want := When(tm), tm.Local().Format("2006-01-02 15:04"); got != want {
				t.Fatalf("%s in %s: got %q, want %q (time.Format)", tm.UTC().Format(time.RFC3339), zone, got, want)
			}
		}
	}
}
