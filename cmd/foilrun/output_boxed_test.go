package main

import (
	"bytes"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
)

// boxedSame draws t with tabular.Boxed and with tablewriter (writeBoxed)
// and fails unless Boxed either declines or draws the same bytes.
func boxedSame(t *testing.T, tb table) (drawn bool) {
	t.Helper()
	var fast, slow bytes.Buffer
	ok, err := tabular.Boxed(&fast, tb.Header, tb.Rows, tb.Numeric)
	if err != nil {
		t.Fatal(err)
	}
	if !ok {
		if fast.Len() > 0 {
			t.Fatalf("Boxed declined the table but wrote %q", fast.String())
		}
		return false
	}
	if err := writeBoxed(&slow, tb); err != nil {
		t.Fatal(err)
	}
	if fast.String() != slow.String() {
		t.Fatalf("table %q (numeric %v):\ngot\n%s\nwant (tablewriter)\n%s", append([][]string{tb.Header}, tb.Rows...), tb.Numeric, fast.String(), slow.String())
	}
	return true
}

// TestBoxedSameAsTablewriter: the plain table writer draws byte for byte
// what tablewriter draws, on named cases and on 300 random tables of
// plain cells, and declines every table it cannot draw.
func TestBoxedSameAsTablewriter(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		tb    table
		drawn bool
	}{
		{"header only", table{Header: []string{"a", "bb"}, Numeric: []bool{false, true}}, true},
		{"numbers right", table{Header: []string{"step", "T C"}, Rows: [][]string{{"1 anneal", "1000"}, {"2 grow", "980"}}, Numeric: []bool{false, true}}, true},
		{"empty cells and inner spaces", table{Header: []string{"a b", "c"}, Rows: [][]string{{"", "x  y"}, {"-", ""}}}, true},
		{"run list", benchTable(3), true},
		{"line break", table{Header: []string{"a"}, Rows: [][]string{{"x\ny"}}}, false},
		{"not ASCII", table{Header: []string{"range"}, Rows: [][]string{{"950 – 970"}}}, false},
		{"space at an end", table{Header: []string{"a"}, Rows: [][]string{{" x"}}}, false},
		{"ragged", table{Header: []string{"a", "b"}, Rows: [][]string{{"x"}}}, false},
		{"empty header cell", table{Header: []string{"", "b"}, Rows: [][]string{{"x", "y"}}}, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := boxedSame(t, tt.tb); got != tt.drawn {
				t.Errorf("drawn by Boxed: got %v, want %v", got, tt.drawn)
			}
		})
	}
	t.Run("random", func(t *testing.T) {
		rng := rand.New(rand.NewPCG(19, 18))
		const alphabet = "abcXYZ019 .-_:%|+"
		cell := func(min int) string {
			n := min + rng.IntN(9)
			var b strings.Builder
			for range n {
				b.WriteByte(alphabet[rng.IntN(len(alphabet))])
			}
			return strings.Trim(b.String(), " ")
		}
		drawn := 0
		for range 300 {
			cols := 1 + rng.IntN(5)
			tb := table{}
			for range cols {
				tb.Header = append(tb.Header, cell(1))
				tb.Numeric = append(tb.Numeric, rng.IntN(2) == 0)
			}
			for range rng.IntN(6) {
				row := make([]string, cols)
				for j := range row {
					row[j] = cell(0)
				}
				tb.add(row...)
			}
			if boxedSame(t, tb) {
				drawn++
			}
		}
		if drawn < 200 {
			t.Errorf("Boxed drew %d of 300 random plain tables, want most (an empty header cell is the only reason to decline)", drawn)
		}
	})
}

// FuzzBoxed: on any cells Boxed never panics, and what it draws is what
// tablewriter draws.
func FuzzBoxed(f *testing.F) {
	f.Add("code", "status", "G26-0001", "done", true)
	f.Add("a b", "c", "", "x  y", false)
	f.Add("é", "x", "\t", "y", true)
	f.Fuzz(func(t *testing.T, h1, h2, c1, c2 string, right bool) {
		boxedSame(t, table{Header: []string{h1, h2}, Rows: [][]string{{c1, c2}, {c2, c1}}, Numeric: []bool{right, !right}})
	})
}
