// Package furnacelog reads a furnace controller's CSV log (time,
// temperature, pressure and per-gas flows, in the columns and units the
// furnace file's controller_log mapping names), lines it up with the
// recipe's planned steps and reports per-step actuals and the deviations
// from plan beyond tolerances. Values are SI internally (s, K, Pa, mol/s).
//
// Entry points: Read, Match.
package furnacelog

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// Log is a furnace log in SI: time from the first row (s), temperature
// (K), pressure (Pa; nil without a pressure column) and flows (mol/s) by
// gas symbol; Line holds each row's line number in the file.
type Log struct {
	Time  []float64
	T     []float64
	P     []float64
	Flows map[string][]float64
	Line  []int
}

// Error is a problem at a place in the log file. Col is the 1-based
// column (field) number, 0 for the whole line.
type Error struct {
	File      string
	Line, Col int
	Msg       string
}

func (e *Error) Error() string {
	switch {
	case e.Line > 0 && e.Col > 0:
		return fmt.Sprintf("furnace log %q: line %d col %d: %s", e.File, e.Line, e.Col, e.Msg)
	case e.Line > 0:
		return fmt.Sprintf("furnace log %q: line %d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("furnace log %q: %s", e.File, e.Msg)
}

// Unwrap makes errors.Is(err, recipe.ErrInvalid) true: the log's content
// is wrong.
func (e *Error) Unwrap() error { return recipe.ErrInvalid }

// column is one mapped column: where it is and how to turn its numbers
// into SI (si = v·scale + offset).
type column struct {
	what          string // "time", "temperature", "pressure", "flow CH4"
	name, unit    string
	dim           recipe.Dimension
	idx           int
	scale, offset float64
	into          *[]float64
}

// Read parses the CSV log with the furnace's column layout. Header cells
// match the layout's column names exactly, or with the unit appended in
// brackets ("T_zone [C]" or "T_zone (C)"); a bracketed unit that differs
// from the layout's is an error. Lines starting with # are comments.
// Every mapped cell must be a number and time must increase row by row.
func Read(r io.Reader, file string, layout *recipe.LogLayout) (*Log, error) {
	fail := func(line, col int, format string, args ...any) error {
		return &Error{file, line, col, fmt.Sprintf(format, args...)}
	}
	if layout == nil {
		return nil, fail(0, 0, "the furnace file has no controller_log mapping; add one naming the log's time, temperature, pressure and flow columns")
	}
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("furnace log %q: %w", file, err)
	}
	data = bytes.TrimPrefix(data, []byte("\ufeff"))
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, fail(0, 0, "the file is empty; want a header row and one row per sample")
	}
	cr := csv.NewReader(bytes.NewReader(data))
	cr.Comma = sniff(data)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err != nil {
		return nil, csvError(file, err)
	}
	hline, _ := cr.FieldPos(0)
	lg := &Log{Flows: map[string][]float64{}}
	cols := []*column{
		{what: "time", name: layout.Time.Column, unit: layout.Time.Unit, dim: recipe.Duration, into: &lg.Time},
		{what: "temperature", name: layout.Temperature.Column, unit: layout.Temperature.Unit, dim: recipe.Temperature, into: &lg.T},
	}
	if layout.Pressure.Column != "" {
		cols = append(cols, &column{what: "pressure", name: layout.Pressure.Column, unit: layout.Pressure.Unit, dim: recipe.Pressure, into: &lg.P})
	}
	gases := make([]string, 0, len(layout.Flows))
	for g := range layout.Flows {
		gases = append(gases, g)
	}
	sort.Strings(gases)
	flows := make([][]float64, len(gases))
	for i, g := range gases {
		c := layout.Flows[g]
		cols = append(cols, &column{what: "flow " + g, name: c.Column, unit: c.Unit, dim: recipe.Flow, into: &flows[i]})
	}
	for _, c := range cols {
		c.idx = -1
		for i, h := range header {
			name, unit := splitHeader(h)
			if name != c.name {
				continue
			}
			if unit != "" && unit != c.unit {
				return nil, fail(hline, i+1, "column %q is in %s, the furnace file's controller_log says %s", c.name, unit, c.unit)
			}
			c.idx = i
			break
		}
		if c.idx < 0 {
			return nil, fail(hline, 0, "no column %q (the %s column in the furnace file's controller_log); the header has: %s", c.name, c.what, strings.Join(header, ", "))
		}
		zero, err0 := recipe.Parse("0 "+c.unit, c.dim)
		one, err1 := recipe.Parse("1 "+c.unit, c.dim)
		if err := errors.Join(err0, err1); err != nil {
			return nil, fail(hline, c.idx+1, "column %q: unit %q: %v", c.name, c.unit, err)
		}
		c.offset, c.scale = zero.SI, one.SI-zero.SI
	}
	for {
		row, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, csvError(file, err)
		}
		line, _ := cr.FieldPos(0)
		if len(row) == 1 && strings.TrimSpace(row[0]) == "" {
			continue
		}
		for _, c := range cols {
			if c.idx >= len(row) {
				return nil, fail(line, 0, "%d cells, the header has %d (no %s column %q in this row)", len(row), len(header), c.what, c.name)
			}
			cell := strings.TrimSpace(row[c.idx])
			v, err := strconv.ParseFloat(cell, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fail(line, c.idx+1, "%s %q: %q is not a number", c.what, c.name, cell)
			}
			*c.into = append(*c.into, v*c.scale+c.offset)
		}
		n := len(lg.Time)
		if n > 1 && !(lg.Time[n-1] > lg.Time[n-2]) {
			return nil, fail(line, cols[0].idx+1, "time %s %s is not after the previous row's %s %s; the log must be in time order without repeats",
				row[cols[0].idx], cols[0].unit, strconv.FormatFloat((lg.Time[n-2]-cols[0].offset)/cols[0].scale, 'g', -1, 64), cols[0].unit)
		}
		lg.Line = append(lg.Line, line)
	}
	if len(lg.Time) == 0 {
		return nil, fail(hline, 0, "the log has a header but no rows of samples")
	}
	t0 := lg.Time[0]
	for i := range lg.Time {
		lg.Time[i] -= t0
	}
	for i, g := range gases {
		lg.Flows[g] = flows[i]
	}
	return lg, nil
}

// splitHeader splits "T_zone [C]" or "T_zone (C)" into name and unit.
func splitHeader(h string) (name, unit string) {
	h = strings.TrimSpace(h)
	for _, br := range []string{"[]", "()"} {
		if strings.HasSuffix(h, br[1:]) {
			if i := strings.LastIndex(h, br[:1]); i > 0 {
				return strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1 : len(h)-1])
			}
		}
	}
	return h, ""
}

// sniff picks the delimiter from the first line that is not a comment:
// ; or tab when the line holds no comma.
func sniff(data []byte) rune {
	br := bufio.NewReader(bytes.NewReader(data))
	line, err := br.ReadString('\n')
	for strings.HasPrefix(line, "#") && err == nil {
		line, err = br.ReadString('\n')
	}
	if strings.Contains(line, ",") {
		return ','
	}
	if strings.Contains(line, ";") {
		return ';'
	}
	if strings.Contains(line, "\t") {
		return '\t'
	}
	return ','
}

func csvError(file string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{file, pe.Line, pe.Column, pe.Err.Error()}
	}
	return &Error{file, 0, 0, err.Error()}
}
