package history

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// Dates as labs write them. Expected values are the calendar dates
// themselves; the XLSX serial 45720.375 is 2025-03-04 09:00 in the 1900
// date system (serial 1 = 1900-01-01, with the 1900 leap-day bug: day
// 45720 = 2025-03-04; 0.375 day = 9 h), common practice of spreadsheets.
func TestDate(t *testing.T) {
	tests := []struct {
		name, cell, order string
		xlsx              bool
		want              time.Time
		err               string
	}{
		{"iso", "2025-03-04", "", false, time.Date(2025, 3, 4, 0, 0, 0, 0, time.UTC), ""},
		{"iso with time", "2025-03-04 09:30", "", false, time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC), ""},
		{"dmy", "04/03/2025", "dmy", false, time.Date(2025, 3, 4, 0, 0, 0, 0, time.UTC), ""},
		{"mdy", "04/03/2025", "mdy", false, time.Date(2025, 4, 3, 0, 0, 0, 0, time.UTC), ""},
		{"dmy dots and time", "04.03.2025 09:30", "dmy", false, time.Date(2025, 3, 4, 9, 30, 0, 0, time.UTC), ""},
		{"day over 12 needs no order", "13/03/2025", "", false, time.Date(2025, 3, 13, 0, 0, 0, 0, time.UTC), ""},
		{"ambiguous", "04/03/2025", "", false, time.Time{}, "ambiguous"},
		{"no such day", "31/02/2025", "dmy", false, time.Time{}, "no day 31 in month 2"},
		{"not a date", "last Tuesday", "", false, time.Time{}, "is not a date"},
		{"xlsx serial", "45720.375", "", true, time.Date(2025, 3, 4, 9, 0, 0, 0, time.UTC), ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := sheetDate(tt.cell, tt.order, tt.xlsx, false)
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) {
					t.Errorf("sheetDate(%q): got %v, %v; want an error containing %q", tt.cell, got, err, tt.err)
				}
				return
			}
			if err != nil || !got.Equal(tt.want) {
				t.Errorf("sheetDate(%q): got %v, %v; want %v", tt.cell, got, err, tt.want)
			}
		})
	}
}

// Cells as quantities: the column's unit for bare numbers, the cell's own
// otherwise, decimal commas when the map says so. Conversions: 1 Torr =
// 101325/760 Pa exactly (definition); 0 °C = 273.15 K (ITS-90).
func TestQuantity(t *testing.T) {
	torr := Column{Heading: "P", Unit: "Torr"}
	c := Column{Heading: "T", Unit: "C"}
	tests := []struct {
		name, cell string
		col        Column
		dim        recipe.Dimension
		decimal    string
		want       float64
		err        string
	}{
		{"bare number in the column's unit", "1000", c, recipe.Temperature, "point", 1273.15, ""},
		{"own unit wins", "1273.15 K", c, recipe.Temperature, "point", 1273.15, ""},
		{"decimal comma", "0,5", torr, recipe.Pressure, "comma", 0.5 * 101325 / 760, ""},
		{"comma unread without decimal: comma", "0,5", torr, recipe.Pressure, "point", 0, "is not a number"},
		{"not a number", "3,5x", torr, recipe.Pressure, "comma", 0, "'3,5x' is not a number"},
		{"wrong dimension", "5 sccm", torr, recipe.Pressure, "point", 0, "is a flow"},
		{"no unit anywhere", "5", Column{Heading: "P"}, recipe.Pressure, "point", 0, "has no unit and the map gives none"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := quantity(tt.cell, tt.col, tt.dim, tt.decimal)
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) {
					t.Errorf("quantity(%q): got %g, %v; want an error containing %q", tt.cell, got, err, tt.err)
				}
				return
			}
			if err != nil || math.Abs(got-tt.want) > 1e-9*tt.want {
				t.Errorf("quantity(%q): got %.12g, %v; want %.12g", tt.cell, got, err, tt.want)
			}
		})
	}
}

