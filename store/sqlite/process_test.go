package sqlite

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
const childEnv = "FOILRUN_STORE_TEST_CHILD"

func TestMain(m *testing.M) {
	if mode := os.Getenv(childEnv); mode != "" {
		os.Exit(child(mode))
	}
	os.Exit(m.Run())
}

// child runs "log PATH N" (N runs, one transaction each) or "import PATH
// N PAUSE" (one N-run import that prints "halfway" half-way through and,
// when PAUSE is 1, then waits to be killed).
func child(mode string) int {
	f := strings.Fields(mode)
	ctx := context.Background()
	db, err := Open(ctx, f[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	defer db.Close()
	n, _ := strconv.Atoi(f[2])
	switch f[0] {
	case "log":
		for i := 0; i < n; i++ {
			if _, err := db.CreateRun(ctx, genRecord(i, ""), nil); err != nil {
				fmt.Fprintln(os.Stderr, err)
				return 1
			}
		}
	case "import":
		recs := make([]store.RunRecord, n)
		for i := range recs {
			recs[i] = genRecord(i, "")
			recs[i].Code = fmt.Sprintf("X-%06d", i)
		}
		_, err := db.Import(ctx, store.Bundle{Runs: recs}, func(done int) {
			if done == n/2 {
				fmt.Println("halfway")
				if f[3] == "1" {
					time.Sleep(time.Minute)
				}
			}
		})
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
	}
	return 0
}

func childCmd(t *testing.T, args string) *exec.Cmd {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe, "-test.run=^$")
	cmd.Env = append(os.Environ(), childEnv+"="+args)
	return cmd
}

// TestConcurrentProcesses: 4 processes each log 250 runs at once; the log
// ends with exactly 1000 runs with 1000 distinct codes and no process saw
// "database is locked".
func TestConcurrentProcesses(t *testing.T) {
	db, path := openTemp(t)
	db.Close()
	var wg sync.WaitGroup
	outs := make([]string, 4)
	errs := make([]error, 4)
	for p := 0; p < 4; p++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			out, err := childCmd(t, "log "+path+" 250").CombinedOutput()
			outs[p], errs[p] = string(out), err
		}()
	}
	wg.Wait()
	for p := range errs {
		if errs[p] != nil || strings.Contains(outs[p], "locked") {
			t.Errorf("process %d: %v\n%s", p, errs[p], outs[p])
		}
	}
	db2, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	defer db2.Close()
	var n, distinct int
	db2.SQL().QueryRow("SELECT COUNT(*), COUNT(DISTINCT code) FROM runs").Scan(&n, &distinct)
	if n != 1000 || distinct != 1000 {
		t.Errorf("runs %d, distinct codes %d; want 1000 and 1000", n, distinct)
	}
}

// TestKilledImport: a process killed (SIGKILL) in the middle of a
// 10,000-run import leaves a log that passes its checks and holds none of
// the import (or, had it finished, all of it).
func TestKilledImport(t *testing.T) {
	for _, pause := range []string{"1", "0"} {
		t.Run("pause"+pause, func(t *testing.T) {
			db, path := openTemp(t)
			if _, err := db.CreateRun(context.Background(), genRecord(0, ""), nil); err != nil {
				t.Fatal(err)
			}
			db.Close()
			cmd := childCmd(t, "import "+path+" 10000 "+pause)
			out, err := cmd.StdoutPipe()
			if err != nil {
				t.Fatal(err)
			}
			cmd.Stderr = os.Stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			line, _ := bufio.NewReader(out).ReadString('\n')
			if line != "halfway\n" {
				t.Fatalf("child said %q, want halfway", line)
			}
			cmd.Process.Signal(syscall.SIGKILL)
			cmd.Wait()
			ctx := context.Background()
			db2, err := Open(ctx, path)
			if err != nil {
				t.Fatal(err)
			}
			defer db2.Close()
			if probs, err := db2.Check(ctx); err != nil || len(probs) != 0 {
				t.Errorf("check after kill: %v %v", probs, err)
			}
			n := countRuns(t, db2)
			if n != 1 && !(pause == "0" && n == 10001) {
				t.Errorf("runs after killed import: %d, want 1 (none imported) or 10001 (all)", n)
			}
			if pause == "1" && n != 1 {
				t.Errorf("runs after kill at half-way: %d, want 1", n)
			}
		})
	}
}
