package main

import (
	"fmt"
	"io/fs"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/templates"
)

type newOptions struct {
	f     *factory
	kind  string
	from  string
	out   string
	list  bool
	force bool
}

func newNewCmd(f *factory) *cobra.Command {
	opts := &newOptions{f: f}
	cmd := &cobra.Command{
		Use:   "new recipe|furnace|site",
		Short: "Write a commented starting file from a template",
		Long: `Write a commented recipe, furnace or site file to start from. Without --from a
recipe comes from the low-pressure template. --list names the templates.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if opts.list {
				return cobra.NoArgs(cmd, args)
			}
			return cobra.ExactArgs(1)(cmd, args)
		},
		ValidArgs: []string{"recipe", "furnace", "site"},
		RunE: func(cmd *cobra.Command, args []string) error {
			if !opts.list {
				opts.kind = args[0]
				switch opts.kind {
				case "recipe", "furnace", "site":
				default:
					return usagef("new %q: want recipe, furnace or site", opts.kind)
				}
			}
			return newRun(opts)
		},
	}
	cmd.Flags().StringVar(&opts.from, "from", "", "template name (see --list)")
	cmd.Flags().StringVarP(&opts.out, "output-file", "o", "", "write to this file instead of standard output")
	cmd.Flags().BoolVar(&opts.list, "list", false, "list the templates")
	addForceFlag(cmd, &opts.force)
	return cmd
}

func newRun(opts *newOptions) error {
	if opts.list {
		t := table{Header: []string{"kind", "template", "file"}}
		for _, tp := range templates.List() {
			t.add(tp.Kind, tp.Name, tp.File)
		}
		return writeTable(opts.f.io.Out, t)
	}
	tp, ok := templates.Find(opts.kind, opts.from)
	if !ok {
		return withHint(usagef("no %s template named %q", opts.kind, opts.from), "foilrun new --list names them")
	}
	data, err := fs.ReadFile(templates.FS(), tp.File)
	if err != nil {
		return err
	}
	if opts.out == "" {
		_, err = opts.f.io.Out.Write(data)
		return err
	}
	if err := writeBytes(opts.out, opts.f.guard(opts.force), data); err != nil {
		return err
	}
	fmt.Fprintf(opts.f.io.Err, "wrote %s (from template %s)\n", opts.out, tp.Name)
	return nil
}
