package main

// Temporary: pins every dependency the issues name so go.mod is complete
// while packages are written in parallel. Removed once each is imported.
import (
	_ "github.com/jackc/pgx/v5/stdlib"
	_ "github.com/mattn/go-sqlite3"
	_ "github.com/olekukonko/tablewriter"
	_ "github.com/schollz/progressbar/v3"
	_ "github.com/spf13/cobra"
	_ "golang.org/x/image/tiff"
	_ "golang.org/x/term"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/gonum/optimize"
	_ "gonum.org/v1/gonum/diff/fd"
	_ "gonum.org/v1/plot"
	_ "gonum.org/v1/plot/plotter"
	_ "gonum.org/v1/plot/vg"
	_ "gopkg.in/yaml.v3"
	_ "github.com/rogpeppe/go-internal/testscript"
)

func main() {}
