package postgres

import (
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"os"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// serverEnv names the URL of the PostgreSQL database the tests may use;
// each test works in a schema of its own in it.
const serverEnv = "FOILRUN_TEST_POSTGRES"

const howTo = `start a throwaway server with "source .ci/postgres" from the repository root (it exports ` + serverEnv + `), or set ` +
	serverEnv + ` to a database you may create schemas in, e.g. postgres://user@/foilrun_test?host=/tmp/sock&sslmode=disable`

// serverURL returns the test server's URL; without one the test is
// skipped, except in CI (CI=true), where that is a failure.
func serverURL(t testing.TB) string {
	t.Helper()
	u := os.Getenv(serverEnv)
	if u == "" {
		if os.Getenv("CI") == "true" {
			t.Fatalf("%s is not set and CI=true: the PostgreSQL tests must run in CI; %s", serverEnv, howTo)
		}
		t.Skipf("%s is not set: %s", serverEnv, howTo)
	}
	return u
}

// withParam adds a query parameter to a connection URL.
func withParam(u, key, value string) string {
	sep := "?"
	if strings.Contains(u, "?") {
		sep = "&"
	}
	return u + sep + key + "=" + value
}

// freshSchema creates an empty schema for the test (dropped at cleanup)
// and returns the URL that works in it.
func freshSchema(t testing.TB) string {
	t.Helper()
	base := serverURL(t)
	b := make([]byte, 6)
	rand.Read(b)
	name := "t_" + hex.EncodeToString(b)
	admin, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	if _, err := admin.ExecContext(ctx, "CREATE SCHEMA "+name); err != nil {
		admin.Close()
		t.Fatalf("create test schema: %v (%s)", err, howTo)
	}
	t.Cleanup(func() {
		admin.ExecContext(ctx, "DROP SCHEMA "+name+" CASCADE")
		admin.Close()
	})
	return withParam(base, "search_path", name)
}

// openFresh opens a run log in a fresh schema.
func openFresh(t testing.TB) (*DB, string) {
	t.Helper()
	u := freshSchema(t)
	db, err := Open(context.Background(), u)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db, u
}

// openAt opens a PostgreSQL URL or a SQLite file.
func openAt(ctx context.Context, target string) (store.RunLog, error) {
	if IsURL(target) {
		return Open(ctx, target)
	}
	return sqlite.Open(ctx, target)
}
