package sqldb

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"errors"
	"fmt"
	"io"
	"math"
)

// eachRow runs the query (already rebound) on q and calls each with every
// row's values as the driver gives them (float64, int64, string, []byte,
// bool, time.Time or nil); vals is reused from row to row. On a *sql.Conn
// whose driver connection runs queries itself (driver.QueryerContext, as
// SQLite's does) it reads the driver's rows directly through Conn.Raw,
// without database/sql's per-value conversion, which costs about as much
// as reading the values out of SQLite; anywhere else through Rows.Scan.
// ncol is the number of columns the query returns.
func eachRow(ctx context.Context, q Querier, query string, args []any, ncol int, each func(vals []driver.Value) error) error {
	if c, ok := q.(*sql.Conn); ok {
		err := c.Raw(func(dc any) error { return driverRows(ctx, dc, query, args, ncol, each) })
		if !errors.Is(err, driver.ErrSkip) {
			return err
		}
	}
	rows, err := q.QueryContext(ctx, query, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	raw := make([]any, ncol)
	dest := make([]any, ncol)
	for i := range raw {
		dest[i] = &raw[i]
	}
	vals := make([]driver.Value, ncol)
	for rows.Next() {
		if err := rows.Scan(dest...); err != nil {
			return err
		}
		for i, v := range raw {
			vals[i] = v
		}
		if err := each(vals); err != nil {
			return err
		}
	}
	return rows.Err()
}

// driverRows is eachRow on a driver connection; driver.ErrSkip when the
// connection does not run queries itself.
func driverRows(ctx context.Context, dc any, query string, args []any, ncol int, each func(vals []driver.Value) error) error {
	qc, ok := dc.(driver.QueryerContext)
	if !ok {
		return driver.ErrSkip
	}
	nv := make([]driver.NamedValue, len(args))
	for i, a := range args {
		v, err := driver.DefaultParameterConverter.ConvertValue(a)
		if err != nil {
			return fmt.Errorf("argument %d: %w", i+1, err)
		}
		nv[i] = driver.NamedValue{Ordinal: i + 1, Value: v}
	}
	rows, err := qc.QueryContext(ctx, query, nv)
	if err != nil {
		return err
	}
	defer rows.Close()
	if n := len(rows.Columns()); n != ncol {
		return fmt.Errorf("query returned %d columns, want %d", n, ncol)
	}
	vals := make([]driver.Value, ncol)
	for {
		err := rows.Next(vals)
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return err
		}
		if err := each(vals); err != nil {
			return err
		}
	}
}

// eachNumberRow is eachRow for a query of numbers: through the dialect's
// NumberReader when it has one and q is a *sql.Conn, else through eachRow
// with every value turned into a Number (toNumber). The row is reused.
func eachNumberRow(ctx context.Context, d Dialect, q Querier, query string, args []any, ncol int, each func(row []Number) error) error {
	if nr, ok := d.(NumberReader); ok {
		if c, ok := q.(*sql.Conn); ok {
			err := c.Raw(func(dc any) error { return nr.EachNumberRow(ctx, dc, query, args, ncol, each) })
			if !errors.Is(err, driver.ErrSkip) {
				return err
			}
		}
	}
	row := make([]Number, ncol)
	return eachRow(ctx, q, query, args, ncol, func(vals []driver.Value) error {
		for i, v := range vals {
			n, err := toNumber(v)
			if err != nil {
				return fmt.Errorf("column %d: %w", i+1, err)
			}
			row[i] = n
		}
		return each(row)
	})
}

// toNumber turns a driver's value into a Number: nil, float64 and int64
// as they are, anything else (a number as text) through database/sql's
// conversions, as an integer when it reads as one.
func toNumber(v driver.Value) (Number, error) {
	switch x := v.(type) {
	case nil:
		return Number{}, nil
	case float64:
		return Number{Kind: KindFloat, Float: x}, nil
	case int64:
		return Number{Kind: KindInt, Int: x}, nil
	}
	var i sql.NullInt64
	if err := i.Scan(v); err == nil {
		return Number{Kind: KindInt, Int: i.Int64}, nil
	}
	var f sql.NullFloat64
	if err := f.Scan(v); err != nil {
		return Number{}, err
	}
	return Number{Kind: KindFloat, Float: f.Float64}, nil
}

// float returns n as a float64, NaN for NULL.
func (n Number) float() float64 {
	switch n.Kind {
	case KindFloat:
		return n.Float
	case KindInt:
		return float64(n.Int)
	}
	return math.NaN()
}

// integer returns n as an int64 and whether it is one (a float of an
// integral value within int64's range counts; NULL does not).
func (n Number) integer() (int64, bool) {
	switch n.Kind {
	case KindInt:
		return n.Int, true
	case KindFloat:
		if n.Float == math.Trunc(n.Float) && math.Abs(n.Float) < 1<<63 {
			return int64(n.Float), true
		}
	}
	return 0, false
}
