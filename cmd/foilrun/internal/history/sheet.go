package history

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"
)

// Sheet is a lab's table of runs: the headings of its first row and the
// rows under it.
type Sheet struct {
	File     string // the file's name, for messages and provenance
	Name     string // the XLSX sheet read; "" for CSV
	XLSX     bool   // cells are raw XLSX values (dates as serial numbers)
	Date1904 bool   // XLSX date serials count days from 1904-01-01, not from 1900
	Headings []string
	Rows     []Row
}

// Row is one data row: N is its row number in the sheet (the heading row
// is 1), Cells its cells in heading order, trimmed ("" when empty).
type Row struct {
	N     int
	Cells []string
}

// ReadSheet reads a CSV or XLSX sheet (by the file name's extension:
// .xlsx, else CSV) from r. sheet names the XLSX sheet (default the
// first); CSV files take none. CSV is comma-, semicolon- or tab-separated,
// as the heading row shows. Rows with no cell filled are skipped, keeping
// the numbering.
func ReadSheet(name string, r io.Reader, sheet string) (*Sheet, error) {
	s := &Sheet{File: filepath.Base(name)}
	var rows [][]string
	var err error
	if strings.EqualFold(filepath.Ext(name), ".xlsx") {
		s.XLSX = true
		rows, err = readXLSX(s, r, sheet)
	} else {
		if sheet != "" {
			return nil, invalid("", "sheet %q: --sheet %q: a CSV file has one sheet; give --sheet for an XLSX workbook only", s.File, sheet)
		}
		rows, err = readCSV(r)
	}
	if err != nil {
		return nil, fmt.Errorf("sheet %q: %w", s.label(), err)
	}
	if len(rows) == 0 || allEmpty(rows[0]) {
		return nil, invalid("the first row names the columns, each row under it is one run", "sheet %q: the sheet is empty (no heading row)", s.label())
	}
	for _, h := range rows[0] {
		s.Headings = append(s.Headings, strings.TrimSpace(h))
	}
	for i, cells := range rows[1:] {
		if allEmpty(cells) {
			continue
		}
		row := Row{N: i + 2, Cells: make([]string, len(s.Headings))}
		for j, c := range cells {
			if j < len(row.Cells) {
				row.Cells[j] = strings.TrimSpace(c)
			} else if strings.TrimSpace(c) != "" {
				return nil, invalid("", "sheet %q: row %d: cell %d %q has no heading above it", s.label(), row.N, j+1, c)
			}
		}
		s.Rows = append(s.Rows, row)
	}
	if len(s.Rows) == 0 {
		return nil, invalid("", "sheet %q: the sheet has headings but no rows", s.label())
	}
	return s, nil
}

// label is "file" or "file, sheet NAME".
func (s *Sheet) label() string {
	if s.Name == "" {
		return s.File
	}
	return s.File + ", sheet " + s.Name
}

func allEmpty(cells []string) bool {
	for _, c := range cells {
		if strings.TrimSpace(c) != "" {
			return false
		}
	}
	return true
}

func readXLSX(s *Sheet, r io.Reader, sheet string) ([][]string, error) {
	b, err := openBook(r)
	if err != nil {
		return nil, invalid(xlsxHint(err, "save the sheet as .xlsx, or as CSV with a .csv name"), "not an XLSX workbook (%v)", err)
	}
	list := make([]string, len(b.sheets))
	for i, bs := range b.sheets {
		list[i] = bs.name
	}
	if sheet == "" {
		if len(list) == 0 {
			return nil, invalid("", "the workbook has no sheet")
		}
		sheet = list[0]
	}
	s.Name = sheet
	s.Date1904 = b.date1904
	i, err := b.sheet(sheet)
	if err != nil {
		return nil, invalid("", "%v", err)
	}
	if i < 0 {
		return nil, invalid("", "no sheet %q; the workbook has %s", sheet, quoteList(list))
	}
	rows, err := b.rows(i)
	if err != nil {
		return nil, invalid(xlsxHint(err, "the file looks damaged: open it in its spreadsheet program and save it again as .xlsx, or save the sheet as CSV with a .csv name"), "read sheet %q: %v", sheet, err)
	}
	return rows, nil
}

// xlsxHint is what to do about an error of the XLSX reader: its own
// hint when it has one, else hint.
func xlsxHint(err error, hint string) string {
	var he *hintError
	if errors.As(err, &he) {
		return he.hint
	}
	return hint
}

func readCSV(r io.Reader) ([][]string, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, err
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf")) // a spreadsheet's UTF-8 byte-order mark
	first, _, _ := bytes.Cut(data, []byte("\n"))
	cr := csv.NewReader(bytes.NewReader(data))
	cr.Comma = ','
	if n := bytes.Count(first, []byte(";")); n > bytes.Count(first, []byte(",")) {
		cr.Comma = ';'
	} else if bytes.Count(first, []byte("\t")) > bytes.Count(first, []byte(",")) {
		cr.Comma = '\t'
	}
	cr.FieldsPerRecord = -1
	rows, err := cr.ReadAll()
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return nil, invalid("", "row %d col %d: %v", pe.StartLine, pe.Column, pe.Err)
		}
		return nil, invalid("", "%v", err)
	}
	return rows, nil
}

func quoteList(xs []string) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = fmt.Sprintf("%q", x)
	}
	return strings.Join(q, ", ")
}
