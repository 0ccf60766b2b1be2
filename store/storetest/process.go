package storetest

import (
	"bufio"
	"context"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// childEnv makes the test binary act as a separate logging process.
const childEnv = "FOILRUN_STORETEST_CHILD"

// OpenFunc opens the run log at a target (a file path or a URL).
type OpenFunc func(ctx context.Context, target string) (store.RunLog, error)

// Main is for a back end's TestMain: when the test binary was started as a
// child process by Loggers, KilledImport or KilledCopy it does the child's
// work with open and exits; otherwise it returns.
func Main(open OpenFunc) {
	if mode := os.Getenv(childEnv); mode != "" {
		os.Exit(child(open, strings.Split(mode, "\x1f")))
	}
}

// child runs
//
//	log TARGET N           N runs, one transaction each
//	import TARGET N PAUSE  one N-run import that prints "halfway" half-way
//	                       through and, when PAUSE is 1, then waits to be killed
//	copy SRC DST PAUSE     CopyTo from SRC to DST, the same way
func child(open OpenFunc, f []string) int {
	ctx := context.Background()
	fail := func(err error) int {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	l, err := open(ctx, f[1])
	if err != nil {
		return fail(err)
	}
	defer l.Close()
	halfway := func(pause string) {
		fmt.Println("halfway")
		if pause == "1" {
			time.Sleep(time.Minute)
		}
	}
	switch f[0] {
	case "log":
		n, _ := strconv.Atoi(f[2])
		for i := 0; i < n; i++ {
			if _, err := l.CreateRun(ctx, GenRecord(i, ""), nil); err != nil {
				return fail(err)
			}
		}
	case "import":
		n, _ := strconv.Atoi(f[2])
		recs := make([]store.RunRecord, n)
		for i := range recs {
			recs[i] = GenRecord(i, "")
			recs[i].Code = fmt.Sprintf("X-%06d", i)
		}
		_, err := l.Import(ctx, store.Bundle{Runs: recs}, func(done int) {
			if done == n/2 {
				halfway(f[3])
			}
		})
		if err != nil {
			return fail(err)
		}
	case "copy":
		dst, err := open(ctx, f[2])
		if err != nil {
			return fail(err)
		}
		defer dst.Close()
		said := false
		_, err = l.CopyTo(ctx, dst, func(done, total int) {
			if !said && done >= total/2 {
				said = true
				halfway(f[3])
			}
		})
		if err != nil {
			return fail(err)
		}
	}
	return 0
}

func childCmd(t *testing.T, args ...string) *exec.Cmd {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe, "-test.run=^$")
	cmd.Env = append(os.Environ(), childEnv+"="+strings.Join(args, "\x1f"))
	return cmd
}

// Loggers starts procs processes that each log n runs (one transaction
// each) into the log at target at once, then checks that the log holds
// exactly procs×n runs more than before with distinct codes, and that no
// process saw an error (such as "database is locked").
func Loggers(t *testing.T, open OpenFunc, target string, procs, n int) {
	before := listCodes(t, open, target)
	var wg sync.WaitGroup
	outs := make([]string, procs)
	errs := make([]error, procs)
	for p := 0; p < procs; p++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			out, err := childCmd(t, "log", target, strconv.Itoa(n)).CombinedOutput()
			outs[p], errs[p] = string(out), err
		}()
	}
	wg.Wait()
	for p := range errs {
		if errs[p] != nil || outs[p] != "" {
			t.Errorf("process %d: %v\n%s", p, errs[p], outs[p])
		}
	}
	after := listCodes(t, open, target)
	distinct := map[string]bool{}
	for _, c := range after {
		distinct[c] = true
	}
	if want := len(before) + procs*n; len(after) != want || len(distinct) != want {
		t.Errorf("got %d runs with %d distinct codes, want %d and %d", len(after), len(distinct), want, want)
	}
}

