package storetest

import (
	"context"
	"database/sql"
	"fmt"
	"slices"
	"strconv"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqldb"
)

// Fresh makes a new empty database for a migration test and returns a raw
// connection to it and a function that opens it as a run log.
type Fresh func(t *testing.T) (raw *sql.DB, open func() (store.RunLog, error))

// Migrations opens an empty database, and databases left at every earlier
// version of the dialect's migrations with data in them, and checks each
// reaches the latest version with its data intact, the names registry
// (version 3) filled and the code counter kept.
func Migrations(t *testing.T, d sqldb.Dialect, fresh Fresh) {
	ctx := context.Background()
	latest, err := sqldb.Latest(d)
	if err != nil || latest != SchemaVersion {
		t.Fatalf("Latest: got %d, %v; want %d", latest, err, SchemaVersion)
	}
	for v := 0; v < latest; v++ {
		t.Run("from"+strconv.Itoa(v), func(t *testing.T) {
			t.Parallel() // each start is a log of its own
			raw, open := fresh(t)
			if v > 0 {
				if err := sqldb.Migrate(ctx, raw, d, v); err != nil {
					t.Fatal(err)
				}
				// data written at version v, with the columns that version has
				// (the run is the table's first row: id 1 on both back ends)
				exec := func(q string, args ...any) {
					t.Helper()
					if _, err := raw.ExecContext(ctx, d.Rebind(q), args...); err != nil {
						t.Fatalf("%s: %v", q, err)
					}
				}
				content := []byte{0, 0xff}
				exec(`INSERT INTO snapshots (sha256, name, file, content, created_at) VALUES (?, 'demo', 'a.yaml', ?, '2026-01-01T00:00:00.000000Z')`, store.HashOf(content), content)
				exec(`INSERT INTO runs (code, status, recipe_sha256, recipe_name, furnace, operator, lot, created_at)
					VALUES ('G26-0007', 'done', ?, 'demo', 'tube-1', 'op', 'L1', '2026-01-01T00:00:00.000000Z')`, store.HashOf(content))
				exec(`INSERT INTO counters VALUES ('run-2026', 7)`)
				exec(`INSERT INTO run_params VALUES (1, 'growth_temperature_c', 1000)`)
				exec(`INSERT INTO outcomes (run_id, metric, value, unit, entered, method) VALUES (1, 'coverage', 0.9, '1', '90%', '')`)
			}
			raw.Close()
			l, err := open()
			if err != nil {
				t.Fatal(err)
			}
			defer l.Close()
			if v >= sqldb.SummaryVersion {
				// from that version on, the writes keep the run summary in
				// their own transaction; the raw inserts above bypassed it
				if _, err := l.Repair(ctx); err != nil {
					t.Fatal(err)
				}
			}
			SummaryTable(t, l)
			got, err := l.SchemaVersion(ctx)
			if err != nil || got != latest {
				t.Fatalf("SchemaVersion: got %d, %v; want %d", got, err, latest)
			}
			if v == 0 {
				return
			}
			rec, err := l.Record(ctx, "G26-0007")
			if err != nil {
				t.Fatal(err)
			}
			if rec.Params["growth_temperature_c"] != 1000 || len(rec.Outcomes) != 1 || rec.Outcomes[0].Value != 0.9 {
				t.Errorf("after migration from %d: got %+v", v, rec)
			}
			if v < 3 {
				// version 3 made the names registry and filled it from the
				// rows already logged
				names, err := l.Names(ctx)
				want := []store.Name{{Name: "coverage", Kind: store.NameMetric, Unit: "1"}, {Name: "growth_temperature_c", Kind: store.NameParam, Unit: "°C"}}
				if err != nil || !slices.Equal(names, want) {
					t.Errorf("names after migration from %d: got %+v, %v; want %+v", v, names, err, want)
				}
			}
			runs, err := l.List(ctx, store.Filter{Where: []string{"growth_temperature_c >= 1000 and coverage > 0.5"}})
			if err != nil || len(runs) != 1 {
				t.Errorf("where over migrated data: got %d runs, %v; want 1", len(runs), err)
			}
			Backend(t, l).SetClock(func() time.Time { return time.Date(2026, 5, 1, 0, 0, 0, 0, time.UTC) })
			code, err := l.CreateRun(ctx, store.RunRecord{Run: store.Run{RecipeName: "x"}}, nil)
			if err != nil || code != "G26-0008" {
				t.Errorf("next code after migration: got %q, %v; want G26-0008 (counter kept)", code, err)
			}
			if probs, err := l.Check(ctx); err != nil || len(probs) > 0 {
				t.Errorf("Check: got %v, %v; want no problems", probs, err)
			}
		})
	}
}

// SchemaTooNew marks the log at version 99 and checks that opening it
// again fails with store.ErrSchemaTooNew naming both versions and changes
// nothing.
func SchemaTooNew(t *testing.T, l store.RunLog, reopen func() (store.RunLog, error)) {
	ctx := context.Background()
	if _, err := l.CreateRun(ctx, GenRecord(1, ""), nil); err != nil {
		t.Fatal(err)
	}
	raw := Backend(t, l).SQL()
	if _, err := raw.ExecContext(ctx, `INSERT INTO schema_version (version, applied_at) VALUES (99, '2030-01-01T00:00:00.000000Z')`); err != nil {
		t.Fatal(err)
	}
	before := Fingerprint(t, l)
	l2, err := reopen()
	if err == nil {
		l2.Close()
	}
	if !errorsIs(err, store.ErrSchemaTooNew) || !contains(err, fmt.Sprintf("version 99, this foilrun knows up to %d", SchemaVersion)) {
		t.Errorf("open of a newer schema: got %v, want ErrSchemaTooNew naming 99 and %d", err, SchemaVersion)
	}
	if after := Fingerprint(t, l); after != before {
		t.Errorf("opening a newer schema changed the log")
	}
}
