package sqldb

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"sort"
	"strings"
	"time"

	"github.com/foilrun/foilrun/store"
)

// Run-code counters. A counter row holds the last sequence number given
// out in a year (see store's run codes). It is read as text and parsed
// with range checks (store.ParseCounter), never scanned straight into an
// integer, and only ever written with a value from 0 to
// store.MaxCodeNumber, so no arithmetic on it can overflow (a float left
// by SQLite's integer overflow, "bigint out of range" on PostgreSQL). A
// counter that holds something else was changed outside foilrun: `db
// check` reports it, and the next write that needs it rebuilds it from
// the codes logged that year, which are the truth it stands for.

// counter locks the counter row (inserting it at 0 when missing) in the
// writer's transaction and returns its value. The no-op upsert takes the
// row lock on PostgreSQL, so concurrent loggers wait here; SQLite's
// BEGIN IMMEDIATE has already locked the database. A value out of range
// is replaced by the highest number logged under the counter.
func (w *writer) counter(ctx context.Context, name string) (int64, error) {
	_, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`INSERT INTO counters (name, value) VALUES (?, 0)
		ON CONFLICT (name) DO UPDATE SET value = counters.value`), name)
	if err != nil {
		return 0, fmt.Errorf("run code counter %s: %w", name, err)
	}
	var stored sql.NullString
	err = w.tx.QueryRowContext(ctx, w.s.d.Rebind(`SELECT CAST(value AS TEXT) FROM counters WHERE name = ?`), name).Scan(&stored)
	if err != nil {
		return 0, fmt.Errorf("run code counter %s: %w", name, err)
	}
	if n, err := store.ParseCounter(stored.String); err == nil {
		return n, nil
	}
	return w.highestLogged(ctx, name)
}

// counterCode returns the prefix and year of a counter's name (run-2026,
// run-T2-2026).
func counterCode(name string) (string, int, error) {
	prefix, year, ok := store.ParseCounterName(name)
	if !ok {
		return "", 0, fmt.Errorf("run code counter %q: want a name such as run-2026 or run-T2-2026", name)
	}
	return prefix, year, nil
}

// codeTaken reports whether the code numbered n under the counter is logged.
func (w *writer) codeTaken(ctx context.Context, name string, n int64) (bool, error) {
	prefix, year, err := counterCode(name)
	if err != nil {
		return false, err
	}
	var one int
	err = w.tx.QueryRowContext(ctx, w.s.d.Rebind(`SELECT 1 FROM runs WHERE code = ?`), store.FormatCode(prefix, time.Date(year, 6, 1, 0, 0, 0, 0, time.UTC), n)).Scan(&one)
	if errors.Is(err, sql.ErrNoRows) {
		return false, nil
	}
	return err == nil, err
}

// highestLogged returns the highest sequence number among the codes
// logged under the counter (0 for none).
func (w *writer) highestLogged(ctx context.Context, name string) (int64, error) {
	prefix, year, err := counterCode(name)
	if err != nil {
		return 0, err
	}
	rows, err := w.tx.QueryContext(ctx, w.s.d.Rebind(`SELECT code FROM runs WHERE code LIKE ?`), fmt.Sprintf("%s%02d-%%", prefix, year%100))
	if err != nil {
		return 0, fmt.Errorf("run code counter %s: %w", name, err)
	}
	defer rows.Close()
	var top int64
	for rows.Next() {
		var code string
		if err := rows.Scan(&code); err != nil {
			return 0, err
		}
		if c, n, ok := store.ParseCode(code); ok && c == name && n > top {
			top = n
		}
	}
	return top, rows.Err()
}

func (w *writer) setCounter(ctx context.Context, name string, v int64) error {
	_, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`UPDATE counters SET value = ? WHERE name = ?`), v, name)
	if err != nil {
		return fmt.Errorf("run code counter %s: %w", name, err)
	}
	return nil
}

// reserveCodes takes the next k numbers of the counter, in the writer's
// transaction, and returns the first.
func (w *writer) reserveCodes(ctx context.Context, name string, k int) (int64, error) {
	cur, err := w.counter(ctx, name)
	if err != nil {
		return 0, err
	}
	// a counter behind the codes logged (its row deleted, set back by
	// hand) would hand out a code already used: move it past them
	if taken, err := w.codeTaken(ctx, name, cur+1); err != nil {
		return 0, err
	} else if taken {
		if cur, err = w.highestLogged(ctx, name); err != nil {
			return 0, err
		}
	}
	if cur+int64(k) > store.MaxCodeNumber {
		return 0, fmt.Errorf("next run code: counter %s is at %d and %d more runs would pass %d, the most a code holds: %w",
			name, cur, k, store.MaxCodeNumber, store.ErrConflict)
	}
	if err := w.setCounter(ctx, name, cur+int64(k)); err != nil {
		return 0, err
	}
	return cur + 1, nil
}

// raiseCounter makes sure a counter is at least n (imported and copied
// codes move it on); n is at most store.MaxCodeNumber.
func (w *writer) raiseCounter(ctx context.Context, name string, n int64) error {
	cur, err := w.counter(ctx, name)
	if err != nil || cur >= n {
		return err
	}
	return w.setCounter(ctx, name, n)
}

// checkCodes reports counters that hold no number in range, counters
// behind the codes logged under them, and logged codes that do not match
// the code pattern (store.ValidateCode).
func checkCodes(ctx context.Context, q Querier) ([]string, error) {
	var probs []string
	counters := map[string]int64{}
	rows, err := q.QueryContext(ctx, `SELECT name, CAST(value AS TEXT) FROM counters ORDER BY name`)
	if err != nil {
		return nil, fmt.Errorf("check counters: %w", err)
	}
	for rows.Next() {
		var name string
		var stored sql.NullString
		if err := rows.Scan(&name, &stored); err != nil {
			rows.Close()
			return nil, err
		}
		n, err := store.ParseCounter(stored.String)
		if err != nil {
			probs = append(probs, fmt.Sprintf("counter %s %v (changed outside foilrun; the next run logged rebuilds it from the codes)", name, err))
			continue
		}
		counters[name] = n
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, err
	}
	top := map[string]int64{}
	rows, err = q.QueryContext(ctx, `SELECT code FROM runs ORDER BY id`)
	if err != nil {
		return nil, fmt.Errorf("check codes: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		var code string
		if err := rows.Scan(&code); err != nil {
			return nil, err
		}
		if err := store.ValidateCode(code); err != nil {
			probs = append(probs, "run "+strings.TrimSuffix(err.Error(), ": "+store.ErrInvalid.Error()))
			continue
		}
		if c, n, ok := store.ParseCode(code); ok && n > top[c] {
			top[c] = n
		}
	}
	if err := rows.Err(); err != nil {
		return nil, err
	}
	names := make([]string, 0, len(top))
	for c := range top {
		names = append(names, c)
	}
	sort.Strings(names)
	for _, c := range names {
		if v, ok := counters[c]; ok && v < top[c] {
			probs = append(probs, fmt.Sprintf("counter %s is at %d but a run with number %d is logged", c, v, top[c]))
		}
	}
	return probs, nil
}
