package history

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/xuri/excelize/v2"

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

// date reads a start date (and time): 2025-03-04, 2025-03-04 09:30,
// 04/03/2025 and 04.03.2025 (09:30) in the map's date_order, or an XLSX
// date serial. A day-month date that reads both ways is an error without
// date_order, and so is a year outside 1900 to 2199 (a number that is no
// date). Times are UTC.
func date(cell, order string, xlsx bool) (time.Time, error) {
	t, err := readDate(cell, order, xlsx)
	if err == nil && (t.Year() < 1900 || t.Year() > 2199) {
		return time.Time{}, fmt.Errorf("'%s' is not a date a run started on (year %d)", cell, t.Year())
	}
	return t, err
}

func readDate(cell, order string, xlsx bool) (time.Time, error) {
	if xlsx {
		if v, err := strconv.ParseFloat(cell, 64); err == nil {
			t, err := excelize.ExcelDateToTime(v, false)
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
