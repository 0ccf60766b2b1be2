package main

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// lab is a folder with the template recipe, furnace and site, and a run
// log holding one logged run with outcomes.
type testLab struct {
	dir, recipe, furnace, site, db, code string
}

func newTestLab(t *testing.T) testLab {
	t.Helper()
	dir := t.TempDir()
	l := testLab{dir: dir, recipe: filepath.Join(dir, "r.yaml"), furnace: filepath.Join(dir, "furnace.yaml"),
		site: filepath.Join(dir, "site.yaml"), db: filepath.Join(dir, "lab.db")}
	for from, to := range map[string]string{"recipe-lowpressure.yaml": l.recipe, "furnace.yaml": l.furnace, "site.yaml": l.site} {
		data, err := os.ReadFile(filepath.Join("..", "..", "templates", from))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(to, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	code, out, errs := runArgs(t, "--db", l.db, "run", "add", l.recipe, "--outcome", "coverage=80%", "--outcome", "nuclei_density=100/mm2")
	if code != 0 {
		t.Fatalf("run add: exit %d: %s", code, errs)
	}
	l.code = strings.TrimSpace(strings.SplitN(out, "\n", 2)[0])
	return l
}

// digest is the SHA-256 of a file's bytes.
func digest(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(data)
	return hex.EncodeToString(h[:])
}

// refusedCase is a command whose output names a file it must not touch.
type refusedCase struct {
	name string
	args []string
	want string // in the message
}

// checkRefused runs each case, wanting exit 2, the message, and file
// byte for byte as it was.
func checkRefused(t *testing.T, file string, tests []refusedCase) {
	t.Helper()
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			before := digest(t, file)
			code, _, errs := runArgs(t, tt.args...)
			if code != 2 || !strings.Contains(errs, tt.want) {
				t.Errorf("got exit %d, %q; want exit 2 and %q", code, errs, tt.want)
			}
			if after := digest(t, file); after != before {
				t.Errorf("%s changed: sha256 %s, was %s", filepath.Base(file), after, before)
			}
		})
	}
}

// TestOutputsSpareTheRunLog: every output flag pointed at the run log is
// refused, even with --force, and the log is left byte for byte (issue
// 16: runs export -o lab.db left a 0-byte log). The plots are pointed at
// a hard link to the log named .png, so that the extension check passes
// and the guard must recognise the same file under another name.
func TestOutputsSpareTheRunLog(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	png := filepath.Join(l.dir, "lab.png")
	if err := os.Link(l.db, png); err != nil {
		t.Fatal(err)
	}
	img, _ := writeSynth(t, 10, 10)
	db := "--db=" + l.db
	const want = "is the run log this command reads"
	checkRefused(t, l.db, []refusedCase{
		{"runs export", []string{db, "runs", "export", "-o", l.db}, want},
		{"runs export --force", []string{db, "runs", "export", "-o", l.db, "--force"}, want},
		{"checklist", []string{db, "checklist", l.recipe, "-o", l.db, "--force"}, want},
		{"suggest", []string{db, "suggest", l.recipe, "--target", "coverage>=0.9", "-o", l.db, "--force"}, want},
		{"fit", []string{db, "fit", "-o", l.db, "--force"}, want},
		{"fit --plot", []string{db, "fit", "--plot", png, "--force"}, want},
		{"predict --plot", []string{db, "predict", l.recipe, "--plot", png, "--force"}, want},
		{"window --plot", []string{db, "window", l.recipe, "--vary", "temperature=950C:1000C:2", "--vary", "CH4=5sccm:10sccm:2", "--plot", png, "--force"}, want},
		{"measure --overlay", []string{db, "measure", "image", img, "--pixel", "1um", "--overlay", png, "--force"}, want},
		{"outcome measure --overlay", []string{db, "outcome", "measure", l.code, "--image", img, "--pixel", "1um", "--overlay", png, "--force"}, want},
		{"new", []string{db, "new", "recipe", "-o", l.db, "--force"}, want},
		{"db backup", []string{db, "db", "backup", l.db, "--force"}, want},
		{"the log's WAL file", []string{db, "runs", "export", "-o", l.db + "-wal", "--force"}, "run log"},
	})
	if code, out, _ := runArgs(t, db, "runs", "list", "--output", "json"); code != 0 || !strings.Contains(out, l.code) {
		t.Errorf("runs list after the refusals: exit %d, %q; want the run %s", code, out, l.code)
	}
}

