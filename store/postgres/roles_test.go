package postgres

import (
	"context"
	"crypto/rand"
	"database/sql"
	"encoding/hex"
	"errors"
	"net/url"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

// readmeRoles returns the SQL of README.md's "PostgreSQL roles" section,
// split into what the superuser runs and what the owner runs (at the
// line "-- as foilrun_owner…"), one statement per element.
func readmeRoles(t *testing.T) (admin, owner []string) {
	t.Helper()
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	text := string(b)
	i := strings.Index(text, "### PostgreSQL roles")
	if i < 0 {
		t.Fatal(`README.md has no "### PostgreSQL roles" section`)
	}
	start := strings.Index(text[i:], "```sql\n")
	end := strings.Index(text[i+start+7:], "```")
	if start < 0 || end < 0 {
		t.Fatal(`README.md's "PostgreSQL roles" section has no sql block`)
	}
	into := &admin
	for _, line := range strings.Split(text[i+start+7:i+start+7+end], "\n") {
		switch {
		case strings.HasPrefix(line, "-- as foilrun_owner"):
			into = &owner
		case strings.HasPrefix(line, "--") || strings.TrimSpace(line) == "":
		default:
			*into = append(*into, strings.TrimSuffix(strings.TrimSpace(line), ";"))
		}
	}
	if len(admin) == 0 || len(owner) == 0 {
		t.Fatalf("README roles: %d superuser and %d owner statements, want some of each", len(admin), len(owner))
	}
	return admin, owner
}

// TestReadmeRoles runs the README's role set-up, as written there (role
// and schema names made unique for the test), and checks what each role
// can do: the writer can neither create the tables nor, on an up-to-date
// schema, needs to; the owner migrates; the writer logs; the reader (only
// SELECT) serves every read of runs list, best, rank, export, run show and
// fit through a read-only open; a write with the reader's rights fails
// with a hint naming the privilege.
func TestReadmeRoles(t *testing.T) {
	t.Parallel()
	base := serverURL(t)
	ctx := context.Background()
	adminSQL, ownerSQL := readmeRoles(t)
	rb := make([]byte, 5)
	rand.Read(rb)
	tag := "t_" + hex.EncodeToString(rb)
	names := strings.NewReplacer("foilrun_owner", tag+"_owner", "foilrun_writer", tag+"_writer", "foilrun_reader", tag+"_reader")
	schema := regexp.MustCompile(`\bfoilrun\b`)
	rename := func(q string) string { return schema.ReplaceAllString(names.Replace(q), tag) }
	admin, err := sql.Open("pgx", base)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		admin.ExecContext(ctx, "DROP SCHEMA IF EXISTS "+tag+" CASCADE")
		for _, r := range []string{"owner", "writer", "reader"} {
			admin.ExecContext(ctx, "DROP OWNED BY "+tag+"_"+r+" CASCADE")
			admin.ExecContext(ctx, "DROP ROLE IF EXISTS "+tag+"_"+r)
		}
		admin.Close()
	})
	for _, q := range adminSQL {
		if _, err := admin.ExecContext(ctx, rename(q)); err != nil {
			t.Fatalf("README, as the superuser: %s: %v", q, err)
		}
	}
	as := func(role, password string) string {
		u, err := url.Parse(base)
		if err != nil {
			t.Fatal(err)
		}
		u.User = url.UserPassword(tag+"_"+role, password)
		q := u.Query()
		q.Set("search_path", tag)
		u.RawQuery = q.Encode()
		return u.String()
	}
	ownerURL, writerURL, readerURL := as("owner", "owner-password"), as("writer", "writer-password"), as("reader", "reader-password")
	ownerDB, err := sql.Open("pgx", ownerURL)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range ownerSQL {
		if _, err := ownerDB.ExecContext(ctx, rename(q)); err != nil {
			t.Fatalf("README, as the owner: %s: %v", q, err)
		}
	}
	ownerDB.Close()

	// before the owner migrates: the writer may not create tables, the reader finds no log
	_, err = Open(ctx, writerURL)
	var pe *store.PermissionError
	if !errors.As(err, &pe) || !errors.Is(err, store.ErrReadOnly) || !strings.Contains(pe.Hint(), "CREATE") {
		t.Errorf("writer opening an empty schema: got %v, want a PermissionError whose hint names CREATE", err)
	}
	if _, err := OpenReadOnly(ctx, readerURL); !errors.Is(err, store.ErrSchemaBehind) || !strings.Contains(err.Error(), "no run log yet") {
		t.Errorf("reader opening an empty schema: got %v, want ErrSchemaBehind", err)
	}
	own, err := Open(ctx, ownerURL)
	if err != nil {
		t.Fatalf("owner migrates: %v", err)
	}
	own.Close()

	w, err := Open(ctx, writerURL)
	if err != nil {
		t.Fatalf("writer opening the migrated schema (no DDL needed): %v", err)
	}
	defer w.Close()
	codes := storetest.Populate(t, w)
	r, err := OpenReadOnly(ctx, readerURL)
	if err != nil {
		t.Fatalf("reader with SELECT only: %v", err)
	}
	defer r.Close()
	storetest.ReadOnly(t, w, r, codes)

	rw, err := Open(ctx, readerURL) // opened for writing: the schema is up to date, so this reads only
	if err != nil {
		t.Fatalf("reader opening for writing an up-to-date schema: %v", err)
	}
	defer rw.Close()
	_, err = rw.CreateRun(ctx, storetest.GenRecord(1, ""), nil)
	if !errors.As(err, &pe) || !strings.Contains(pe.Hint(), "INSERT and UPDATE") {
		t.Errorf("run add with the reader's rights: got %v, want a PermissionError whose hint names INSERT and UPDATE", err)
	}
}
