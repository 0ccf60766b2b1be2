package store

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// TestSpearmanScipy compares Spearman and Quantile with values computed by
// scipy.stats.spearmanr and numpy.quantile: testdata/store/spearman/make.py
// (run with Debian's /usr/bin/python3, scipy 1.10.1, numpy 1.24.2) wrote
// values.json. Tolerance 1e-12 (both are exact formulas in float64).
func TestSpearmanScipy(t *testing.T) {
	b, err := os.ReadFile("../testdata/store/spearman/values.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Cases []struct {
			Name          string
			X, Y          []float64
			Rho, Q25, Q75 float64
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) == 0 {
		t.Fatal("no cases")
	}
	for _, c := range ref.Cases {
		if got := Spearman(c.X, c.Y); math.Abs(got-c.Rho) > 1e-12 {
			t.Errorf("%s: Spearman = %.15g, want %.15g (scipy)", c.Name, got, c.Rho)
		}
		if got := Quantile(c.Y, 0.25); math.Abs(got-c.Q25) > 1e-12 {
			t.Errorf("%s: Quantile(0.25) = %.15g, want %.15g (numpy)", c.Name, got, c.Q25)
		}
		if got := Quantile(c.Y, 0.75); math.Abs(got-c.Q75) > 1e-12 {
			t.Errorf("%s: Quantile(0.75) = %.15g, want %.15g (numpy)", c.Name, got, c.Q75)
		}
	}
}

// TestBest: ten runs over T = 0..9 in 2 bins; bin edges and statistics
// counted by hand.
func TestBest(t *testing.T) {
	var s []Sample
	for i := 0; i < 10; i++ {
		s = append(s, Sample{Metric: float64(i) / 10, Params: []float64{float64(i)}})
	}
	s = append(s, Sample{Metric: 1, Params: []float64{math.NaN()}})
	tb := Best(s, "coverage", []string{"T"}, 2, Goal{Min: 0.4, Max: None()})
	if tb.Runs != 10 || tb.Missing != 1 || len(tb.Bins) != 2 {
		t.Fatalf("got %+v", tb)
	}
	lo, hi := tb.Bins[0], tb.Bins[1]
	// bins [0, 4.5) and [4.5, 9]: runs 0-4 and 5-9
	if lo.Count != 5 || lo.Hi[0] != 4.5 || math.Abs(lo.Mean-0.2) > 1e-12 || lo.Meeting != 1 || lo.Share != 0.2 ||
		hi.Count != 5 || hi.Hi[0] != 9 || hi.Min != 0.5 || hi.Max != 0.9 || hi.Share != 1 {
		t.Errorf("bins %+v %+v", lo, hi)
	}
}

func TestCodes(t *testing.T) {
	good := []struct {
		name, code, counter string
		n                   int64
	}{
		{"default prefix", "G26-0042", "run-2026", 42},
		{"one letter", "X26-0001", "run-X-2026", 1},
		{"prefix ending in a digit", "T225-0007", "run-T2-2025", 7},
		{"long prefix", "LABAB12-123456", "run-LABAB-2012", 123456},
	}
	for _, tt := range good {
		t.Run(tt.name, func(t *testing.T) {
			c, n, ok := ParseCode(tt.code)
			if !ok || c != tt.counter || n != tt.n {
				t.Errorf("ParseCode(%q): got %q %d %v, want %q %d true", tt.code, c, n, ok, tt.counter, tt.n)
			}
			prefix, year, ok := ParseCounterName(c)
			if again := FormatCode(prefix, time.Date(year, 3, 1, 0, 0, 0, 0, time.UTC), n); !ok || again != tt.code {
				t.Errorf("counter %q back to a code: got %q (ok %v), want %q", c, again, ok, tt.code)
			}
		})
	}
	for _, bad := range []string{"G26-", "x26-0001", "2X26-0001", "ABCDEFGHI26-0001", "G2a-0001", "G26-00-1", "G26+0001", "G26-9223372036854775807", "G26-1000000", "G26-00042", "G26-0000"} {
		if _, _, ok := ParseCode(bad); ok {
			t.Errorf("ParseCode(%q) ok, want not", bad)
		}
	}
}

