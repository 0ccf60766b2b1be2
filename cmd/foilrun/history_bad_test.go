package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// bigRows is the size of the big-last-row case's sheet, made by the test:
// 100,000 good rows but one bad cell in the last.
const bigRows = 100_000

// Bad history imports, each a folder under testdata/history/bad with the
// sheet (sheet.csv or sheet.xlsx; big-last-row's is made here), the map
// and want.txt, the message (-update rewrites it): each exits 2 and
// leaves the log as it was (one run logged before stays the only one).
func TestHistoryBadInputs(t *testing.T) {
	t.Parallel()
	root := filepath.Join("..", "..", "testdata", "history", "bad")
	cases, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range cases {
		t.Run(c.Name(), func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			copyTemplates(t, dir, "furnace.yaml", "site.yaml", "recipe-lowpressure.yaml")
			caseDir := filepath.Join(root, c.Name())
			sheet := filepath.Join(caseDir, "sheet.csv")
			if _, err := os.Stat(filepath.Join(caseDir, "sheet.xlsx")); err == nil {
				sheet = filepath.Join(caseDir, "sheet.xlsx")
			}
			if c.Name() == "big-last-row" {
				sheet = filepath.Join(dir, "sheet.csv")
				writeBigSheet(t, sheet)
			}
			db := filepath.Join(dir, "runs.db")
			if code, _, errs := runArgs(t, "--db", db, "run", "add", filepath.Join(dir, "recipe-lowpressure.yaml")); code != 0 {
				t.Fatalf("run add: %s", errs)
			}
			code, out, errs := runArgs(t, "--db", db, "runs", "import", sheet, "--recipe", filepath.Join(dir, "recipe-lowpressure.yaml"),
				"--map", filepath.Join(caseDir, "map.yaml"))
			if code != 2 || out != "" {
				t.Errorf("exit %d, stdout %q; want 2 and nothing on stdout", code, out)
			}
			got := strings.NewReplacer(dir, "$DIR", root, "$CASES").Replace(errs)
			goldenAt(t, filepath.Join(caseDir, "want.txt"), got)
			_, list, _ := runArgs(t, "--db", db, "runs", "list", "--output", "csv")
			if n := strings.Count(list, "\n") - 1; n != 1 {
				t.Errorf("runs in the log after the failed import: got %d, want 1 (nothing imported)", n)
			}
		})
	}
}

func writeBigSheet(t *testing.T, path string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("Run,Date,T growth (C),t (min),CH4 (sccm),H2 (sccm),Coverage (%)\n")
	for i := 1; i <= bigRows; i++ {
		ch4 := fmt.Sprint(5 + i%30)
		if i == bigRows {
			ch4 = "3.5x"
		}
		fmt.Fprintf(&b, "B-%06d,%02d/03/2025,%d,%d,%s,20,%d\n", i, 1+i%28, 960+i%100, 1+i%5, ch4, 50+i%50)
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}
