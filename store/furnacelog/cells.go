package furnacelog

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// column is one mapped numeric column: where it is and how to turn its
// numbers into SI (si = v·scale + offset), and the values it accepts.
type column struct {
	what          string // "time", "temperature", "thermocouple", "pressure", "flow CH4"
	name, unit    string
	dim           recipe.Dimension
	idx           int
	scale, offset float64
	gas           string  // flows: the gas symbol
	floor         float64 // flows: lowest SI value read (as 0) rather than refused
	into          *[]float64
}

// numeric sets up the conversion of column c (unit c.Unit, dimension dim)
// at index idx; factor multiplies the SI value (a flow line's correction
// factor for calibration-gas readings).
func (rd *reader) numeric(c recipe.LogColumn, what string, dim recipe.Dimension, idx int, factor float64) (*column, error) {
	zero, err0 := recipe.Parse("0 "+c.Unit, dim)
	one, err1 := recipe.Parse("1 "+c.Unit, dim)
	if err := errors.Join(err0, err1); err != nil {
		return nil, rd.fail(rd.hline, idx+1, "fix the unit in the furnace file's controller_log", "column %q: unit %q: %v", c.Column, c.Unit, err)
	}
	return &column{what: what, name: c.Column, unit: c.Unit, dim: dim, idx: idx,
		scale: (one.SI - zero.SI) * factor, offset: zero.SI * factor}, nil
}

// text returns the trimmed cell of column idx, or an error for a short row.
func (rd *reader) text(row []string, line, idx int, what, name string) (string, error) {
	if idx >= len(row) {
		return "", rd.fail(line, 0, "", "%d cells, the heading line has %d (no %s column %q in this row)", len(row), len(rd.header), what, name)
	}
	return strings.TrimSpace(row[idx]), nil
}

// number parses a cell written with the layout's decimal mark.
func (rd *reader) number(cell string) (float64, bool) {
	if rd.comma {
		if strings.IndexByte(cell, '.') >= 0 {
			return 0, false
		}
		cell = strings.Replace(cell, ",", ".", 1)
	}
	v, err := strconv.ParseFloat(cell, 64)
	return v, err == nil && !math.IsNaN(v) && !math.IsInf(v, 0)
}

func (rd *reader) notNumber(line int, c *column, cell string) error {
	hint := ""
	switch {
	case !rd.comma && strings.Contains(cell, ","):
		hint = "if the controller writes decimal commas, add \"decimal: comma\" to the furnace file's controller_log"
	case rd.comma && strings.Contains(cell, "."):
		hint = "the controller_log says \"decimal: comma\"; write numbers as 1000,5 without thousands separators"
	}
	return rd.fail(line, c.idx+1, hint, "%s %q: %q is not a number", c.what, c.name, cell)
}

// cell reads one numeric cell into its column, checking it is a value the
// quantity can take.
func (rd *reader) cell(c *column, row []string, line int) error {
	cell, err := rd.text(row, line, c.idx, c.what, c.name)
	if err != nil {
		return err
	}
	v, ok := rd.number(cell)
	if !ok {
		return rd.notNumber(line, c, cell)
	}
	si := v*c.scale + c.offset
	switch c.dim {
	case recipe.Temperature:
		if !(si > 0) {
			return rd.fail(line, c.idx+1, "check the column's unit in the controller_log", "%s %q: %s %s is at or below absolute zero", c.what, c.name, cell, c.unit)
		}
	case recipe.Pressure:
		if si < 0 {
			return rd.fail(line, c.idx+1, "check the gauge's zero and the column's unit", "pressure %q: %s %s is negative", c.name, cell, c.unit)
		}
	case recipe.Flow:
		if si < 0 && si >= c.floor {
			si = 0 // the MFC's zero offset
		} else if si < 0 {
			return rd.fail(line, c.idx+1, "check the column mapping and the MFC's zero", "%s %q: %s %s is negative, beyond the MFC's zero tolerance", c.what, c.name, cell, c.unit)
		}
	}
	*c.into = append(*c.into, si)
	return nil
}

// timeColumn reads the time stamps: elapsed numbers, clock times or
// date-times, as seconds.
type timeColumn struct {
	name, unit, format string
	idx                int
	num                *column // elapsed
	t                  []float64
	days               float64 // clock: midnights passed
	layout             int     // datetime: the layout that parsed the last stamp
	prev               string  // the previous stamp as written
}

// secondsPerDay for clock roll-over; rollover is how far back (s) a clock
// time must go to be read as the next day.
const (
	secondsPerDay = 86400.0
	rollover      = secondsPerDay / 2
)

// dateLayouts are the date-time stamps a datetime column accepts
// (fractional seconds are accepted after the seconds by time.Parse).
var dateLayouts = []string{
	"2006-01-02 15:04:05", "2006-01-02T15:04:05", "2006-01-02T15:04:05Z07:00", "2006-01-02 15:04",
	"02.01.2006 15:04:05", "02.01.2006 15:04", "2006/01/02 15:04:05",
}

