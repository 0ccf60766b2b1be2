package history

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// cellText returns a cell as recipe.Parse reads it: a decimal comma
// turned into a point when the map says the sheet uses them ("3,5 sccm"
// → "3.5 sccm"; a point then groups thousands and is dropped).
func cellText(cell, decimal string) string {
	if decimal != "comma" || !strings.Contains(cell, ",") {
		return cell
	}
	return strings.ReplaceAll(strings.ReplaceAll(cell, ".", ""), ",", ".")
}

// quantity reads a cell as a quantity of dim in SI: a bare number is in
// the column's unit, a number with a unit in its own.
func quantity(cell string, c Column, dim recipe.Dimension, decimal string) (float64, error) {
	text := cellText(cell, decimal)
	num, unit := recipe.SplitNumber(text)
	if _, err := strconv.ParseFloat(num, 64); num == "" || err != nil {
		return 0, fmt.Errorf("'%s' is not a number", cell)
	}
	if strings.TrimSpace(unit) == "" {
		if c.Unit == "" {
			return 0, fmt.Errorf("'%s' has no unit and the map gives none; add unit: to the column in the map or write the unit in the cell", cell)
		}
		text = num + " " + c.Unit
	}
	q, err := recipe.Parse(text, dim)
	var ue *recipe.UnitError
	if errors.As(err, &ue) && ue.Got < 0 {
		return 0, fmt.Errorf("'%s' is not a number: %v", cell, err)
	}
	if err != nil {
		return 0, fmt.Errorf("'%s': %v", cell, err)
	}
	return q.SI, nil
}

// sheetDate reads a start date (and time): 2025-03-04, 2025-03-04 09:30,
// 04/03/2025 and 04.03.2025 (09:30) in the map's date_order, or an XLSX
// date serial, of the 1904 date system when date1904 is set
// (Sheet.Date1904), of the 1900 one else. A day-month date that reads
// both ways is an error without date_order, and so is a year outside 1900
// to 2199 (a number that is no date). Times are UTC.
func sheetDate(cell, order string, xlsx, date1904 bool) (time.Time, error) {
	t, err := readDate(cell, order, xlsx, date1904)
	if err == nil && (t.Year() < 1900 || t.Year() > 2199) {
		return time.Time{}, fmt.Errorf("'%s' is not a date a run started on (year %d)", cell, t.Year())
	}
	return t, err
}

func readDate(cell, order string, xlsx, date1904 bool) (time.Time, error) {
	if xlsx {
		if v, err := strconv.ParseFloat(cell, 64); err == nil {
			t, err := serialTime(v, date1904)
			if err != nil {
				return time.Time{}, fmt.Errorf("'%s' is not a date: %v", cell, err)
			}
			return t.UTC().Round(time.Second), nil
		}
	}
	for _, layout := range []string{"2006-01-02", "2006-01-02 15:04", "2006-01-02 15:04:05", "2006-01-02T15:04:05Z07:00", "2006-01-02T15:04"} {
		if t, err := time.Parse(layout, cell); err == nil {
			return t.UTC(), nil
		}
	}
	day, clock, _ := strings.Cut(cell, " ")
	parts := strings.FieldsFunc(day, func(r rune) bool { return r == '/' || r == '.' || r == '-' })
	bad := fmt.Errorf("'%s' is not a date; write 2025-03-04, 2025-03-04 09:30 or 04/03/2025 with date_order in the map", cell)
	if len(parts) != 3 {
		return time.Time{}, bad
	}
	var n [3]int
	for i, p := range parts {
		v, err := strconv.Atoi(p)
		if err != nil {
			return time.Time{}, bad
		}
		n[i] = v
	}
	y, m, d, err := dateOrder(cell, n, len(parts[0]) == 4, order)
	if err != nil {
		return time.Time{}, err
	}
	hh, mm := 0, 0
	if clock != "" {
		t, err := time.Parse("15:04", strings.TrimSpace(clock))
		if err != nil {
			return time.Time{}, bad
		}
		hh, mm = t.Hour(), t.Minute()
	}
	t := time.Date(y, time.Month(m), d, hh, mm, 0, 0, time.UTC)
	if t.Day() != d || int(t.Month()) != m {
		return time.Time{}, fmt.Errorf("'%s' is not a date: no day %d in month %d", cell, d, m)
	}
	return t, nil
}

