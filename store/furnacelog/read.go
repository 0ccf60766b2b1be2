// Package furnacelog reads a furnace controller's CSV log (time,
// temperature from one or more thermocouples, pressure and per-gas flows,
// in the columns, units, time format, decimal mark and delimiter the
// furnace file's controller_log mapping names), lines it up with the
// recipe's planned steps (finding where in the plan a log that covers
// only part of the run starts), and reports per-step actuals and the
// deviations from plan beyond tolerances, the leak check judged from the
// pressure rise. Values are SI internally (s, K, Pa, mol/s).
//
// Entry points: Read, Match.
package furnacelog

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/foilrun/foilrun/recipe"
)

// DefaultMaxBytes is the largest log Read accepts unless told otherwise:
// 1 GiB, some ten million rows of a six-column log.
const DefaultMaxBytes int64 = 1 << 30

// ReadOptions tune Read. The zero value reads up to DefaultMaxBytes.
type ReadOptions struct {
	// MaxBytes is the largest number of bytes read; a longer log is
	// refused. 0 means DefaultMaxBytes.
	MaxBytes int64
}

// Log is a furnace log in SI: time from the first row (s), the control
// thermocouple's temperature (K), the other thermocouples, pressure (Pa;
// nil without a pressure column) and actual flows (mol/s of the line's
// gas, calibration-gas readings already converted) by gas symbol; Line
// holds each row's line number in the file.
type Log struct {
	Time          []float64
	T             []float64
	Thermocouples []Thermocouple
	P             []float64
	Flows         map[string][]float64
	Line          []int
	File          string // the name Read was given, for messages
}

// Thermocouple is a temperature column other than the control one.
type Thermocouple struct {
	Column, Role string
	T            []float64 // K, one per row
}

// Error is a problem at a place in the log file. Col is the 1-based
// column (field) number, 0 for the whole line.
type Error struct {
	File      string
	Line, Col int
	Msg       string
	Advice    string // what to do, or ""
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

// Hint says what to do about the problem ("" when the message says it).
func (e *Error) Hint() string { return e.Advice }

// Unwrap makes errors.Is(err, recipe.ErrInvalid) true: the log's content
// is wrong.
func (e *Error) Unwrap() error { return recipe.ErrInvalid }

// Read parses the CSV log of a run on furnace f with the furnace's
// controller_log layout, streaming: memory grows with the mapped columns
// only, and a log longer than o.MaxBytes is refused.
//
// Headings match the layout's column names exactly as written, brackets
// and units included ("Time [min]"); a heading of the column name with
// its unit in brackets ("T_zone [C]", "T_zone (C)") also matches, and one
// whose bracketed unit is a different unit is an error. A heading mapped
// twice in the log is an error. The delimiter is the layout's, or else the
// most frequent of tab, semicolon and comma in the heading line; lines
// starting with # are comments. With "decimal: comma" numbers are written
// 1000,5. Every mapped cell must be a number (a time stamp for clock and
// date-time columns), time must increase row by row (a clock time 12 h or
// more before the previous row's is the next day), temperatures must be
// above absolute zero, pressures not negative and flows not below zero by
// more than the line's zero tolerance (1 % of full scale, common practice
// for thermal MFCs; such readings count as 0).
func Read(r io.Reader, file string, f *recipe.Furnace, o ReadOptions) (*Log, error) {
	if f == nil || f.Log == nil {
		return nil, &Error{File: file, Msg: "the furnace file has no controller_log mapping",
			Advice: "add controller_log to the furnace file, naming the log's time, temperature, pressure and flow columns"}
	}
	limit := o.MaxBytes
	if limit <= 0 {
		limit = DefaultMaxBytes
	}
	cnt := &countingReader{r: io.LimitReader(r, limit+1)}
	br := bufio.NewReaderSize(cnt, 1<<16)
	if bom, _ := br.Peek(3); string(bom) == "\ufeff" {
		_, _ = br.Discard(3)
	}
	comma, empty, err := delimiter(br, f.Log.Delimiter)
	if err != nil {
		return nil, fmt.Errorf("furnace log %q: %w", file, err)
	}
	if empty {
		return nil, &Error{File: file, Msg: "the file is empty", Advice: "give the controller's export: a heading line and one row per sample"}
	}
	cr := csv.NewReader(br)
	cr.Comma, cr.Comment = comma, '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	rd := &reader{file: file, furnace: f, comma: f.Log.Decimal == "comma", lg: &Log{File: file, Flows: map[string][]float64{}}}
	header, err := cr.Read()
	if err != nil {
		return nil, rd.csvError(err, cnt, limit)
	}
	rd.hline, _ = cr.FieldPos(0)
	if err := rd.columns(append([]string(nil), header...)); err != nil {
		return nil, err
	}
	for {
		row, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, rd.csvError(err, cnt, limit)
		}
		if cnt.n > limit {
			return nil, tooLarge(file, limit)
		}
		line, _ := cr.FieldPos(0)
		if len(row) == 1 && strings.TrimSpace(row[0]) == "" {
			continue
		}
		if err := rd.row(row, line); err != nil {
			return nil, err
		}
	}
	if cnt.n > limit {
		return nil, tooLarge(file, limit)
	}
	return rd.finish()
}

