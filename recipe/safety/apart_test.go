package safety

import "testing"

// pctApart prints a value and its threshold so the side shows. Cases by
// hand: 19.496 % against 19.5 % (the oxygen case), 20.84 % against
// a site level of 20.85 % (not rounded to 20.9 %), 25.4 % against 25 %,
// 25.00001 % against 25 %, and a value equal to its threshold.
func TestPctApart(t *testing.T) {
	cases := []struct {
		name      string
		x, limit  float64
		got, want string
	}{
		{"just below 19.5", 0.19496, 0.195, "19.496 %", "19.5 %"},
		{"site level kept", 0.2084, 0.2085, "20.84 %", "20.85 %"},
		{"far enough", 0.254, 0.25, "25.4 %", "25 %"},
		{"very close", 0.2500001, 0.25, "25.00001 %", "25 %"},
		{"equal", 0.25, 0.25, "25 %", "25 %"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			a, b := pctApart(c.x, c.limit)
			if a != c.got || b != c.want {
				t.Errorf("pctApart(%g, %g) = %q, %q; want %q, %q", c.x, c.limit, a, b, c.got, c.want)
			}
		})
	}
}
