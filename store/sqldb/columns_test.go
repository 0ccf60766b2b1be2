package sqldb

import (
	"cmp"
	"context"
	"database/sql"
	"math"
	"slices"
	"testing"

	_ "github.com/mattn/go-sqlite3"
)

// TestReadColumnsRunOrder: readColumns puts rows that arrive out of run
// order into it, every column moved with its run (NULL read as NaN, the
// twin mask as an integer), on a *sql.DB (database/sql's scan) and on a
// *sql.Conn (the driver's rows read directly).
func TestReadColumnsRunOrder(t *testing.T) {
	ctx := context.Background()
	db, err := sql.Open("sqlite3", ":memory:")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	conn, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	const query = `SELECT column1, column2, column3, column4, column5 FROM (VALUES
		(30, 0.3, 0, 300.0, 3.0),
		(10, 0.1, 4611686018427387905, 100.0, NULL),
		(20, NULL, 0, NULL, 2.0))`
	nan := math.NaN()
	wantM := []float64{0.1, nan, 0.3}
	wantMask := []uint64{1<<62 + 1, 0, 0}
	wantX := [][]float64{{100, nan, 300}, {nan, 2, 3}}
	same := func(a, b []float64) bool {
		return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
	}
	// Without twins the query has no mask column and the masks are nil.
	unmasked := `SELECT column1, column2, column4, column5 FROM (` + query[len("SELECT column1, column2, column3, column4, column5 FROM ("):]
	for name, q := range map[string]Querier{"db": db, "conn": conn} {
		ms, xs, masks, err := readColumns(ctx, nil, q, query, nil, 2, 3, true)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !same(ms, wantM) || !slices.Equal(masks, wantMask) || len(xs) != 2 || !same(xs[0], wantX[0]) || !same(xs[1], wantX[1]) {
			t.Errorf("%s: got metric %v, masks %v, values %v; want %v, %v, %v", name, ms, masks, xs, wantM, wantMask, wantX)
		}
		ms, xs, masks, err = readColumns(ctx, nil, q, unmasked, nil, 2, 3, false)
		if err != nil {
			t.Fatalf("%s, no mask: %v", name, err)
		}
		if !same(ms, wantM) || masks != nil || len(xs) != 2 || !same(xs[0], wantX[0]) || !same(xs[1], wantX[1]) {
			t.Errorf("%s, no mask: got metric %v, masks %v, values %v; want %v, nil, %v", name, ms, masks, xs, wantM, wantX)
		}
	}
}

// TestRunOrder: the indices of the ids in increasing order, by slots for
// ids close together and by sorting for ids far apart, each checked
// against slices.SortStableFunc on the same ids (the reference).
func TestRunOrder(t *testing.T) {
	tests := []struct {
		name string
		ids  []int64
	}{
		{"in order", []int64{1, 2, 3, 4}},
		{"dense, shuffled", []int64{4, 1, 3, 2, 5}},
		{"gaps within four times", []int64{11, 3, 7, 1}},
		{"far apart", []int64{1 << 40, 5, 1 << 20, -3}},
		{"one", []int64{42}},
		{"repeated ids", []int64{3, 1, 3, 2}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			want := make([]int, len(tc.ids))
			for i := range want {
				want[i] = i
			}
			slices.SortStableFunc(want, func(a, b int) int { return cmp.Compare(tc.ids[a], tc.ids[b]) })
			if got := runOrder(tc.ids); !slices.Equal(got, want) {
				t.Errorf("runOrder(%v) = %v, want %v", tc.ids, got, want)
			}
		})
	}
}