// reader holds the state of one Read.
type reader struct {
	file    string
	furnace *recipe.Furnace
	comma   bool // decimal comma
	hline   int
	header  []string
	time    timeColumn
	cols    []*column
	lg      *Log
	buf     []byte // scratch for decimal commas
}

func (rd *reader) fail(line, col int, hint, format string, args ...any) error {
	return &Error{File: rd.file, Line: line, Col: col, Msg: fmt.Sprintf(format, args...), Advice: hint}
}

// columns finds every mapped column in the heading line and sets up its
// conversion to SI.
func (rd *reader) columns(header []string) error {
	rd.header = header
	layout := rd.furnace.Log
	lg := rd.lg
	tc := layout.Time
	idx, err := rd.find(tc, "time")
	if err != nil {
		return err
	}
	rd.time = timeColumn{name: tc.Column, unit: tc.Unit, format: tc.Format, idx: idx}
	if rd.time.format == "" || rd.time.format == recipe.LogElapsed {
		rd.time.format = recipe.LogElapsed
		if rd.time.num, err = rd.numeric(tc, "time", recipe.Duration, idx, 1); err != nil {
			return err
		}
	}
	control := layout.Temperature.Control()
	lg.Thermocouples = make([]Thermocouple, 0, len(layout.Temperature)) // never grows past this: the pointers below stay valid
	for _, c := range layout.Temperature {
		into := &lg.T
		what := "temperature"
		if c.Column != control.Column {
			lg.Thermocouples = append(lg.Thermocouples, Thermocouple{Column: c.Column, Role: c.Role})
			into = &lg.Thermocouples[len(lg.Thermocouples)-1].T
			what = "thermocouple"
		}
		if err := rd.add(c, what, recipe.Temperature, 1, into); err != nil {
			return err
		}
	}
	if layout.Pressure.Column != "" {
		if err := rd.add(layout.Pressure, "pressure", recipe.Pressure, 1, &lg.P); err != nil {
			return err
		}
	}
	gases := make([]string, 0, len(layout.Flows))
	for g := range layout.Flows {
		gases = append(gases, g)
	}
	sort.Strings(gases)
	for _, g := range gases {
		c := layout.Flows[g]
		factor := 1.0
		line := rd.furnace.LineFor(g)
		if c.Reading == recipe.LogCalibrationGas && line != nil {
			factor = line.Correction()
		}
		series := new([]float64)
		if err := rd.add(c, "flow "+g, recipe.Flow, factor, series); err != nil {
			return err
		}
		col := rd.cols[len(rd.cols)-1]
		col.gas, col.floor = g, -minFlowTolerance
		if line != nil {
			col.floor = -FlowFullScale * line.FullScaleOfGas()
		}
		lg.Flows[g] = nil
	}
	return nil
}

// add sets up a numeric column that appends its SI values to into.
func (rd *reader) add(c recipe.LogColumn, what string, dim recipe.Dimension, factor float64, into *[]float64) error {
	idx, err := rd.find(c, what)
	if err != nil {
		return err
	}
	num, err := rd.numeric(c, what, dim, idx, factor)
	if err != nil {
		return err
	}
	num.into = into
	rd.cols = append(rd.cols, num)
	return nil
}

// find returns the index of the heading that names column c.
func (rd *reader) find(c recipe.LogColumn, what string) (int, error) {
	exact, loose := -1, -1
	for i, h := range rd.header {
		h = strings.TrimSpace(h)
		if h == c.Column {
			if exact >= 0 {
				return 0, rd.fail(rd.hline, i+1, "rename one of them in the log, or map the column the controller_log means",
					"heading %q appears twice (columns %d and %d); the log is ambiguous", c.Column, exact+1, i+1)
			}
			exact = i
			continue
		}
		name, unit := splitHeader(h)
		if name != c.Column || loose >= 0 {
			continue
		}
		if unit == c.Unit || sameUnit(unit, c.Unit) {
			loose = i
			continue
		}
		if d, ok := recipe.UnitDimension(unit); ok {
			if cd, _ := recipe.UnitDimension(c.Unit); cd == d {
				return 0, rd.fail(rd.hline, i+1, "", "column %q is in %s, the furnace file's controller_log says %s", c.Column, unit, c.Unit)
			}
		}
	}
	if exact >= 0 {
		return exact, nil
	}
	if loose >= 0 {
		return loose, nil
	}
	hint := "write the column exactly as the log's heading, brackets and units included"
	for _, h := range rd.header {
		if name, _ := splitHeader(strings.TrimSpace(h)); name == c.Column {
			hint = fmt.Sprintf("the log has %q: write that in the controller_log, brackets and units included", strings.TrimSpace(h))
			break
		}
	}
	return 0, rd.fail(rd.hline, 0, hint, "no column %q (the %s column in the furnace file's controller_log); the heading line has: %s",
		c.Column, what, strings.Join(rd.header, ", "))
}

