package main

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
)

func newDBCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "db",
		Short: "Look after the run-log database: backup, check, copy",
	}
	cmd.AddCommand(&cobra.Command{
		Use:   "backup FILE",
		Short: "Write a consistent copy of the run log to a new file, while others may be logging",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			l, err := f.runLog(cmd.Context())
			if err != nil {
				return err
			}
			if err := l.Backup(cmd.Context(), args[0]); err != nil {
				return err
			}
			fmt.Fprintf(f.io.Err, "backup written to %s and checked\n", args[0])
			return nil
		},
	}, &cobra.Command{
		Use:   "check",
		Short: "Check the run log's integrity; exit 1 when problems are found",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			l, err := f.runLog(cmd.Context())
			if err != nil {
				return err
			}
			v, err := l.SchemaVersion(cmd.Context())
			if err != nil {
				return err
			}
			probs, err := l.Check(cmd.Context())
			if err != nil {
				return err
			}
			for _, p := range probs {
				fmt.Fprintln(f.io.Out, p)
			}
			if len(probs) > 0 {
				fmt.Fprintf(f.io.Out, "%d problems (schema version %d)\n", len(probs), v)
				return errFindings
			}
			fmt.Fprintf(f.io.Out, "ok (schema version %d)\n", v)
			return nil
		},
	}, newDBCopyCmd(f))
	return cmd
}

type dbCopyOptions struct {
	io       *streams
	from, to string
}

func newDBCopyCmd(f *factory) *cobra.Command {
	opts := &dbCopyOptions{io: f.io}
	cmd := &cobra.Command{
		Use:   "copy --from SRC --to DST",
		Short: "Copy a whole run log between a SQLite file and a PostgreSQL database, all or nothing, verified",
		Long: `Copy every run, recipe snapshot and run-code counter from SRC to DST, each a SQLite
file path or a postgres:// URL. DST must be empty (a new file, or a database without
runs); the copy is one transaction on DST, read back and compared with SRC by row
counts and a SHA-256 over the content before it is committed, so DST ends up either
complete or as empty as it was.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.from == "" || opts.to == "" {
				return usagef("db copy: give both --from and --to")
			}
			if opts.from == opts.to {
				return usagef("db copy: --from and --to are both %s", shown(opts.from))
			}
			return dbCopyRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.from, "from", "", "source run log (file path or postgres:// URL)")
	cmd.Flags().StringVar(&opts.to, "to", "", "target run log, empty (file path or postgres:// URL)")
	return cmd
}

func dbCopyRun(ctx context.Context, o *dbCopyOptions) error {
	if !postgres.IsURL(o.from) {
		if _, err := os.Stat(o.from); err != nil {
			return withHint(fmt.Errorf("db copy: source %q: %w", o.from, err), "give an existing run-log file or a postgres:// URL with --from")
		}
	}
	created := false
	if !postgres.IsURL(o.to) {
		_, err := os.Stat(o.to)
		created = errors.Is(err, fs.ErrNotExist)
	}
	src, err := openLog(ctx, o.from)
	if err != nil {
		return err
	}
	defer src.Close()
	dst, err := openLog(ctx, o.to)
	if err != nil {
		return err
	}
	var bar *progressbar.ProgressBar
	progress := func(done, total int) {
		if bar == nil {
			bar = progressbar.NewOptions(total, progressbar.OptionSetWriter(o.io.Err), progressbar.OptionSetDescription("copying runs"),
				progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish())
		}
		bar.Set(done)
	}
	if !o.io.ErrTTY {
		progress = nil
	}
	dg, err := src.CopyTo(ctx, dst, progress)
	if bar != nil {
		bar.Finish()
	}
	if err == nil {
		// afterwards, from a fresh read of the committed target
		var after store.Digest
		if after, err = dst.Digest(ctx); err == nil && after.Diff(dg) != "" {
			err = fmt.Errorf("db copy: the committed copy reads back differently: %s", after.Diff(dg))
		}
	}
	cerr := dst.Close()
	if err != nil {
		if created {
			for _, suffix := range []string{"", "-wal", "-shm"} {
				os.Remove(o.to + suffix)
			}
		}
		if errors.Is(err, store.ErrConflict) {
			return withHint(err, "copy into a new file or an empty database; a log is never merged by db copy (use runs export and runs import)")
		}
		return err
	}
	if cerr != nil {
		return cerr
	}
	fmt.Fprintf(o.io.Out, "copied %d runs and %d recipe snapshots from %s to %s\n", dg.Counts["runs"], dg.Counts["snapshots"], shown(o.from), shown(o.to))
	fmt.Fprintf(o.io.Out, "verified: row counts equal in %d tables, content sha256 %s on both sides\n", len(dg.Counts), dg.SHA256)
	return nil
}