// FuzzParseCode: ParseCode never panics, and a code it reads is one
// ValidateCode accepts and that its counter and number write back to,
// byte for byte.
func FuzzParseCode(f *testing.F) {
	for _, s := range []string{"G26-0001", "T225-0042", "LAB-7", "X26-999999", "G26-00042", "26-0001", "-", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, code string) {
		c, n, ok := ParseCode(code)
		if !ok {
			return
		}
		if err := ValidateCode(code); err != nil {
			t.Errorf("ParseCode(%q) ok but ValidateCode: %v", code, err)
		}
		prefix, year, ok := ParseCounterName(c)
		if !ok {
			t.Fatalf("ParseCode(%q): counter %q does not read back", code, c)
		}
		if again := FormatCode(prefix, time.Date(year, 6, 1, 0, 0, 0, 0, time.UTC), n); again != code {
			t.Errorf("ParseCode(%q) → %q %d → FormatCode %q, want the code back", code, c, n, again)
		}
	})
}

// TestCodePrefix: prefixes from a site file, and the codes they give.
func TestCodePrefix(t *testing.T) {
	start := time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC)
	tests := []struct{ name, prefix, code, problem string }{
		{"site sets nothing", "", "G25-0012", ""},
		{"two characters", "T2", "T225-0012", ""},
		{"eight characters", "ABCDEFGH", "ABCDEFGH25-0012", ""},
		{"lower case", "t2", "", "capital letters"},
		{"starts with a digit", "2T", "", "starting with a letter"},
		{"dash", "T-2", "", "capital letters"},
		{"nine characters", "ABCDEFGHI", "", "want 1 to 8 characters"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if tt.prefix != "" {
				if got := recipe.CodePrefixProblem(tt.prefix); tt.problem == "" && got != "" || !strings.Contains(got, tt.problem) {
					t.Fatalf("recipe.CodePrefixProblem(%q): got %q, want %q", tt.prefix, got, tt.problem)
				}
			}
			if tt.problem != "" {
				return
			}
			if got := FormatCode(tt.prefix, start, 12); got != tt.code {
				t.Errorf("FormatCode(%q, 2025, 12): got %q, want %q", tt.prefix, got, tt.code)
			}
			if err := ValidateCode(tt.code); err != nil {
				t.Errorf("ValidateCode(%q): got %v, want nil", tt.code, err)
			}
		})
	}
}

// TestValidateCode: the code pattern, and for codes of our shape a
// four-to-six-digit number from 1 to 999999 written without extra zeros.
func TestValidateCode(t *testing.T) {
	tests := []struct{ name, code, err string }{
		{"ours", "G26-0001", ""},
		{"six digits", "G26-999999", ""},
		{"another lab's", "LAB-7", ""},
		{"dots and underscores", "cvd_2024.17", ""},
		{"largest int64", "G26-9223372036854775807", `has 19 digits, want 4 to 6 (at most 999999)`},
		{"seven digits", "G26-1000000", "has 7 digits"},
		{"two digits", "G26-12", "has 2 digits"},
		{"zero", "G26-0000", "numbered from 1"},
		{"extra zeros", "G26-00042", "write it 0042"},
		{"prefixed", "T226-0001", ""},
		{"prefixed, two digits", "T226-12", "has 2 digits"},
		{"empty", "", "want 1 to 32 characters"},
		{"too long", strings.Repeat("A", 33), "want 1 to 32 characters"},
		{"right-to-left override", "G26-0001‮", "character U+202E at byte 9"},
		{"escape", "G26[31m", "character U+001B at byte 4"},
		{"space", "G26 0001", "character U+0020"},
		{"leading dash", "-G26", "character U+002D at byte 1"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := ValidateCode(tt.code)
			if tt.err == "" && err != nil || tt.err != "" && (!errors.Is(err, ErrInvalid) || !strings.Contains(err.Error(), tt.err)) {
				t.Errorf("ValidateCode(%q): got %v, want %q", tt.code, err, tt.err)
			}
		})
	}
}

