package main

import (
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/spf13/cobra"
)

// version is set at build time with -ldflags "-X main.version=v1.2.3";
// otherwise the module version or VCS revision from the build info is shown.
var version = ""

type versionOptions struct{ f *factory }

func newVersionCmd(f *factory) *cobra.Command {
	opts := &versionOptions{f: f}
	return &cobra.Command{
		Use:   "version",
		Short: "Print foilrun's version",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return versionRun(opts)
		},
	}
}

func versionRun(o *versionOptions) error {
	_, err := fmt.Fprintf(o.f.io.Out, "foilrun %s (%s, %s/%s)\n", versionString(), runtime.Version(), runtime.GOOS, runtime.GOARCH)
	return err
}

func versionString() string {
	if version != "" {
		return version
	}
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "devel"
	}
	if v := info.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	rev, dirty := "", false
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			dirty = s.Value == "true"
		}
	}
	if rev == "" {
		return "devel"
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if dirty {
		rev += "-dirty"
	}
	return "devel-" + rev
}