// sameUnit reports whether two unit names denote the same unit of one
// dimension (the same scale and offset to SI).
func sameUnit(a, b string) bool {
	da, oka := recipe.UnitDimension(a)
	db, okb := recipe.UnitDimension(b)
	if !oka || !okb || da != db {
		return false
	}
	x, err1 := recipe.Parse("1 "+a, da)
	y, err2 := recipe.Parse("1 "+b, db)
	z, err3 := recipe.Parse("0 "+a, da)
	w, err4 := recipe.Parse("0 "+b, db)
	return errors.Join(err1, err2, err3, err4) == nil && x.SI == y.SI && z.SI == w.SI
}

// splitHeader splits "T_zone [C]" or "T_zone (C)" into name and unit.
func splitHeader(h string) (name, unit string) {
	for _, br := range []string{"[]", "()"} {
		if strings.HasSuffix(h, br[1:]) {
			if i := strings.LastIndex(h, br[:1]); i > 0 {
				return strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1 : len(h)-1])
			}
		}
	}
	return h, ""
}

// row reads one row of samples.
func (rd *reader) row(row []string, line int) error {
	if err := rd.timeCell(row, line); err != nil {
		return err
	}
	for _, c := range rd.cols {
		if err := rd.cell(c, row, line); err != nil {
			return err
		}
	}
	rd.lg.Line = append(rd.lg.Line, line)
	return nil
}

// finish re-bases time on the first row and checks the log has rows.
func (rd *reader) finish() (*Log, error) {
	lg := rd.lg
	if len(rd.time.t) == 0 {
		return nil, rd.fail(rd.hline, 0, "give the controller's export with its rows", "the log has a heading line but no rows of samples")
	}
	t0 := rd.time.t[0]
	lg.Time = rd.time.t
	for i := range lg.Time {
		lg.Time[i] -= t0
	}
	for _, c := range rd.cols {
		if c.gas != "" {
			lg.Flows[c.gas] = *c.into
		}
	}
	return lg, nil
}

// delimiter returns the declared delimiter, or the most frequent of tab,
// semicolon and comma in the first line that is not a comment (comma on a
// tie or when none occurs). empty reports a file of blank lines only.
func delimiter(br *bufio.Reader, declared string) (comma rune, empty bool, err error) {
	peek, err := br.Peek(1 << 16)
	if err != nil && !errors.Is(err, io.EOF) && !errors.Is(err, bufio.ErrBufferFull) {
		return 0, false, err
	}
	if len(strings.TrimSpace(string(peek))) == 0 {
		return 0, true, nil
	}
	switch declared {
	case "semicolon":
		return ';', false, nil
	case "tab":
		return '\t', false, nil
	case "comma":
		return ',', false, nil
	}
	text := string(peek)
	for {
		line, rest, _ := strings.Cut(text, "\n")
		if !strings.HasPrefix(line, "#") && strings.TrimSpace(line) != "" || rest == "" {
			text = line
			break
		}
		text = rest
	}
	best, bestN := ',', strings.Count(text, ",")
	for _, c := range []rune{';', '\t'} {
		if n := strings.Count(text, string(c)); n > bestN {
			best, bestN = c, n
		}
	}
	return best, false, nil
}

func (rd *reader) csvError(err error, cnt *countingReader, limit int64) error {
	if cnt.n > limit {
		return tooLarge(rd.file, limit)
	}
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &Error{File: rd.file, Line: pe.Line, Col: pe.Column, Msg: pe.Err.Error()}
	}
	return fmt.Errorf("furnace log %q: %w", rd.file, err)
}

func tooLarge(file string, limit int64) error {
	return &Error{File: file, Msg: fmt.Sprintf("the log is larger than the limit of %d bytes", limit),
		Advice: "give the log of one run; split a longer export at the run's start and end"}
}

// countingReader counts the bytes read through it.
type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}
