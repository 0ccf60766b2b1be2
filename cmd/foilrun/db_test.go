package main

import (
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestDBCopy: a log copied SQLite → (PostgreSQL →) SQLite exports the
// same JSON; a copy into a log that holds runs is refused and leaves no
// new file behind; bad flag use exits 2.
func TestDBCopy(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	src := filepath.Join(dir, "src.db")
	recipe := "../../templates/recipe-lowpressure.yaml"
	for _, lot := range []string{"L-1", "L-2", "L-3"} {
		if code, _, errs := runArgs(t, "--db", src, "run", "add", recipe, "--outcome", "coverage=0.8", "--lot", lot); code != 0 {
			t.Fatalf("run add: exit %d: %s", code, errs)
		}
	}
	hops := []string{filepath.Join(dir, "a.db")}
	if u := os.Getenv("FOILRUN_TEST_POSTGRES"); u != "" {
		hops = append(hops, pgSchema(t, u), filepath.Join(dir, "b.db"))
	}
	from := src
	for _, to := range hops {
		code, out, errs := runArgs(t, "db", "copy", "--from", from, "--to", to)
		// The report is status: on stderr, leaving stdout empty.
		if code != 0 || out != "" || !strings.Contains(errs, "copied 3 runs and 3 snapshots") || !strings.Contains(errs, "verified: row counts equal in 12 tables") {
			t.Fatalf("db copy --from %s --to %s: exit %d, out %q, err %q", from, to, code, out, errs)
		}
		from = to
	}
	want := exportOf(t, src)
	for _, h := range hops {
		if got := exportOf(t, h); got != want {
			t.Errorf("export of %s differs from the source's", h)
		}
	}
	tests := []struct {
		name string
		args []string
		exit int
		msg  string
	}{
		{"into a full log", []string{"db", "copy", "--from", src, "--to", hops[0]}, 2, "db copy writes only into an empty log"},
		{"no --to", []string{"db", "copy", "--from", src}, 2, "give both --from and --to"},
		{"same", []string{"db", "copy", "--from", src, "--to", src}, 2, "are both"},
		{"missing source", []string{"db", "copy", "--from", filepath.Join(dir, "none.db"), "--to", filepath.Join(dir, "new.db")}, 2, "no such file"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, out, errs := runArgs(t, tt.args...)
			if code != tt.exit || !strings.Contains(out+errs, tt.msg) {
				t.Errorf("got exit %d, %q; want exit %d and %q", code, out+errs, tt.exit, tt.msg)
			}
		})
	}
	if _, err := os.Stat(filepath.Join(dir, "new.db")); err == nil {
		t.Errorf("a failed copy left its new target file behind")
	}
}

func exportOf(t *testing.T, db string) string {
	t.Helper()
	code, out, errs := runArgs(t, "--db", db, "runs", "export", "--format", "json")
	if code != 0 {
		t.Fatalf("export %s: exit %d: %s", db, code, errs)
	}
	return out
}

// pgSchema makes a schema for the test on the server and returns its URL.
func pgSchema(t *testing.T, base string) string {
	t.Helper()
	b := make([]byte, 6)
	rand.Read(b)
	name := "cli_" + hex.EncodeToString(b)
	db, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	if _, err := db.ExecContext(ctx, "CREATE SCHEMA "+name); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		db.ExecContext(ctx, "DROP SCHEMA "+name+" CASCADE")
		db.Close()
	})
	sep := "?"
	if strings.Contains(base, "?") {
		sep = "&"
	}
	return base + sep + "search_path=" + name
}
