package main

import (
	"image"
	"image/color"
	"image/png"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"sync"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"
)

// TestMain lets the testscript files below run "foilrun" as a command in
// this test binary.
func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"foilrun": func() {
			limitFileSize() // files_test.go: ulimit -f for the child processes that ask for it
			os.Exit(run(os.Args[1:], newStreams()))
		},
	})
}

// TestScripts runs the end-to-end command scripts in testdata/script:
// each pins a user-visible behaviour (exit status, message, output) of the
// real binary entry point, in a fresh working folder with the templates
// copied in as $TEMPLATES. Besides testscript's own commands a script may
// use runcode, squares and demolab (below).
func TestScripts(t *testing.T) {
	t.Parallel() // the scripts run foilrun as a child process, each in a folder of its own
	tmpl, err := filepath.Abs("../../templates")
	if err != nil {
		t.Fatal(err)
	}
	demo := &demoCache{dir: t.TempDir()}
	testscript.Run(t, testscript.Params{
		Dir: "../../testdata/script",
		Setup: func(env *testscript.Env) error {
			env.Setenv("TEMPLATES", tmpl)
			env.Setenv("XDG_DATA_HOME", filepath.Join(env.WorkDir, "xdg"))
			env.Setenv("FOILRUN_DB", "")
			return nil
		},
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			"runcode": cmdRunCode,
			"squares": cmdSquares,
			"demolab": demo.cmd,
		},
	})
}

// runCodePattern matches a run code as the log hands them out (store.FormatCode).
var runCodePattern = regexp.MustCompile(`\b[A-Z][A-Z0-9]*[0-9]{2}-[0-9]{4,}\b`)

// cmdRunCode is "runcode NAME": it sets $NAME to the first run code in
// the standard output of the last command, so scripts name the runs they
// log by what foilrun printed, whatever year the clock says.
func cmdRunCode(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: runcode NAME")
	}
	code := runCodePattern.FindString(ts.ReadFile("stdout"))
	if code == "" {
		ts.Fatalf("runcode: no run code in the last command's standard output")
	}
	ts.Setenv(args[0], code)
}

// cmdSquares is "squares FILE SIZE N SIDE": it writes a SIZE×SIZE 8-bit
// gray PNG micrograph with an N×N grid of dark (gray 60) squares of SIDE
// pixels on bright (gray 200) copper, each centred in its cell. By
// construction the coverage is N²·SIDE²/SIZE², there are N² domains, none
// touching the border, each of SIDE² pixels.
func cmdSquares(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 4 {
		ts.Fatalf("usage: squares FILE SIZE N SIDE")
	}
	var v [3]int
	for i, a := range args[1:] {
		n, err := strconv.Atoi(a)
		if err != nil || n <= 0 {
			ts.Fatalf("squares: %q is not a positive whole number", a)
		}
		v[i] = n
	}
	size, n, side := v[0], v[1], v[2]
	cell := size / n
	if side >= cell {
		ts.Fatalf("squares: %d squares of %d px do not fit apart in %d px", n, side, size)
	}
	img := image.NewGray(image.Rect(0, 0, size, size))
	for y := 0; y < size; y++ {
		for x := 0; x < size; x++ {
			img.SetGray(x, y, color.Gray{Y: 200})
		}
	}
	off := (cell - side) / 2
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			for y := 0; y < side; y++ {
				for x := 0; x < side; x++ {
					img.SetGray(j*cell+off+x, i*cell+off+y, color.Gray{Y: 60})
				}
			}
		}
	}
	f, err := os.Create(ts.MkAbs(args[0]))
	ts.Check(err)
	ts.Check(png.Encode(f, img))
	ts.Check(f.Close())
}

// demoCache is the lab that "foilrun demo lab" lays out, made once for all
// the scripts that start from it (demolab) rather than once per script;
// demo.txtar still runs the demo itself and checks what it prints.
type demoCache struct {
	dir  string // the folder the demo ran in; the lab is dir/lab
	once sync.Once
	out  string // the demo's output when it failed
	err  error
}

// cmd is "demolab": it lays out the demo lab as "exec foilrun demo lab"
// does in the script's folder, by copying the lab of one demo run, file
// for file. The demo ran as the scripts run it (a child foilrun, in a
// folder of its own, with the argument "lab"), so every path it wrote
// into the lab and its log reads as it would; the demo is seeded, so its
// lab does not depend on which script ran it first.
func (c *demoCache) cmd(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 0 {
		ts.Fatalf("usage: demolab")
	}
	c.once.Do(func() {
		cmd := exec.Command("foilrun", "demo", "lab")
		cmd.Dir = c.dir
		cmd.Env = append(os.Environ(), "FOILRUN_DB=", "XDG_DATA_HOME="+filepath.Join(c.dir, "xdg"))
		out, err := cmd.CombinedOutput()
		c.out, c.err = string(out), err
	})
	if c.err != nil {
		ts.Fatalf("demolab: foilrun demo lab: %v\n%s", c.err, c.out)
	}
	src := filepath.Join(c.dir, "lab")
	ts.Check(filepath.WalkDir(src, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, err := filepath.Rel(src, path)
		if err != nil {
			return err
		}
		dst := ts.MkAbs(filepath.Join("lab", rel))
		info, err := d.Info()
		if err != nil {
			return err
		}
		if d.IsDir() {
			return os.MkdirAll(dst, info.Mode().Perm())
		}
		data, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		return os.WriteFile(dst, data, info.Mode().Perm())
	}))
}
