package main

import (
	"runtime/debug"
	"testing"
)

// The commands collect garbage at shortGCPercent unless the user set
// GOGC or GOMEMLIMIT; serve's setGCPercent(100) goes back to Go's
// default, under the same condition. The percent in force is read back from debug.SetGCPercent, which
// returns it.
func TestGCPercent(t *testing.T) {
	defer debug.SetGCPercent(debug.SetGCPercent(100))
	for _, c := range []struct {
		name, gogc, memlimit string
		want                 int
	}{
		{"nothing set", "", "", shortGCPercent},
		{"GOGC set", "150", "", 77},
		{"GOMEMLIMIT set", "", "1GiB", 77},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Setenv("GOGC", c.gogc)
			t.Setenv("GOMEMLIMIT", c.memlimit)
			debug.SetGCPercent(77) // what the runtime took from the environment, say
			setGCPercent(shortGCPercent)
			if got := debug.SetGCPercent(77); got != c.want {
				t.Errorf("after setGCPercent(%d): GOGC %d, want %d", shortGCPercent, got, c.want)
			}
			setGCPercent(100)
			want := 100
			if c.gogc != "" || c.memlimit != "" {
				want = 77
			}
			if got := debug.SetGCPercent(77); got != want {
				t.Errorf("after setGCPercent(100): GOGC %d, want %d", got, want)
			}
		})
	}
}
