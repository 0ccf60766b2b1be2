package sqldb

import (
	"database/sql"
	"testing"
)

// sameAsParseTime fails unless parseStamp gives what parseTime (time.Parse
// with timeLayout) gives: the same time, location included, or an error
// for both.
func sameAsParseTime(t *testing.T, ns sql.NullString) {
	t.Helper()
	got, gerr := parseStamp(ns)
	want, werr := parseTime(ns)
	if (gerr != nil) != (werr != nil) || got != want {
		t.Errorf("parseStamp(%q): got %v, %v; want %v, %v (time.Parse)", ns.String, got, gerr, want, werr)
	}
}

// TestParseStamp checks the fast path against time.Parse on stored times
// and on malformed ones (the calendar rules are the Gregorian calendar's,
// as Go's time package keeps them: 2028 is a leap year, 2026 not).
func TestParseStamp(t *testing.T) {
	tests := []struct {
		name string
		s    string
	}{
		{"stored", "2026-03-02T09:00:00.000000Z"},
		{"microseconds", "2026-12-31T23:59:59.999999Z"},
		{"leap day", "2028-02-29T00:00:00.000001Z"},
		{"no leap day", "2026-02-29T00:00:00.000000Z"},
		{"month 13", "2026-13-01T00:00:00.000000Z"},
		{"hour 24", "2026-03-02T24:00:00.000000Z"},
		{"second 60", "2026-03-02T23:59:60.000000Z"},
		{"letter", "2026-03-0xT09:00:00.000000Z"},
		{"sign", "2026-03-02T09:00:-1.000000Z"},
		{"offset", "2026-03-02T09:00:00.000000+"},
		{"short", "2026-03-02T09:00:00Z"},
		{"empty", ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) { sameAsParseTime(t, sql.NullString{String: tt.s, Valid: true}) })
	}
	sameAsParseTime(t, sql.NullString{})
}

// FuzzParseStamp: on any text parseStamp never panics and agrees with
// time.Parse.
func FuzzParseStamp(f *testing.F) {
	f.Add("2026-03-02T09:00:00.000000Z")
	f.Add("2028-02-29T23:59:59.999999Z")
	f.Add("9999-99-99T99:99:99.999999Z")
	f.Fuzz(func(t *testing.T, s string) { sameAsParseTime(t, sql.NullString{String: s, Valid: true}) })
}
