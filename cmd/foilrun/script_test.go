package main

import (
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/rogpeppe/go-internal/testscript"

	"github.com/foilrun/foilrun/store"
)

// TestMain lets the testscript files below run "foilrun" as a command in
// this test binary.
func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"foilrun": func() { os.Exit(run(os.Args[1:], newStreams())) },
	})
}

// TestScripts runs the end-to-end command scripts in testdata/script:
// each pins a user-visible behaviour (exit status, message, output) of the
// real binary entry point, in a fresh working folder with the templates
// copied in as $TEMPLATES.
func TestScripts(t *testing.T) {
	tmpl, err := filepath.Abs("../../templates")
	if err != nil {
		t.Fatal(err)
	}
	testscript.Run(t, testscript.Params{
		Dir: "../../testdata/script",
		Setup: func(env *testscript.Env) error {
			env.Setenv("TEMPLATES", tmpl)
			env.Setenv("XDG_DATA_HOME", filepath.Join(env.WorkDir, "xdg"))
			env.Setenv("FOILRUN_DB", "")
			// Run codes carry the year they were logged in.
			env.Setenv("RUN1", store.FormatCode(time.Now(), 1))
			env.Setenv("RUN9999", store.FormatCode(time.Now(), 9999))
			return nil
		},
	})
}
