package store

import (
	"fmt"
	"strconv"
	"time"
)

// Run codes are short and human: "G" (growth), the two-digit year the run
// was logged, a dash and a sequence number of at least four digits that
// restarts each year: G26-0001, G26-0002, … The sequence comes from a
// counter row updated in the same transaction that inserts the run, so
// codes stay unique however many processes (or, on a shared server,
// machines) log at once.

// CodeCounter returns the counter name for runs logged at t.
func CodeCounter(t time.Time) string { return "run-" + strconv.Itoa(t.UTC().Year()) }

// FormatCode returns the run code for sequence n of the year of t.
func FormatCode(t time.Time, n int64) string {
	return fmt.Sprintf("G%02d-%04d", t.UTC().Year()%100, n)
}

// ParseCode splits a code into its counter name and sequence number. ok is
// false for codes of another shape (for example imported from elsewhere);
// those are kept as they are.
func ParseCode(code string) (counter string, n int64, ok bool) {
	if len(code) < 8 || code[0] != 'G' || code[3] != '-' || !digits(code[1:3]) || !digits(code[4:]) {
		return "", 0, false
	}
	yy, _ := strconv.Atoi(code[1:3])
	n, err := strconv.ParseInt(code[4:], 10, 64)
	if err != nil || n <= 0 {
		return "", 0, false
	}
	return "run-" + strconv.Itoa(2000+yy), n, true
}

func digits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return s != ""
}