// dateOrder orders the three numbers of a date as year, month, day.
func dateOrder(cell string, n [3]int, yearFirst bool, order string) (y, m, d int, err error) {
	if yearFirst || order == "ymd" {
		return n[0], n[1], n[2], nil
	}
	y = n[2]
	if y < 100 {
		y += 2000
	}
	switch {
	case order == "dmy":
		return y, n[1], n[0], nil
	case order == "mdy":
		return y, n[0], n[1], nil
	case n[0] > 12:
		return y, n[1], n[0], nil
	case n[1] > 12 || n[0] == n[1]:
		return y, n[0], n[1], nil
	}
	return 0, 0, 0, fmt.Errorf("'%s' is ambiguous (day %d of month %d, or day %d of month %d); set date_order: dmy or mdy in the map", cell, n[0], n[1], n[1], n[0])
}

// The days XLSX date serials count from. In the 1900 system serial 1 is
// 1900-01-01 and serial 60 the 29th of February 1900, a day that never
// was, kept for compatibility by spreadsheets since the 1980s: serials
// from 61 on count from 1899-12-30. In the 1904 system serial 0 is
// 1904-01-01. (ECMA-376 Part 1, 18.17.4.)
var (
	epoch1900 = time.Date(1899, time.December, 30, 0, 0, 0, 0, time.UTC)
	epoch1904 = time.Date(1904, time.January, 1, 0, 0, 0, 0, time.UTC)
)

// serialTime is the time of an XLSX date serial: whole days from the
// epoch, the fraction the time of day. It gives what the reader foilrun
// used before (excelize's ExcelDateToTime, tested to the nanosecond),
// rounding included: serials of the first 62 days are taken as Modified
// Julian Dates (the serial plus 15018, or 16480 for 1904: the MJDs of
// the epochs) and their time of day rounded to the microsecond, serial 60
// of 1900 reading as 1900-02-28; later serials have 1e-9 day added to
// their fraction, then a time of day to the nanosecond (truncated) that
// is rounded up to the second from 501 ms on and truncated below.
func serialTime(v float64, date1904 bool) (time.Time, error) {
	switch {
	case v < 0:
		return time.Time{}, fmt.Errorf("a date serial counts days from 1900 (or 1904) and is never negative")
	case math.IsNaN(v) || v >= 1e10: // past the year 27 million: no date, and time.Duration sums would overflow
		return time.Time{}, fmt.Errorf("no calendar date has serial %g", v)
	}
	epoch, mjd := epoch1900, 15018.0
	if date1904 {
		epoch, mjd = epoch1904, 16480.0
	}
	if v < 62 {
		m := v + mjd
		days := math.Floor(m)
		ns := int64(nanosPerDay*(m-days) + 500) // to the microsecond, rounded
		t := epoch.AddDate(0, 0, int(days-mjd)).Add(time.Duration(ns - ns%1000))
		if !date1904 && v >= 1 && v < 60 {
			t = t.AddDate(0, 0, 1) // before the day that never was
		}
		return t, nil
	}
	days := math.Floor(v)
	t := epoch.AddDate(0, 0, int(days)).Add(time.Duration(nanosPerDay * (v - days + 1e-9)))
	if t.Nanosecond() > 500_999_999 {
		return t.Round(time.Second), nil
	}
	return t.Truncate(time.Second), nil
}

const nanosPerDay = 24 * 60 * 60 * 1e9
