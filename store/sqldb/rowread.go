package sqldb

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"errors"
	"fmt"
	"io"
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
