package main

import (
	"context"
	"fmt"
	"net"
	"os"
	"os/signal"
	"path/filepath"
	"syscall"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/web"
	"github.com/foilrun/foilrun/store/postgres"
)

type serveOptions struct {
	f        *factory
	listen   string
	readOnly bool
	tokens   string
	files    string
}

func newServeCmd(f *factory) *cobra.Command {
	opts := &serveOptions{f: f}
	cmd := &cobra.Command{
		Use:   "serve",
		Short: "Serve the run log to browsers on the lab's network",
		Long: `Serve the run log (--db) as web pages: the runs with the --where filter, one
run with its plan, outcomes, micrographs and notes, and its pre-run
checklist; /best and /rank (as runs best and runs rank), /fit (the model
fitted to the log now, as fit fits it) and /window (the predicted map of a
template's or a run's recipe with the logged runs on it). People add notes,
outcomes and micrographs unless
--read-only. It listens on loopback by default; any other address needs
--tokens FILE (one "name token" line per person, mode 600). It has no TLS of
its own: put it behind the lab's reverse proxy. Stop it with Ctrl-C.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return serveRun(cmd.Context(), opts)
		},
	}
	cmd.Flags().StringVar(&opts.listen, "listen", "127.0.0.1:8080", "address to listen on (host:port)")
	cmd.Flags().BoolVar(&opts.readOnly, "read-only", false, "refuse every write (notes, outcomes, uploads)")
	cmd.Flags().StringVar(&opts.tokens, "tokens", "", "file of the people allowed in: one \"name token\" line each (required off loopback)")
	cmd.Flags().StringVar(&opts.files, "files", "", "folder for uploaded micrographs (default beside the SQLite file, or in the user data folder)")
	return cmd
}

func serveRun(ctx context.Context, o *serveOptions) error {
	setGCPercent(100) // Go's default, for a process that runs for weeks
	loop, err := web.Loopback(o.listen)
	if err != nil {
		return usagef("--listen %q: %v; want host:port such as 127.0.0.1:8080", o.listen, err)
	}
	cfg := web.Config{ReadOnly: o.readOnly, Now: o.f.now, RequestLog: o.f.io.Err}
	if o.tokens != "" {
		if cfg.Tokens, err = web.LoadTokens(o.tokens); err != nil {
			return inputError(err)
		}
	} else if !loop {
		return withHint(usagef("--listen %q is not a loopback address: people on the network need tokens", o.listen),
			"give --tokens FILE with one \"name token\" line per person (chmod 600), or listen on 127.0.0.1")
	}
	if cfg.Files, err = o.filesDir(); err != nil {
		return err
	}
	if o.readOnly {
		cfg.Log, err = o.f.runLog(ctx)
	} else {
		cfg.Log, err = o.f.writeLog(ctx)
	}
	if err != nil {
		return err
	}
	srv, err := web.New(cfg)
	if err != nil {
		return err
	}
	ln, err := net.Listen("tcp", o.listen)
	if err != nil {
		return inputError(fmt.Errorf("listen on %s: %w", o.listen, err))
	}
	fmt.Fprintf(o.f.io.Err, "serving the run log on http://%s/ (Ctrl-C stops)\n", ln.Addr())
	ctx, stop := signal.NotifyContext(ctx, os.Interrupt, syscall.SIGTERM)
	defer stop()
	return web.Serve(ctx, ln, srv.Handler())
}

// filesDir is --files, else "files" beside a SQLite log, else the user
// data folder's foilrun/files.
func (o *serveOptions) filesDir() (string, error) {
	if o.files != "" {
		return o.files, nil
	}
	db, err := o.f.dbPath()
	if err != nil {
		return "", err
	}
	if !postgres.IsURL(db) {
		return filepath.Join(filepath.Dir(db), "files"), nil
	}
	dir, err := os.UserConfigDir()
	if d := os.Getenv("XDG_DATA_HOME"); d != "" {
		dir, err = d, nil
	}
	if err != nil {
		return "", withHint(fmt.Errorf("find a folder for uploads: %w", err), "give --files DIR")
	}
	return filepath.Join(dir, "foilrun", "files"), nil
}
