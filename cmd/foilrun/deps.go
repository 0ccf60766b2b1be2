package main

// Temporary: pins the dependencies that later issues use so go.mod stays
// complete while packages are written in parallel. Each line goes once
// its package is imported for real.
import (
	_ "github.com/jackc/pgx/v5/stdlib"
	_ "github.com/mattn/go-sqlite3"
	_ "github.com/rogpeppe/go-internal/testscript"
	_ "github.com/schollz/progressbar/v3"
	_ "golang.org/x/image/tiff"
	_ "gonum.org/v1/gonum/diff/fd"
	_ "gonum.org/v1/gonum/mat"
	_ "gonum.org/v1/gonum/optimize"
	_ "gonum.org/v1/plot"
	_ "gonum.org/v1/plot/plotter"
	_ "gonum.org/v1/plot/vg"
)
