package store

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"
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
	c, n, ok := ParseCode("G26-0042")
	if !ok || c != "run-2026" || n != 42 {
		t.Errorf("ParseCode(G26-0042) = %q %d %v", c, n, ok)
	}
	for _, bad := range []string{"G26-", "X26-0001", "G2a-0001", "G26-00-1", "G26+0001"} {
		if _, _, ok := ParseCode(bad); ok {
			t.Errorf("ParseCode(%q) ok, want not", bad)
		}
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
