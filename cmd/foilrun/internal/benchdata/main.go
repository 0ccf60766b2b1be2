// Command benchdata writes the data .ci/bench times foilrun on, from the
// project's own generators:
//
//	benchdata micrograph OUT.png     a 4096×4096 8-bit micrograph (demolab.Micrograph)
//	benchdata runlog OUT.db          the 100,000-run benchmark log (storetest.BenchBundle) in SQLite
//	benchdata runlog postgres://…    the same log in a PostgreSQL database
//	benchdata fitlog DIR             a demo lab in DIR and its 5,000-run fit log DIR/fit.db (fitlog.Bundle)
//	benchdata observations DB OUT    the observations fit fits on DB (its default settings) as CSV, for the scipy reference
//	benchdata ontty N CMD ARGS…      runs CMD N times on a fresh pseudo-terminal and prints its min and median seconds
//
// It is a tool for the benchmark script, not part of foilrun.
package main

import (
	"context"
	"fmt"
	"image/png"
	"os"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
	"github.com/foilrun/foilrun/store/sqlite"
	"github.com/foilrun/foilrun/store/storetest"
)

func main() {
	if len(os.Args) < 3 {
		fmt.Fprintln(os.Stderr, "usage: benchdata micrograph OUT.png | runlog OUT.db|postgres://URL | fitlog DIR | observations DB OUT.csv | ontty N CMD ARGS...")
		os.Exit(2)
	}
	var err error
	switch os.Args[1] {
	case "micrograph":
		err = writeMicrograph(os.Args[2])
	case "runlog":
		err = writeRunLog(context.Background(), os.Args[2])
	case "fitlog":
		err = writeFitLog(context.Background(), os.Args[2])
	case "ontty":
		n, convErr := strconv.Atoi(os.Args[2])
		if convErr != nil || n < 1 || len(os.Args) < 4 {
			err = fmt.Errorf("ontty needs a count of at least 1 and a command")
			break
		}
		err = onTTY(n, os.Args[3:])
	case "observations":
		if len(os.Args) != 4 {
			err = fmt.Errorf("observations needs the run log and the CSV file to write")
			break
		}
		err = writeObservations(context.Background(), os.Args[2], os.Args[3])
	default:
		err = fmt.Errorf("unknown data %q: want micrograph, runlog, fitlog, observations or ontty", os.Args[1])
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "benchdata:", err)
		os.Exit(1)
	}
}

// Side and domain layout of the benchmark micrograph: 4096² pixels with
// 4,000 hexagonal domains of circumradius 24 pixels, about 33 % covered.
const (
	micrographSide = 4096
	micrographN    = 4000
	micrographR    = 24
	micrographSeed = 18
)

func writeMicrograph(path string) error {
	img, truth := demolab.Micrograph(micrographSide, micrographSide, micrographN, micrographR, micrographSeed)
	fh, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := png.Encode(fh, img); err != nil {
		fh.Close()
		return fmt.Errorf("write %q: %w", path, err)
	}
	fmt.Fprintf(os.Stderr, "wrote %s: %d×%d, true coverage %.4f\n", path, micrographSide, micrographSide, truth)
	return fh.Close()
}

func writeRunLog(ctx context.Context, dst string) error {
	var (
		l   store.RunLog
		err error
	)
	if strings.HasPrefix(dst, "postgres://") || strings.HasPrefix(dst, "postgresql://") {
		var db *postgres.DB
		if db, err = postgres.Open(ctx, dst); err == nil {
			db.SetClock(storetest.BenchNow)
			l = db
		}
	} else {
		var db *sqlite.DB
		if db, err = sqlite.Open(ctx, dst); err == nil {
			db.SetClock(storetest.BenchNow)
			l = db
		}
	}
	if err != nil {
		return fmt.Errorf("open run log %q: %w", dst, err)
	}
	defer l.Close()
	if _, err := l.Import(ctx, storetest.BenchBundle(), nil); err != nil {
		return fmt.Errorf("import the benchmark log into %q: %w", dst, err)
	}
	return nil
}