// TestOutputsSpareTheInputs: an output is never written over an input of
// the same command, named directly or by the recipe (issue 16:
// checklist recipe.yaml -o recipe.yaml replaced the recipe; outcome
// measure --overlay replaced the micrograph).
func TestOutputsSpareTheInputs(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	checkRefused(t, l.recipe, []refusedCase{
		{"checklist onto its recipe", []string{"checklist", l.recipe, "-o", l.recipe}, "is the recipe this command reads"},
		{"suggest onto its recipe", []string{"suggest", l.recipe, "--target", "coverage>=0.9", "-o", l.recipe, "--force"}, "is the recipe this command reads"},
	})
	checkRefused(t, l.furnace, []refusedCase{
		{"checklist onto the recipe's furnace", []string{"checklist", l.recipe, "-o", l.furnace, "--force"}, "is the furnace file this command reads"},
	})
	checkRefused(t, l.site, []refusedCase{
		{"checklist onto the recipe's site", []string{"checklist", l.recipe, "-o", l.site, "--force"}, "is the site file this command reads"},
	})
	img, _ := writeSynth(t, 10, 10)
	checkRefused(t, img, []refusedCase{
		{"measure --overlay onto the image", []string{"measure", "image", img, "--pixel", "1um", "--overlay", img, "--force"}, "is the micrograph this command reads"},
		{"outcome measure --overlay onto the image", []string{"--db", l.db, "outcome", "measure", l.code, "--image", img, "--pixel", "1um", "--overlay", img, "--force"},
			"is the micrograph this command reads"},
	})
}