func listCodes(t *testing.T, open OpenFunc, target string) []string {
	t.Helper()
	ctx := context.Background()
	l, err := open(ctx, target)
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	runs, err := l.List(ctx, store.Filter{})
	if err != nil {
		t.Fatal(err)
	}
	codes := make([]string, len(runs))
	for i, r := range runs {
		codes[i] = r.Code
	}
	return codes
}

// killAtHalfway starts a child, waits for its "halfway" and kills it with
// SIGKILL.
func killAtHalfway(t *testing.T, args ...string) {
	t.Helper()
	cmd := childCmd(t, args...)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, _ := bufio.NewReader(out).ReadString('\n')
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	if line != "halfway\n" {
		t.Fatalf("child said %q, want halfway", line)
	}
}

// KilledImport logs one run at target, then kills (SIGKILL) a process in
// the middle of an n-run import into it, with pause "1" (killed while it
// waits at half-way) and "0" (killed as soon as it says half-way, perhaps
// after it finished). The log must pass its checks and hold none of the
// import (or, had it finished, all of it).
func KilledImport(t *testing.T, open OpenFunc, target func(t *testing.T) string, n int) {
	for _, pause := range []string{"1", "0"} {
		t.Run("pause"+pause, func(t *testing.T) {
			t.Parallel()
			ctx := context.Background()
			tg := target(t)
			l, err := open(ctx, tg)
			if err != nil {
				t.Fatal(err)
			}
			if _, err := l.CreateRun(ctx, GenRecord(0, ""), nil); err != nil {
				t.Fatal(err)
			}
			l.Close()
			killAtHalfway(t, "import", tg, strconv.Itoa(n), pause)
			l, err = open(ctx, tg)
			if err != nil {
				t.Fatal(err)
			}
			defer l.Close()
			if probs, err := l.Check(ctx); err != nil || len(probs) != 0 {
				t.Errorf("check after kill: got %v, %v; want no problems", probs, err)
			}
			got := Count(t, l, "runs")
			if got != 1 && !(pause == "0" && got == n+1) {
				t.Errorf("runs after killed import: got %d, want 1 (none imported) or %d (all)", got, n+1)
			}
			if pause == "1" && got != 1 {
				t.Errorf("runs after kill at half-way: got %d, want 1", got)
			}
		})
	}
}

// KilledCopy fills a log at src with n runs, then kills (SIGKILL) a
// `db copy` process at half-way into the empty log at dst: dst must be
// empty afterwards and pass its checks, and a second copy must then
// succeed and give an identical export.
func KilledCopy(t *testing.T, open OpenFunc, src, dst string, n int) {
	ctx := context.Background()
	s, err := open(ctx, src)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	sn := store.NewSnapshot("demo", "demo.yaml", TestRecipe)
	recs := make([]store.RunRecord, n)
	for i := range recs {
		recs[i] = FullRecord(i, sn.SHA256)
	}
	if _, err := s.Import(ctx, store.Bundle{Snapshots: []store.Snapshot{sn}, Runs: recs}, nil); err != nil {
		t.Fatal(err)
	}
	d, err := open(ctx, dst)
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	empty := Fingerprint(t, d)
	killAtHalfway(t, "copy", src, dst, "1")
	if got := Fingerprint(t, d); got != empty {
		t.Errorf("target after a killed copy is not as empty as before:\n%.400s", got)
	}
	if probs, err := d.Check(ctx); err != nil || len(probs) != 0 {
		t.Errorf("check after killed copy: got %v, %v; want no problems", probs, err)
	}
	dg, err := s.CopyTo(ctx, d, nil)
	if err != nil {
		t.Fatal(err)
	}
	if dg.Runs() != n {
		t.Errorf("copy after the killed one: got %d runs, want %d", dg.Runs(), n)
	}
	if a, b := ExportJSON(t, s), ExportJSON(t, d); a != b {
		t.Errorf("export of the copy differs from the source's")
	}
}

// ExportJSON returns the log's whole JSON export.
func ExportJSON(t testing.TB, l store.RunLog) string {
	t.Helper()
	var b strings.Builder
	if _, err := store.WriteJSON(context.Background(), &b, l, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	return b.String()
}
