package main

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
	"github.com/foilrun/foilrun/recipe"
)

// outputFormat is the value of --output: table (for people), csv or json
// (for scripts). It is a pflag.Value, so a bad value is refused while the
// flags are parsed.
type outputFormat string

// The --output values. The constants are untyped so that they also
// compare with plain strings.
const (
	formatTable = "table"
	formatCSV   = "csv"
	formatJSON  = "json"
)

var outputFormats = []string{formatTable, formatCSV, formatJSON}

// Set accepts table, csv or json.
func (o *outputFormat) Set(s string) error {
	if !slices.Contains(outputFormats, s) {
		return &flagValueError{flag: "--output", value: s, want: "table, csv or json"}
	}
	*o = outputFormat(s)
	return nil
}

func (o *outputFormat) String() string { return string(*o) }

// Type names the value in --help.
func (o *outputFormat) Type() string { return "format" }

// addOutputFlag registers --output (no shorthand: -o names a file) with
// the default table.
func addOutputFlag(cmd *cobra.Command, o *outputFormat) {
	*o = formatTable
	cmd.Flags().Var(o, "output", "output format: "+strings.Join(outputFormats, ", "))
}

// flagValueError is a flag value refused by its type's Set; the root's
// flag-error function reports it as it is, without the flag library's
// "invalid argument" wrapping.
type flagValueError struct {
	flag, value, want string
}

func (e *flagValueError) Error() string {
	return fmt.Sprintf("%s %q: want %s", e.flag, e.value, e.want)
}

// outWriter is standard output as the commands see it: it knows whether
// it is a terminal, so that tables choose their form.
type outWriter struct {
	io.Writer
	tty bool
}

// isTerminal reports whether w is standard output on a terminal.
func isTerminal(w io.Writer) bool {
	o, ok := w.(*outWriter)
	return ok && o.tty
}

// table is a rectangular result: a header, rows of cells, and which
// columns hold numbers (right-aligned on screen).
type table struct {
	Header  []string
	Rows    [][]string
	Numeric []bool
}

func (t *table) add(cells ...string) { t.Rows = append(t.Rows, cells) }

// escaped is t with every cell passed through escapeControl.
func (t table) escaped() table {
	out := t
	out.Header = escapeAll(t.Header)
	out.Rows = make([][]string, len(t.Rows))
	for i, row := range t.Rows {
		out.Rows[i] = escapeAll(row)
	}
	return out
}

func escapeAll(cells []string) []string {
	out := make([]string, len(cells))
	for i, c := range cells {
		out[i] = escapeControl(c)
	}
	return out
}

// escapeControl shows the control characters in s as escapes
// (tabular.Escape).
func escapeControl(s string) string { return tabular.Escape(s) }

// writeTable prints the table for people: aligned with light rules on a
// terminal, tab-separated with the header row when standard output is
// piped (so that cut, awk and spreadsheets read it).
func writeTable(w io.Writer, t table) error {
	if !isTerminal(w) {
		return writeTSV(w, t)
	}
	t = t.escaped()
	if ok, err := tabular.Boxed(w, t.Header, t.Rows, t.Numeric); ok || err != nil {
		return err
	}
	return writeBoxed(w, t)
}

// writeBoxed draws the table with tablewriter: the general writer, for a
// table whose cells tabular.Boxed does not take (text beyond ASCII, line
// breaks, ragged rows).
func writeBoxed(w io.Writer, t table) error {
	align := make([]tw.Align, len(t.Header))
	for i := range align {
		align[i] = tw.AlignLeft
		if i < len(t.Numeric) && t.Numeric[i] {
			align[i] = tw.AlignRight
		}
	}
	r := renderer.NewBlueprint(tw.Rendition{Symbols: tw.NewSymbols(tw.StyleLight)})
	tb := tablewriter.NewTable(w, tablewriter.WithRenderer(r), tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithHeaderAlignment(tw.AlignLeft))
	tb.Header(toAny(t.Header)...)
	if err := tb.Bulk(t.Rows); err != nil {
		return err
	}
	return tb.Render()
}

func toAny(ss []string) []any {
	out := make([]any, len(ss))
	for i, s := range ss {
		out[i] = s
	}
	return out
}

// writeTSV prints the header and rows tab-separated; tabs and line breaks
// inside a cell become spaces. A cell of printable ASCII, which neither
// needs, is written as it is.
func writeTSV(w io.Writer, t table) error {
	clean := strings.NewReplacer("\t", " ", "\r\n", " ", "\n", " ")
	bw := bufio.NewWriterSize(w, 64<<10)
	for _, row := range append([][]string{t.Header}, t.Rows...) {
		for i, c := range row {
			if i > 0 {
				bw.WriteByte('\t')
			}
			if !printableASCII(c) {
				c = escapeControl(clean.Replace(c))
			}
			bw.WriteString(c)
		}
		if err := bw.WriteByte('\n'); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// printableASCII reports whether s holds only bytes from space to tilde.
func printableASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < ' ' || s[i] > '~' {
			return false
		}
	}
	return true
}

// writeCSV prints the table as CSV with a header row, control characters
// escaped (tabular.WriteCSV).
func writeCSV(w io.Writer, t table) error { return tabular.WriteCSV(w, t.Header, t.Rows) }

// writeJSON prints v as indented JSON.
func writeJSON(w io.Writer, v any) error { return tabular.WriteJSON(w, v) }

// render writes t in the chosen format; JSON writes v instead, the
// structured form of the same result.
func render(w io.Writer, format outputFormat, t table, v any) error {
	switch format {
	case formatCSV:
		return writeCSV(w, t)
	case formatJSON:
		return writeJSON(w, v)
	default:
		return writeTable(w, t)
	}
}

// heading prints a section title for human output.
func heading(w io.Writer, s string) {
	fmt.Fprintf(w, "\n%s\n%s\n", s, strings.Repeat("=", len([]rune(s))))
}

// num formats a number compactly with g-style precision p; "" for NaN.
func num(v float64, p int) string {
	if v != v {
		return ""
	}
	return strings.TrimSpace(fmt.Sprintf("%.*g", p, v))
}

// fixed formats a number with d decimals; "" for NaN.
func fixed(v float64, d int) string {
	if v != v {
		return ""
	}
	return fmt.Sprintf("%.*f", d, v)
}

// inUnit expresses an SI value in a unit for output (recipe.In); NaN when
// there is no finite value to show.
func inUnit(si float64, unit string) float64 {
	v, err := recipe.In(si, unit)
	if err != nil {
		return math.NaN()
	}
	return v
}
