package store

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

var update = flag.Bool("update", false, "rewrite the want.txt goldens of testdata/store/import-bad")

// importNow is the clock of the import goldens.
var importNow = time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)

// TestImportBadJSON: every case under testdata/store/import-bad is a JSON
// export with one bad field (the defects found by trying imports as a
// careful attacker would); ReadJSON or Bundle.ValidateImport must refuse
// it with the message in want.txt, which names the run and the field.
// The case "good" is the same export without the fault and must pass
// ("ok"). Rewrite the goldens with go test ./store -run TestImportBadJSON
// -update and read the diff.
func TestImportBadJSON(t *testing.T) {
	dirs, err := filepath.Glob("../testdata/store/import-bad/*")
	if err != nil || len(dirs) < 10 {
		t.Fatalf("import-bad cases: got %d, %v; want at least 10", len(dirs), err)
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			got := ImportMessage(t, dir, importNow)
			wantFile := filepath.Join(dir, "want.txt")
			if *update {
				if err := os.WriteFile(wantFile, []byte(got+"\n"), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(wantFile)
			if err != nil {
				t.Fatal(err)
			}
			if got != strings.TrimSuffix(string(want), "\n") {
				t.Errorf("got  %s\nwant %s", got, want)
			}
			if filepath.Base(dir) != "good" && got == "ok" {
				t.Errorf("a bad import passed")
			}
		})
	}
}

// ImportMessage reads the case's input.json and returns the error ReadJSON
// or ValidateImport gives, or "ok".
func ImportMessage(t testing.TB, dir string, now time.Time) string {
	t.Helper()
	in, err := os.ReadFile(filepath.Join(dir, "input.json"))
	if err != nil {
		t.Fatal(err)
	}
	b, err := ReadJSON(bytes.NewReader(in))
	if err == nil {
		err = b.ValidateImport(now)
	}
	if err == nil {
		return "ok"
	}
	return err.Error()
}