// Maps: every key read; unknown keys and units of the wrong dimension
// refused with the line and column.
func TestParseMap(t *testing.T) {
	good := "code: Run\nstarted: {column: Date}\ndate_order: dmy\ndecimal: comma\nsteps:\n  grow:\n    temperature: {column: \"T (C)\", unit: C}\n    flows:\n      CH4: \"CH4 (sccm)\"\noutcomes:\n  coverage: {column: Cov, unit: \"%\"}\nnotes: Comment\n"
	m, err := ParseMap("m.yaml", []byte(good))
	if err != nil {
		t.Fatal(err)
	}
	if m.Code.Heading != "Run" || m.Started.Heading != "Date" || m.DateOrder != "dmy" || m.Decimal != "comma" || len(m.Steps) != 1 ||
		len(m.Steps[0].Fields) != 2 || m.Steps[0].Fields[1].Gas != "CH4" || m.Outcomes[0].Column.Unit != "%" || m.Notes[0].Heading != "Comment" {
		t.Errorf("ParseMap: got %+v", m)
	}
	if got := len(m.Columns()); got != 6 {
		t.Errorf("Columns: got %d, want 6", got)
	}
	bad := []struct{ name, text, want string }{
		{"unknown key", "code: Run\ncolour: blue\n", `line 2 col 1: unknown key "colour"`},
		{"no step field", "steps:\n  grow:\n    speed: {column: S}\n", `line 3 col 5: steps.grow.speed: no step field "speed"`},
		{"unit of another dimension", "steps:\n  grow:\n    duration: {column: t, unit: sccm}\n", `steps.grow.duration: unit "sccm"`},
		{"date order", "date_order: dym\nsteps:\n  grow:\n    duration: t\n", `"dym": want dmy or mdy or ymd`},
		{"column key", "steps:\n  grow:\n    duration: {col: t}\n", `unknown key "col" in a column`},
		{"nothing mapped", "code: Run\n", "sets no step field and no outcome"},
	}
	for _, tt := range bad {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ParseMap("m.yaml", []byte(tt.text))
			if !errors.Is(err, ErrInvalid) || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("got %v, want ErrInvalid containing %q", err, tt.want)
			}
		})
	}
}

// FuzzParseMap: no input panics; every error matches ErrInvalid; a map
// read back from its own columns keeps them.
func FuzzParseMap(f *testing.F) {
	f.Add([]byte("code: Run\nsteps:\n  grow:\n    temperature: {column: T, unit: C}\n"))
	f.Add([]byte("outcomes:\n  coverage: Cov\nnotes: [A, B]\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := ParseMap("f.yaml", data)
		if err != nil {
			if !errors.Is(err, ErrInvalid) {
				t.Errorf("error %v does not match ErrInvalid", err)
			}
			return
		}
		for _, c := range m.Columns() {
			if c.Heading == "" {
				t.Errorf("column with no heading at %v", c.Pos)
			}
		}
	})
}

// FuzzDate: no cell panics, and an ISO date read back formats to itself.
func FuzzDate(f *testing.F) {
	for _, s := range []string{"2025-03-04", "04/03/2025", "13.03.25 09:30", "45720.375", "x"} {
		f.Add(s, "dmy", true)
	}
	f.Fuzz(func(t *testing.T, cell, order string, xlsx bool) {
		d, err := sheetDate(cell, order, xlsx, false)
		if err != nil {
			return
		}
		iso := d.Format("2006-01-02 15:04:05")
		back, err := sheetDate(iso, "", false, false)
		if err != nil || !back.Equal(d) {
			t.Errorf("sheetDate(%q) = %v; reading %q back gives %v, %v", cell, d, iso, back, err)
		}
	})
}

// FuzzReadSheet: no CSV input panics; every row has one cell per heading.
func FuzzReadSheet(f *testing.F) {
	f.Add([]byte("a,b\n1,2\n"))
	f.Add([]byte("a;b\n1,5;2\n\n3;4\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := ReadSheet("f.csv", strings.NewReader(string(data)), "")
		if err != nil {
			return
		}
		for _, r := range s.Rows {
			if len(r.Cells) != len(s.Headings) {
				t.Errorf("row %d: %d cells, %d headings", r.N, len(r.Cells), len(s.Headings))
			}
		}
	})
}
