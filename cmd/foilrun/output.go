package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
)

// Output formats for --output.
const (
	formatTable = "table"
	formatCSV   = "csv"
	formatJSON  = "json"
)

// checkFormat validates an --output value.
func checkFormat(s string) error {
	switch s {
	case formatTable, formatCSV, formatJSON:
		return nil
	}
	return usagef("--output %q: want table, csv or json", s)
}

// table is a rectangular result: a header, rows of cells, and which
// columns hold numbers (right-aligned on screen).
type table struct {
	Header  []string
	Rows    [][]string
	Numeric []bool
}

func (t *table) add(cells ...string) { t.Rows = append(t.Rows, cells) }

// writeTable prints the table aligned with light rules for people.
func writeTable(w io.Writer, t table) error {
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

// writeCSV prints the table as CSV with a header row.
func writeCSV(w io.Writer, t table) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(t.Header); err != nil {
		return err
	}
	if err := cw.WriteAll(t.Rows); err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// writeJSON prints v as indented JSON.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// render writes t in the chosen format; JSON writes v instead, the
// structured form of the same result.
func render(w io.Writer, format string, t table, v any) error {
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
