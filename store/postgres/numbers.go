package postgres

import (
	"context"
	"database/sql/driver"
	"encoding/binary"
	"fmt"
	"math"
	"strconv"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/stdlib"

	"github.com/foilrun/foilrun/store/sqldb"
)

// Type OIDs of the numbers EachNumberRow reads (PostgreSQL's
// src/include/catalog/pg_type.dat) and their sizes in the binary format
// (the send functions of src/backend/utils/adt: float8send, int8send, …,
// big-endian).
const (
	oidInt8   = 20
	oidInt2   = 21
	oidInt4   = 23
	oidFloat4 = 700
	oidFloat8 = 701
)

// EachNumberRow reads the rows of a query of numbers from the pgx
// connection under dc (see sqldb.NumberReader): one extended-protocol
// round of the query with the results in binary, each value decoded from
// its bytes with no allocation. Arguments go as text, their types
// inferred by the server, as database/sql's would be; an argument of
// another kind, or a column not of type bigint, integer, smallint, real
// or double precision, is driver.ErrSkip before any row is passed on.
func (dialect) EachNumberRow(ctx context.Context, dc any, query string, args []any, ncol int, each func(row []sqldb.Number) error) error {
	c, ok := dc.(*stdlib.Conn)
	if !ok {
		return driver.ErrSkip
	}
	params := make([][]byte, len(args))
	for i, a := range args {
		switch v := a.(type) {
		case string:
			params[i] = []byte(v)
		case int:
			params[i] = strconv.AppendInt(nil, int64(v), 10)
		case int64:
			params[i] = strconv.AppendInt(nil, v, 10)
		case float64:
			params[i] = strconv.AppendFloat(nil, v, 'g', -1, 64)
		default:
			return driver.ErrSkip
		}
	}
	formats := make([]int16, ncol)
	for i := range formats {
		formats[i] = pgx.BinaryFormatCode
	}
	rr := c.Conn().PgConn().ExecParams(ctx, query, params, nil, nil, formats)
	fields := rr.FieldDescriptions()
	if len(fields) != ncol {
		_, err := rr.Close()
		if err != nil {
			return err
		}
		return fmt.Errorf("query returned %d columns, want %d", len(fields), ncol)
	}
	for _, f := range fields {
		switch f.DataTypeOID {
		case oidInt8, oidInt2, oidInt4, oidFloat4, oidFloat8:
		default:
			if _, err := rr.Close(); err != nil {
				return err
			}
			return driver.ErrSkip
		}
	}
	row := make([]sqldb.Number, ncol)
	for rr.NextRow() {
		vals := rr.Values()
		for i, b := range vals {
			n, err := binaryNumber(fields[i].DataTypeOID, b)
			if err != nil {
				rr.Close()
				return fmt.Errorf("column %s: %w", fields[i].Name, err)
			}
			row[i] = n
		}
		if err := each(row); err != nil {
			rr.Close()
			return err
		}
	}
	_, err := rr.Close()
	return err
}

// binaryNumber decodes one value of the binary format; nil is NULL.
func binaryNumber(oid uint32, b []byte) (sqldb.Number, error) {
	if b == nil {
		return sqldb.Number{}, nil
	}
	want := 8
	switch oid {
	case oidInt2:
		want = 2
	case oidInt4, oidFloat4:
		want = 4
	}
	if len(b) != want {
		return sqldb.Number{}, fmt.Errorf("%d bytes for a value of type %d, want %d", len(b), oid, want)
	}
	switch oid {
	case oidFloat8:
		return sqldb.Number{Kind: sqldb.KindFloat, Float: math.Float64frombits(binary.BigEndian.Uint64(b))}, nil
	case oidFloat4:
		return sqldb.Number{Kind: sqldb.KindFloat, Float: float64(math.Float32frombits(binary.BigEndian.Uint32(b)))}, nil
	case oidInt8:
		return sqldb.Number{Kind: sqldb.KindInt, Int: int64(binary.BigEndian.Uint64(b))}, nil
	case oidInt4:
		return sqldb.Number{Kind: sqldb.KindInt, Int: int64(int32(binary.BigEndian.Uint32(b)))}, nil
	default: // oidInt2
		return sqldb.Number{Kind: sqldb.KindInt, Int: int64(int16(binary.BigEndian.Uint16(b)))}, nil
	}
}