// TestParseCounter: a stored counter is a whole number from 0 to 999999;
// what a float overflow, a huge bigint or text leaves is an error.
func TestParseCounter(t *testing.T) {
	tests := []struct {
		name, in string
		want     int64
		ok       bool
	}{
		{"zero", "0", 0, true},
		{"some", "42", 42, true},
		{"largest", "999999", 999999, true},
		{"one more", "1000000", 0, false},
		{"largest bigint", "9223372036854775807", 0, false},
		{"past int64", "9223372036854775808", 0, false},
		{"float from SQLite's overflow", "9.22337203685478e+18", 0, false},
		{"negative", "-1", 0, false},
		{"text", "abc", 0, false},
		{"empty", "", 0, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := ParseCounter(tt.in)
			if (err == nil) != tt.ok || got != tt.want {
				t.Errorf("ParseCounter(%q): got %d, %v; want %d, ok %v", tt.in, got, err, tt.want, tt.ok)
			}
		})
	}
}

func TestReadCSVErrors(t *testing.T) {
	tests := []struct{ name, in, err string }{
		{"empty", "", "the file is empty"},
		{"bad header", "code,Bad Column\n", `line 1 col 2: column "Bad Column"`},
		{"bad number", "code,growth_temperature_c\nG26-0001,hot\n", `line 2 col 2 (growth_temperature_c): "hot" is not a finite number`},
		{"wrong unit", "code,domain_size [ohm]\nG26-0001,3\n", `line 2 col 2 (domain_size [ohm]): outcome "domain_size=3 ohm": domain_size is in um`},
		{"bad status", "code,status\nG26-0001,finished\n", `status "finished"`},
		{"short row", "code,status\nG26-0001\n", "wrong number of fields"},
		{"repeat", "code,lot,lot\n", "repeats column 2"},
		{"temperature below 0 K", "code,growth_temperature_c\nG26-0001,-99999\n", `line 2 col 2 (growth_temperature_c): -99999 is out of range: want above -273.15`},
		{"negative flow", "code,ch4_flow_sccm\nG26-0001,-1\n", `line 2 col 2 (ch4_flow_sccm): -1 is out of range: want 0 to`},
		{"duration over 7 days", "code,growth_time_min\nG26-0001,20000\n", `20000 is out of range: want 0 to 10080 (min, up to 7 days)`},
		{"huge free metric", "code,peak_shift [cm-1]\nG26-0001,1e308\n", `peak_shift 1e+308 is not a finite number within ±1e+15`},
	}
	for _, tt := range tests {
		_, err := ReadCSV(strings.NewReader(tt.in))
		if err == nil || !strings.Contains(err.Error(), tt.err) {
			t.Errorf("%s: got %v, want error containing %q", tt.name, err, tt.err)
		}
	}
}

// FuzzReadCSV: never panics; what reads is well formed (finite numbers,
// valid statuses).
func FuzzReadCSV(f *testing.F) {
	f.Add("code,status,growth_temperature_c,coverage [1]\nG26-0001,done,1000,0.9\n")
	f.Add("code,started\nG26-0002,2026-03-01T09:00:00Z\n")
	f.Add("lot,peak [cm-1]\n\"a,b\",3\n")
	f.Fuzz(func(t *testing.T, in string) {
		b, err := ReadCSV(strings.NewReader(in))
		if err != nil {
			if !errors.Is(err, ErrInvalid) {
				t.Fatalf("error %v does not wrap ErrInvalid", err)
			}
			return
		}
		for _, r := range b.Runs {
			if !r.Status.Valid() {
				t.Fatalf("status %q", r.Status)
			}
			for k, v := range r.Params {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("param %s = %g", k, v)
				}
			}
		}
	})
}

func FuzzReadJSON(f *testing.F) {
	f.Add(`{"format":"foilrun-runs","version":1,"runs":[],"snapshots":[]}`)
	f.Fuzz(func(t *testing.T, in string) {
		b, err := ReadJSON(bytes.NewReader([]byte(in)))
		if err != nil {
			return
		}
		for _, s := range b.Snapshots {
			if s.Verify() != nil {
				t.Fatal("unverified snapshot accepted")
			}
		}
	})
}
