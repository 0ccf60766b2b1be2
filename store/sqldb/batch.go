package sqldb

import (
	"context"
	"database/sql"
	"strings"
)

// batch collects rows for one table and writes them with multi-row
// INSERT statements inside a transaction, so a bulk write costs one
// statement per many rows. Prepared statements are kept per row count.
type batch struct {
	tx     *sql.Tx
	d      Dialect
	head   string // INSERT INTO t (a, b) VALUES
	tail   string // ON CONFLICT … or ""
	ncol   int
	max    int // rows per statement
	args   []any
	rows   int
	stmts  map[int]*sql.Stmt
	closed bool
}

func newBatch(tx *sql.Tx, d Dialect, table string, cols []string, tail string) *batch {
	m := d.MaxArgs() / len(cols)
	m = min(max(m, 1), 200)
	return &batch{tx: tx, d: d, head: "INSERT INTO " + table + " (" + strings.Join(cols, ", ") + ") VALUES ",
		tail: tail, ncol: len(cols), max: m, stmts: map[int]*sql.Stmt{}}
}

// add queues one row (len(vals) must be the column count).
func (b *batch) add(ctx context.Context, vals ...any) error {
	if len(vals) != b.ncol {
		panic("sqldb: batch row of the wrong width")
	}
	b.args = append(b.args, vals...)
	b.rows++
	if b.rows == b.max {
		return b.flush(ctx)
	}
	return nil
}

// flush writes the queued rows.
func (b *batch) flush(ctx context.Context) error {
	if b.rows == 0 {
		return nil
	}
	st, ok := b.stmts[b.rows]
	if !ok {
		var q strings.Builder
		q.WriteString(b.head)
		row := "(" + strings.TrimSuffix(strings.Repeat("?, ", b.ncol), ", ") + ")"
		for i := 0; i < b.rows; i++ {
			if i > 0 {
				q.WriteString(", ")
			}
			q.WriteString(row)
		}
		if b.tail != "" {
			q.WriteString(" " + b.tail)
		}
		var err error
		if st, err = b.tx.PrepareContext(ctx, b.d.Rebind(q.String())); err != nil {
			return err
		}
		b.stmts[b.rows] = st
	}
	_, err := st.ExecContext(ctx, b.args...)
	b.args, b.rows = b.args[:0], 0
	return err
}

func (b *batch) close() {
	for _, st := range b.stmts {
		st.Close()
	}
}
