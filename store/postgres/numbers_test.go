package postgres

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"errors"
	"math"
	"testing"

	"github.com/foilrun/foilrun/store/sqldb"
)

// TestEachNumberRow: the numbers EachNumberRow decodes from the binary
// format are the ones pgx's own decoding gives through database/sql for
// the same query (the reference), for every type it reads, NULL and the
// extremes included, with a text argument typed by the server; a column
// of another type is driver.ErrSkip before any row is passed on.
func TestEachNumberRow(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	db, err := sql.Open("pgx", serverURL(t))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	const query = `SELECT v.a, v.b, v.c, v.d, v.e FROM (VALUES
		(1.5::float8, (-2)::int2, (2^62)::int8 + 1, 0.1::float4, (-2147483648)::int4),
		('-Infinity'::float8, 32767::int2, (-9223372036854775807)::int8 - 1, '-0'::float4, 7::int4),
		(NULL, NULL, NULL, NULL, NULL),
		(5e-324::float8, 0::int2, 0::int8, 3.4e38::float4, length($1::text)::int4)) AS v(a, b, c, d, e)`
	var want [][5]any
	rows, err := db.QueryContext(ctx, query, "seven")
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var r [5]any
		if err := rows.Scan(&r[0], &r[1], &r[2], &r[3], &r[4]); err != nil {
			t.Fatal(err)
		}
		want = append(want, r)
	}
	if err := rows.Close(); err != nil {
		t.Fatal(err)
	}
	conn, err := db.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	var got [][5]sqldb.Number
	err = conn.Raw(func(dc any) error {
		return dialect{}.EachNumberRow(ctx, dc, query, []any{"seven"}, 5, func(row []sqldb.Number) error {
			got = append(got, [5]sqldb.Number(row))
			return nil
		})
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(want) {
		t.Fatalf("%d rows, want %d", len(got), len(want))
	}
	for i := range want {
		for j, w := range want[i] {
			if !sameNumber(got[i][j], w) {
				t.Errorf("row %d column %d: got %+v, want %v (%T)", i+1, j+1, got[i][j], w, w)
			}
		}
	}
	called := false
	err = conn.Raw(func(dc any) error {
		return dialect{}.EachNumberRow(ctx, dc, `SELECT 1.5::float8, 'x'::text`, nil, 2, func([]sqldb.Number) error {
			called = true
			return nil
		})
	})
	if !errors.Is(err, driver.ErrSkip) || called {
		t.Errorf("a text column: got %v with a row passed on: %v, want driver.ErrSkip and none", err, called)
	}
}

// sameNumber reports whether n is v as database/sql gave it: nil for
// NULL, a float64 (float4 widened as pgx widens it, the sign of zero
// kept) or an int64.
func sameNumber(n sqldb.Number, v any) bool {
	switch x := v.(type) {
	case nil:
		return n.Kind == sqldb.KindNull
	case float64:
		return n.Kind == sqldb.KindFloat && math.Float64bits(n.Float) == math.Float64bits(x)
	case float32:
		return n.Kind == sqldb.KindFloat && math.Float64bits(n.Float) == math.Float64bits(float64(x))
	case int64:
		return n.Kind == sqldb.KindInt && n.Int == x
	}
	return false
}
