// Package tabular holds the forms results take for scripts and
// spreadsheets, shared by the commands and the browser view: CSV with
// control characters escaped, indented JSON, and the columns of the run
// list (`runs list`, and serve's /runs.csv and /runs.json).
//
// Entry points: WriteCSV, WriteJSON, Escape, RunRows, WriteRuns.
package tabular

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"time"

	"github.com/foilrun/foilrun/store"
)

// Escape shows the control characters in s as escapes (\x1b, \x0d,
// \u202e), so that free text from the log or a file (a note, an operator's
// name, an imported code) cannot move the cursor, recolour the terminal,
// hide a line or reorder it when printed. Escaped: C0 controls except tab
// and line break (the renderers lay those out), DEL, C1 controls, and the
// Unicode bidirectional controls. JSON output and the database keep the
// text as it was.
func Escape(s string) string {
	if !strings.ContainsFunc(s, isControl) {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		switch {
		case !isControl(r):
			b.WriteRune(r)
		case r < 0x80:
			fmt.Fprintf(&b, `\x%02x`, r)
		default:
			fmt.Fprintf(&b, `\u%04x`, r)
		}
	}
	return b.String()
}

// isControl reports whether r is escaped by Escape.
func isControl(r rune) bool {
	switch {
	case r == '\t' || r == '\n':
		return false
	case r < 0x20, r == 0x7f, r >= 0x80 && r < 0xa0:
		return true
	case r == 0x061c, r == 0x200e, r == 0x200f, r >= 0x202a && r <= 0x202e, r >= 0x2066 && r <= 0x2069:
		return true // bidirectional marks, embeddings, overrides and isolates
	}
	return false
}

// WriteCSV writes a header row and the rows as CSV, every cell passed
// through Escape.
func WriteCSV(w io.Writer, header []string, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(escapeAll(header)); err != nil {
		return err
	}
	for _, row := range rows {
		if err := cw.Write(escapeAll(row)); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

func escapeAll(cells []string) []string {
	out := make([]string, len(cells))
	for i, c := range cells {
		out[i] = Escape(c)
	}
	return out
}

// WriteJSON writes v as JSON indented by two spaces, with a final line
// break.
func WriteJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// RunHeader is the columns of the run list.
var RunHeader = []string{"code", "status", "recipe", "furnace", "operator", "lot", "started", "ended"}

// RunRows returns the cells of the run list, one row per run in
// RunHeader's order.
func RunRows(runs []store.Run) [][]string {
	rows := make([][]string, 0, len(runs))
	for _, r := range runs {
		rows = append(rows, []string{r.Code, string(r.Status), r.RecipeName, r.Furnace, r.Operator, r.Lot, When(r.Started), When(r.Ended)})
	}
	return rows
}

// WriteRuns writes the run list as CSV (csv true) or as a JSON array of
// the runs (an empty one for none).
func WriteRuns(w io.Writer, runs []store.Run, csv bool) error {
	if csv {
		return WriteCSV(w, RunHeader, RunRows(runs))
	}
	if runs == nil {
		runs = []store.Run{}
	}
	return WriteJSON(w, runs)
}

// When formats a time in the local zone to the minute, "" for none.
func When(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	lt := t.Local()
	y, mo, d := lt.Date()
	h, mi, _ := lt.Clock()
	if y < 0 || y > 9999 {
		return lt.Format("2006-01-02 15:04")
	}
	// What Format("2006-01-02 15:04") gives, without parsing the layout
	// (a run list formats two times a row, thousands of rows).
	b := [16]byte{'0' + byte(y/1000), '0' + byte(y/100%10), '0' + byte(y/10%10), '0' + byte(y%10), '-',
		'0' + byte(mo/10), '0' + byte(mo%10), '-', '0' + byte(d/10), '0' + byte(d%10), ' ',
		'0' + byte(h/10), '0' + byte(h%10), ':', '0' + byte(mi/10), '0' + byte(mi%10)}
	return string(b[:])
}