// timeCell reads the time stamp of a row and checks it is after the
// previous row's.
func (rd *reader) timeCell(row []string, line int) error {
	tc := &rd.time
	cell, err := rd.text(row, line, tc.idx, "time", tc.name)
	if err != nil {
		return err
	}
	var t float64
	switch tc.format {
	case recipe.LogElapsed:
		v, ok := rd.number(cell)
		if !ok {
			return rd.notNumber(line, tc.num, cell)
		}
		t = v*tc.num.scale + tc.num.offset
	case recipe.LogClock:
		sod, ok := parseClock(cell, rd.comma)
		if !ok {
			return rd.fail(line, tc.idx+1, "clock times are written 09:31:07 or 9:31 (24-hour); use \"format: datetime\" for stamps with a date",
				"time %q: %q is not a clock time", tc.name, cell)
		}
		if n := len(tc.t); n > 0 {
			prev := tc.t[n-1] - tc.days*secondsPerDay
			if back := prev - sod; back >= rollover {
				tc.days++ // past midnight
			} else if back >= 0 {
				return rd.fail(line, tc.idx+1, "a clock time 12 h or more before the previous row's is read as the next day (the run passed midnight); fix the stamps or give the log of one run",
					"clock time %q is %s the previous row's %q; the log must be in time order without repeats", cell, before(back), tc.prev)
			}
		}
		t = sod + tc.days*secondsPerDay
	case recipe.LogDateTime:
		v, ok := tc.parseDate(cell)
		if !ok {
			return rd.fail(line, tc.idx+1, "date-times are written 2026-03-05 09:31:07, 2026-03-05T09:31:07 or 05.03.2026 09:31:07",
				"time %q: %q is not a date-time", tc.name, cell)
		}
		if n := len(tc.t); n > 0 && !(v > tc.t[n-1]) {
			back := tc.t[n-1] - v
			if back > secondsPerDay {
				return rd.fail(line, tc.idx+1, "fix the controller's clock stamps, or give the log of one run",
					"date-time %q is %s the previous row's %q: the clock went back by more than a day", cell, before(back), tc.prev)
			}
			return rd.fail(line, tc.idx+1, "", "date-time %q is %s the previous row's %q; the log must be in time order without repeats", cell, before(back), tc.prev)
		}
		t = v
	}
	if n := len(tc.t); n > 0 && tc.format == recipe.LogElapsed && !(t > tc.t[n-1]) {
		return rd.fail(line, tc.idx+1, "", "time %s %s is not after the previous row's %s %s; the log must be in time order without repeats",
			cell, tc.unit, tc.prev, tc.unit)
	}
	tc.t = append(tc.t, t)
	tc.prev = cell
	return nil
}

// before describes a step back in time: "the same time as", "1 h 5 min before".
func before(s float64) string {
	if s == 0 {
		return "the same time as"
	}
	return span(s) + " before"
}

// span writes a length of time as people read it: "40 s", "1 h 5 min",
// "2 d 3 h".
func span(s float64) string {
	switch {
	case s < 60:
		return strconv.FormatFloat(s, 'g', 3, 64) + " s"
	case s < 3600:
		return fmt.Sprintf("%d min %d s", int(s)/60, int(s)%60)
	case s < secondsPerDay:
		return fmt.Sprintf("%d h %d min", int(s)/3600, int(s)%3600/60)
	}
	return fmt.Sprintf("%d d %d h", int(s/secondsPerDay), int(math.Mod(s, secondsPerDay))/3600)
}

// parseClock reads H:MM, H:MM:SS or H:MM:SS.fff (a decimal comma when
// comma) as seconds of the day.
func parseClock(s string, comma bool) (float64, bool) {
	parts := strings.Split(s, ":")
	if len(parts) < 2 || len(parts) > 3 {
		return 0, false
	}
	h, err1 := strconv.Atoi(parts[0])
	m, err2 := strconv.Atoi(parts[1])
	if err1 != nil || err2 != nil || len(parts[1]) != 2 || h < 0 || h > 23 || m < 0 || m > 59 || len(parts[0]) > 2 {
		return 0, false
	}
	sec := 0.0
	if len(parts) == 3 {
		p := parts[2]
		if comma {
			p = strings.Replace(p, ",", ".", 1)
		}
		if len(p) < 2 || p[0] < '0' || p[0] > '9' || p[1] < '0' || p[1] > '9' || len(p) > 2 && p[2] != '.' {
			return 0, false
		}
		v, err := strconv.ParseFloat(p, 64)
		if err != nil || v < 0 || v >= 60 {
			return 0, false
		}
		sec = v
	}
	return float64(h*3600+m*60) + sec, true
}

// parseDate reads a date-time stamp as seconds since 1970 (UTC when the
// stamp names no zone), trying the layout that worked last first.
func (tc *timeColumn) parseDate(s string) (float64, bool) {
	for k := range dateLayouts {
		i := (tc.layout + k) % len(dateLayouts)
		t, err := time.Parse(dateLayouts[i], s)
		if err == nil {
			tc.layout = i
			return float64(t.Unix()) + float64(t.Nanosecond())/1e9, true
		}
	}
	return 0, false
}
