package main

import (
	"fmt"
	"strings"
	"testing"
)

// FuzzParseRect: parseRect (the --bare-region flag) never panics; what it
// accepts is a non-empty rectangle with non-negative, ordered corners,
// and that rectangle written back as "x0,y0,x1,y1" parses to itself.
func FuzzParseRect(f *testing.F) {
	for _, s := range []string{"10,20,110,220", " 0, 0, 1, 1 ", "5,5,1,1", "0,0,0,10", "1,2,3", "1,2,3,4,5", "-1,0,4,4",
		"a,b,c,d", "+3,+4,9,9", "0,0,9223372036854775807,1", "0,0,99999999999999999999,1", ",,,", "1,,2,3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		r, err := parseRect(s)
		if err != nil {
			if !strings.Contains(err.Error(), fmt.Sprintf("%q", s)) {
				t.Fatalf("parseRect(%q): error %q does not quote the value", s, err)
			}
			return
		}
		if r.Empty() || r.Min.X < 0 || r.Min.Y < 0 || r.Min.X >= r.Max.X || r.Min.Y >= r.Max.Y {
			t.Fatalf("parseRect(%q) = %v: want a non-empty rectangle with non-negative ordered corners", s, r)
		}
		text := fmt.Sprintf("%d,%d,%d,%d", r.Min.X, r.Min.Y, r.Max.X, r.Max.Y)
		back, err := parseRect(text)
		if err != nil || back != r {
			t.Fatalf("parseRect(%q) = %v; written back as %q it parses to %v, %v", s, r, text, back, err)
		}
	})
}

// TestParseRect pins the flag's readings and messages.
func TestParseRect(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, in, want, err string
	}{
		{"corners", "10,20,110,220", "(10,20)-(110,220)", ""},
		{"spaces", " 0, 0, 1, 1 ", "(0,0)-(1,1)", ""},
		{"corners swapped are ordered", "5,5,1,1", "(1,1)-(5,5)", ""},
		{"three numbers", "1,2,3", "", `"1,2,3": want x0,y0,x1,y1`},
		{"negative", "-1,0,4,4", "", `"-1" is not a pixel coordinate`},
		{"empty", "0,0,0,10", "", `"0,0,0,10" is an empty rectangle`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r, err := parseRect(tt.in)
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) {
					t.Errorf("parseRect(%q): got %v, %v; want error containing %q", tt.in, r, err, tt.err)
				}
				return
			}
			if err != nil || r.String() != tt.want {
				t.Errorf("parseRect(%q): got %v, %v; want %s", tt.in, r, err, tt.want)
			}
		})
	}
}
