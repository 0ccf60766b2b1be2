package main

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
)

func newDBCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "db",
		Short: "Look after the run-log database: backup, check, copy, migrate",
	}
	cmd.AddCommand(newDBBackupCmd(f), newDBCheckCmd(f), newDBCopyCmd(f), newDBMigrateCmd(f))
	return cmd
}

type dbBackupOptions struct {
	f     *factory
	file  string
	force bool
}

func newDBBackupCmd(f *factory) *cobra.Command {
	opts := &dbBackupOptions{f: f}
	cmd := &cobra.Command{
		Use:   "backup FILE",
		Short: "Write a consistent copy of the run log to a new file, while others may be logging",
		Long: `Write a consistent copy of the run log to FILE, a SQLite file, while others may
be logging. The copy is written under a temporary name in FILE's folder,
checked, and only then renamed to FILE, so an interrupted backup leaves no
FILE behind and can simply be run again.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.file = args[0]
			return dbBackupRun(cmd.Context(), opts)
		},
	}
	addForceFlag(cmd, &opts.force)
	return cmd
}

// dbBackupRun has the log write its backup to a fresh temporary path
// beside the target (outfile.Reserve) and renames it into place once it
// is written and checked.
func dbBackupRun(ctx context.Context, o *dbBackupOptions) error {
	g := o.f.guard(o.force)
	if err := checkOutput(o.file, g); err != nil {
		return err
	}
	l, err := o.f.runLog(ctx)
	if err != nil {
		return err
	}
	tmp, err := outfile.Reserve(o.file, g)
	if err != nil {
		return outputError(err)
	}
	if err := l.Backup(ctx, tmp.Path); err != nil {
		tmp.Abort()
		return fmt.Errorf("backup %q: %w", o.file, err)
	}
	if err := tmp.Commit(); err != nil {
		return outputError(err)
	}
	fmt.Fprintf(o.f.io.Err, "backup written to %s and checked\n", o.file)
	return nil
}

type dbCheckOptions struct {
	f      *factory
	repair bool // --repair: rebuild the derived tables first
}

func newDBCheckCmd(f *factory) *cobra.Command {
	opts := &dbCheckOptions{f: f}
	cmd := &cobra.Command{
		Use:   "check",
		Short: "Check the run log's integrity; exit 1 when problems are found",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return dbCheckRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().BoolVar(&opts.repair, "repair", false, "first rebuild what the log derives from its snapshots (the kinetics profiles fit reads)")
	return cmd
}

// repairs are what db check --repair rebuilds, in order: each returns how
// many rows it stored and what it could not rebuild.
var repairs = []struct {
	what string
	run  func(ctx context.Context, l store.RunLog) (int, []string, error)
}{
	{"run summaries", func(ctx context.Context, l store.RunLog) (int, []string, error) {
		// the store's own derived tables, rebuilt in one transaction
		if _, err := l.Repair(ctx); err != nil {
			return 0, nil, err
		}
		n, err := l.Count(ctx, store.Filter{})
		return n, nil, err
	}},
	{"kinetics profiles", func(ctx context.Context, l store.RunLog) (int, []string, error) {
		return lab.FillProfiles(ctx, l, true)
	}},
}

// repairLog runs the repairs on the log opened for writing, saying on status
// what each rebuilt.
func (o *dbCheckOptions) repairLog(ctx context.Context) (store.RunLog, error) {
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return nil, err
	}
	for _, r := range repairs {
		n, failed, err := r.run(ctx, l)
		if err != nil {
			return nil, fmt.Errorf("db check --repair: %s: %w", r.what, err)
		}
		for _, f := range failed {
			fmt.Fprintf(o.f.io.Err, "%s: not rebuilt for %s\n", r.what, f)
		}
		fmt.Fprintf(o.f.io.Err, "rebuilt %d %s\n", n, r.what)
	}
	return l, nil
}

func dbCheckRun(ctx context.Context, o *dbCheckOptions) error {
	l, err := o.f.runLog(ctx)
	if o.repair {
		l, err = o.repairLog(ctx)
	}
	if err != nil {
		return err
	}
	v, err := l.SchemaVersion(ctx)
	if err != nil {
		return err
	}
	probs, err := l.Check(ctx)
	if err != nil {
		return err
	}
	w := o.f.io.Out
	for _, p := range probs {
		fmt.Fprintln(w, p)
	}
	if len(probs) > 0 {
		fmt.Fprintf(w, "%d problems (schema version %d)\n", len(probs), v)
		return errFindings
	}
	fmt.Fprintf(w, "ok (schema version %d)\n", v)
	return nil
}

type dbCopyOptions struct {
	f        *factory
	from, to string
}

func newDBCopyCmd(f *factory) *cobra.Command {
	opts := &dbCopyOptions{f: f}
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
	src, err := openLog(ctx, o.from, readAccess, o.f.io.Err)
	if err != nil {
		return err
	}
	defer src.Close()
	dst, err := openLog(ctx, o.to, createAccess, o.f.io.Err)
	if err != nil {
		return err
	}
	bar := o.f.io.progress("copying runs")
	dg, err := src.CopyTo(ctx, dst, bar.report())
	bar.finish()
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
	fmt.Fprintf(o.f.io.Err, "copied %d runs and %d snapshots (recipe, furnace and site files) from %s to %s\n", dg.Counts["runs"], dg.Counts["snapshots"], shown(o.from), shown(o.to))
	fmt.Fprintf(o.f.io.Err, "verified: row counts equal in %d tables, content sha256 %s on both sides\n", len(dg.Counts), dg.SHA256)
	return nil
}

type dbMigrateOptions struct{ f *factory }

func newDBMigrateCmd(f *factory) *cobra.Command {
	opts := &dbMigrateOptions{f: f}
	return &cobra.Command{
		Use:   "migrate",
		Short: "Bring the run log's schema up to this foilrun's version",
		Long: `Bring the run log's schema up to this foilrun's version, one numbered migration
per transaction. Commands that only read never migrate; commands that log
migrate first. On PostgreSQL, run this as the role that owns the tables (it
needs CREATE on the schema); readers and writers need no such right.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return dbMigrateRun(cmd.Context(), opts)
		},
	}
}

func dbMigrateRun(ctx context.Context, o *dbMigrateOptions) error {
	l, err := o.f.writeLog(ctx)
	if err != nil {
		return err
	}
	v, err := l.SchemaVersion(ctx)
	if err != nil {
		return err
	}
	from := v
	if m, ok := l.(interface{ MigratedFrom() int }); ok {
		from = m.MigratedFrom()
	}
	if from == v {
		fmt.Fprintf(o.f.io.Err, "schema version %d: up to date\n", v)
		return nil
	}
	fmt.Fprintf(o.f.io.Err, "schema migrated from version %d to %d\n", from, v)
	return nil
}