// TestOutputGuard: a symbolic link is refused (its target untouched), an
// existing file is refused without --force and replaced with it, a new
// file is written; a filter the log refuses leaves the file as it was
// (issue 16: runs export -o keep.json --where bad truncated keep.json).
func TestOutputGuard(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	db := "--db=" + l.db
	keep := filepath.Join(l.dir, "keep.json")
	if err := os.WriteFile(keep, []byte("precious\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(l.dir, "link.json")
	if err := os.Symlink(keep, link); err != nil {
		t.Fatal(err)
	}
	folder := filepath.Join(l.dir, "plots.png")
	if err := os.Mkdir(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	checkRefused(t, keep, []refusedCase{
		{"existing without --force", []string{db, "runs", "export", "-o", keep}, "already exists"},
		{"symbolic link", []string{db, "runs", "export", "-o", link, "--force"}, "is a symbolic link"},
		{"a bad filter", []string{db, "runs", "export", "-o", keep, "--force", "--where", "bad"}, "bad"},
		{"checklist without --force", []string{"checklist", l.recipe, "-o", keep}, "already exists"},
		{"predict --plot onto a folder", []string{"predict", l.recipe, "--plot", folder, "--force"}, "is not a regular file (a folder)"},
	})
	if code, _, errs := runArgs(t, db, "runs", "export", "-o", keep, "--force"); code != 0 {
		t.Fatalf("runs export --force: exit %d: %s", code, errs)
	}
	if data, _ := os.ReadFile(keep); !strings.Contains(string(data), l.code) {
		t.Errorf("keep.json after --force: %.80q, want the export with %s", data, l.code)
	}
	fresh := filepath.Join(l.dir, "fresh.md")
	if code, _, errs := runArgs(t, "checklist", l.recipe, "-o", fresh); code != 0 {
		t.Fatalf("checklist -o a new file: exit %d: %s", code, errs)
	}
	noTempFiles(t, l.dir)
}

// noTempFiles fails the test for any temporary output file left in dir.
func noTempFiles(t *testing.T, dir string) {
	t.Helper()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
}

// TestNewKeepsItsRule: new -o still refuses an existing file with the
// message it always gave, and replaces it with --force.
func TestNewKeepsItsRule(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "furnace.yaml")
	if code, _, errs := runArgs(t, "new", "furnace", "-o", path); code != 0 {
		t.Fatalf("new: exit %d: %s", code, errs)
	}
	os.WriteFile(path, []byte("edited\n"), 0o644)
	if code, _, errs := runArgs(t, "new", "furnace", "-o", path); code != 2 || !strings.Contains(errs, "already exists") || !strings.Contains(errs, "--force") {
		t.Errorf("new over a file: exit %d, %q; want 2, already exists and --force", code, errs)
	}
	if code, _, errs := runArgs(t, "new", "furnace", "-o", path, "--force"); code != 0 {
		t.Fatalf("new --force: exit %d: %s", code, errs)
	}
	if data, _ := os.ReadFile(path); !strings.Contains(string(data), "heater") {
		t.Errorf("new --force did not write the template: %.60q", data)
	}
}

// fileSizeEnv makes the "foilrun" child process of the tests run under a
// file-size limit (RLIMIT_FSIZE, what ulimit -f sets), in bytes.
const fileSizeEnv = "FOILRUN_TEST_FILE_SIZE_LIMIT"

// limitFileSize applies $FOILRUN_TEST_FILE_SIZE_LIMIT to this process.
// Go ignores SIGXFSZ, so a write past the limit fails with EFBIG, as on a
// full disk.
func limitFileSize() {
	v := os.Getenv(fileSizeEnv)
	if v == "" {
		return
	}
	n, err := strconv.ParseUint(v, 10, 64)
	if err != nil {
		panic(err)
	}
	if err := syscall.Setrlimit(syscall.RLIMIT_FSIZE, &syscall.Rlimit{Cur: n, Max: n}); err != nil {
		panic(err)
	}
}

// TestFailedExportKeepsOldFile: an export that hits the file-size limit
// (ulimit -f) part-way fails and leaves the old file byte for byte, with
// no temporary file behind (issue 16: the old content was gone). The
// limit, 48 KiB, is above the 32 KiB SQLite needs for the log's
// shared-memory file and below the export's size.
func TestFailedExportKeepsOldFile(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	// Nine notes of 9.1 kB (a note holds at most 10,000 bytes): the export
	// is larger than the limit.
	args := []string{"--db", l.db, "run", "add", l.recipe}
	for i := 0; i < 9; i++ {
		args = append(args, "--note", strings.Repeat("a long note. ", 700))
	}
	if code, _, errs := runArgs(t, args...); code != 0 {
		t.Fatalf("run add: exit %d: %s", code, errs)
	}
	keep := filepath.Join(l.dir, "keep.json")
	if err := os.WriteFile(keep, []byte(`{"precious": true}`+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	before := digest(t, keep)
	cmd := exec.Command("foilrun", "--db", l.db, "runs", "export", "-o", keep, "--force")
	cmd.Env = append(os.Environ(), fileSizeEnv+"=49152")
	out, err := cmd.CombinedOutput()
	if err == nil || !strings.Contains(string(out), "file too large") {
		t.Errorf("export under ulimit -f 48 KiB: %v, %q; want a failure saying file too large", err, out)
	}
	if after := digest(t, keep); after != before {
		t.Errorf("keep.json changed: sha256 %s, was %s", after, before)
	}
	noTempFiles(t, l.dir)
}

// TestKilledBackup: a db backup killed (SIGKILL) while it writes leaves no
// file at the target, and running it again works (issue 16: a half file
// opened as an empty log and blocked the retry). The log is made large
// enough (about 8 MB) that the copy takes long enough to be caught half
// way: the test kills the process as soon as anything of the copy appears.
func TestKilledBackup(t *testing.T) {
	t.Parallel()
	l := newTestLab(t)
	args := []string{"--db", l.db, "run", "add", l.recipe}
	for i := range 100 {
		args = append(args, "--note", fmt.Sprintf("note %d: ", i)+strings.Repeat("filler text ", 330))
	}
	for range 20 {
		if code, _, errs := runArgs(t, args...); code != 0 {
			t.Fatalf("run add: exit %d: %s", code, errs)
		}
	}
	target := filepath.Join(l.dir, "copy.db")
	cmd := exec.Command("foilrun", "--db", l.db, "db", "backup", target)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	seen := ""
	deadline := time.Now().Add(20 * time.Second)
	for seen == "" && time.Now().Before(deadline) {
		if _, err := os.Stat(target); err == nil {
			seen = target
		} else if m, _ := filepath.Glob(filepath.Join(l.dir, ".copy.db.tmp-*", "copy.db")); len(m) > 0 {
			seen = m[0]
		} else {
			time.Sleep(100 * time.Microsecond)
		}
	}
	cmd.Process.Kill()
	werr := <-done
	if seen == "" {
		t.Fatalf("no copy appeared within 20 s (%v)", werr)
	}
	if fi, err := os.Stat(l.db); err == nil {
		t.Logf("log %d bytes; killed when %s appeared", fi.Size(), seen)
	}
	if werr == nil {
		t.Fatalf("the backup finished before it was killed (first seen %s); make the log larger", seen)
	}
	if _, err := os.Stat(target); err == nil {
		t.Errorf("a killed backup left %s (first seen %s)", target, seen)
	}
	if code, _, errs := runArgs(t, "--db", l.db, "db", "backup", target); code != 0 {
		t.Fatalf("the retry: exit %d: %s", code, errs)
	}
	code, out, errs := runArgs(t, "--db", target, "runs", "list", "--output", "json")
	if n := strings.Count(out, `"code"`); code != 0 || n != 21 {
		t.Errorf("runs list of the copy: exit %d, %d runs, %s; want 21 runs", code, n, errs)
	}
}
