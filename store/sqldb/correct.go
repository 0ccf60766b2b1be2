package sqldb

import (
	"context"
	"fmt"

	"github.com/foilrun/foilrun/store"
)

// ReplaceOutcomes corrects a run's measurements; see store.RunLog.
func (s *DB) ReplaceOutcomes(ctx context.Context, code string, os []store.Outcome, who string) error {
	return s.onRun(ctx, code, func(w *writer, id int64, _ store.Status) error {
		if err := w.checkOutcomes(ctx, code, os); err != nil {
			return err
		}
		seen := map[string]bool{}
		for _, o := range os {
			if seen[o.Metric] {
				return fmt.Errorf("run %q: %s given twice: replace a metric with one value: %w", code, o.Metric, store.ErrInvalid)
			}
			seen[o.Metric] = true
			if err := w.replace(ctx, id, code, o, who); err != nil {
				return err
			}
		}
		return nil
	})
}

// replace deletes the run's values of o's metric, keeping each as a
// correction, and queues o.
func (w *writer) replace(ctx context.Context, id int64, code string, o store.Outcome, who string) error {
	rows, err := w.tx.QueryContext(ctx, w.s.d.Rebind(`SELECT value, entered FROM outcomes WHERE run_id = ? AND metric = ? ORDER BY id`), id, o.Metric)
	if err != nil {
		return err
	}
	var old []store.Correction
	for rows.Next() {
		c := store.Correction{Metric: o.Metric, Unit: o.Unit, NewValue: o.Value, NewEntered: o.Entered, Who: who, At: w.s.now()}
		if err := rows.Scan(&c.OldValue, &c.OldEntered); err != nil {
			rows.Close()
			return err
		}
		old = append(old, c)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	if len(old) == 0 {
		return fmt.Errorf("run %q has no %s to replace; add it without --replace: %w", code, o.Metric, store.ErrInvalid)
	}
	if _, err := w.tx.ExecContext(ctx, w.s.d.Rebind(`DELETE FROM outcomes WHERE run_id = ? AND metric = ?`), id, o.Metric); err != nil {
		return err
	}
	for _, c := range old {
		if err := w.addCorrection(ctx, id, c); err != nil {
			return err
		}
	}
	return w.outcomes.add(ctx, id, o.Metric, o.Value, o.Unit, o.Entered, o.Method, nullTime(o.Measured))
}

func (w *writer) addCorrection(ctx context.Context, id int64, c store.Correction) error {
	if err := c.Validate(); err != nil {
		return fmt.Errorf("correction: %v: %w", err, store.ErrInvalid)
	}
	return w.corrections.add(ctx, id, c.Metric, c.Unit, c.OldValue, c.OldEntered, c.NewValue, c.NewEntered, c.Who, formatTime(c.At))
}
