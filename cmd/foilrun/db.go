package main

import (
	"fmt"

	"github.com/spf13/cobra"
)

func newDBCmd(f *factory) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "db",
		Short: "Look after the run-log database: backup, check",
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
	})
	return cmd
}
