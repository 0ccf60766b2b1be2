package store

import (
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// Run codes are short and human: a prefix, "G" (growth) unless the site
// file sets another (recipe.CodePrefixProblem), the two-digit year the run
// started (the year it was logged when it has no start, or one outside
// 2000 to 2099; see CodeTime), a dash and a sequence number of four to
// six digits that restarts each year: G26-0001, G26-0002, … G26-999999,
// or T226-0001 for the prefix T2. Each prefix and year has its own
// sequence. The sequence comes from a counter row updated in the same transaction that inserts the
// run, so codes stay unique however many processes (or, on a shared
// server, machines) log at once.
//
// Codes of another shape (imported from another lab's log, "LAB-7") are
// kept as they are, provided they match the code pattern (ValidateCode):
// one to MaxCodeLength letters, digits, '-', '_' or '.', starting with a
// letter or digit. A code of our shape with a number out of range is
// refused, so one imported code cannot push the counter past what the
// next code can hold.

// MaxCodeNumber is the largest sequence number of a run code: six digits,
// a million runs a year, far beyond what one lab's furnaces can do, and
// small enough that the counter arithmetic can never overflow.
const MaxCodeNumber = 999999

// MaxCodeLength is the longest code, of any shape, a run may have.
const MaxCodeLength = 32

// CodeTime returns the time whose year a new run code takes: the run's
// start when it has one from 2000 to 2099 (a 2025 run imported today
// gets a 2025 code), else now, when it is logged.
func CodeTime(started, now time.Time) time.Time {
	if y := started.UTC().Year(); !started.IsZero() && y >= 2000 && y <= 2099 {
		return started
	}
	return now
}

// DefaultCodePrefix is the prefix of run codes for a site that sets none.
const DefaultCodePrefix = "G"

// codePrefix is prefix, or DefaultCodePrefix for "".
func codePrefix(prefix string) string {
	if prefix == "" {
		return DefaultCodePrefix
	}
	return prefix
}

// CodeCounter returns the counter name for runs of the prefix ("" for
// DefaultCodePrefix) and the year of t: run-2026 for G, run-T2-2026 for T2.
func CodeCounter(prefix string, t time.Time) string {
	return counterName(codePrefix(prefix), t.UTC().Year())
}

func counterName(prefix string, year int) string {
	if prefix == DefaultCodePrefix {
		return "run-" + strconv.Itoa(year)
	}
	return "run-" + prefix + "-" + strconv.Itoa(year)
}

// ParseCounterName splits a counter name made by CodeCounter into its
// prefix and year; ok is false for any other name.
func ParseCounterName(name string) (prefix string, year int, ok bool) {
	rest, found := strings.CutPrefix(name, "run-")
	if !found {
		return "", 0, false
	}
	prefix = DefaultCodePrefix
	if i := strings.LastIndexByte(rest, '-'); i >= 0 {
		prefix, rest = rest[:i], rest[i+1:]
		if prefix == DefaultCodePrefix || recipe.CodePrefixProblem(prefix) != "" {
			return "", 0, false
		}
	}
	year, err := strconv.Atoi(rest)
	if err != nil || !digits(rest) || year < 2000 || year > 2099 {
		return "", 0, false
	}
	return prefix, year, true
}

// FormatCode returns the run code for sequence n (1 to MaxCodeNumber) of
// the prefix ("" for DefaultCodePrefix) and the year of t.
func FormatCode(prefix string, t time.Time, n int64) string {
	return fmt.Sprintf("%s%02d-%04d", codePrefix(prefix), t.UTC().Year()%100, n)
}

// ParseCode splits a code of our shape into its counter name and sequence
// number. ok is false for codes of another shape (for example imported
// from elsewhere), which are kept as they are, and for codes of our shape
// that ValidateCode refuses.
func ParseCode(code string) (counter string, n int64, ok bool) {
	prefix, yy, n, ours, err := parseOurs(code)
	if !ours || err != nil {
		return "", 0, false
	}
	return counterName(prefix, 2000+yy), n, true
}

// ParseCounter reads a code counter's stored value (as text, whatever
// the back end's column type). It is an error unless the value is a
// whole number from 0 to MaxCodeNumber, so a counter changed outside
// foilrun (a float, a huge number, text) is found, never scanned into an
// overflow.
func ParseCounter(stored string) (int64, error) {
	n, err := strconv.ParseInt(strings.TrimSpace(stored), 10, 64)
	if err != nil || n < 0 || n > MaxCodeNumber {
		return 0, fmt.Errorf("holds %q, not a whole number from 0 to %d", stored, MaxCodeNumber)
	}
	return n, nil
}

// ValidateCode checks a run code given by the caller (an import, a copy):
// the code pattern above, and for a code of our shape a number of four to
// six digits from 1 to MaxCodeNumber. Errors wrap ErrInvalid.
func ValidateCode(code string) error {
	if code == "" || len(code) > MaxCodeLength {
		return fmt.Errorf("code %s: want 1 to %d characters: %w", quoteShort(code), MaxCodeLength, ErrInvalid)
	}
	for i, r := range code {
		ok := r >= 'A' && r <= 'Z' || r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || (i > 0 && (r == '-' || r == '_' || r == '.'))
		if !ok {
			return fmt.Errorf("code %s: character %U at byte %d is not a letter, digit, '-', '_' or '.' (codes look like G26-0001): %w",
				quoteShort(code), r, i+1, ErrInvalid)
		}
	}
	if _, _, _, ours, err := parseOurs(code); ours && err != nil {
		return fmt.Errorf("code %q: %v: %w", code, err, ErrInvalid)
	}
	return nil
}

// parseOurs reads a code of the shape <prefix><yy>-<digits>. ours is
// true when the code has that shape; err says what is wrong with its
// number.
func parseOurs(code string) (prefix string, yy int, n int64, ours bool, err error) {
	dash := strings.IndexByte(code, '-')
	if dash < 3 || !digits(code[dash-2:dash]) || !digits(code[dash+1:]) || recipe.CodePrefixProblem(code[:dash-2]) != "" {
		return "", 0, 0, false, nil
	}
	prefix = code[:dash-2]
	yy, _ = strconv.Atoi(code[dash-2 : dash])
	num := code[dash+1:]
	if len(num) < 4 || len(num) > 6 {
		return prefix, yy, 0, true, fmt.Errorf("sequence number %q has %d digits, want 4 to 6 (at most %d)", num, len(num), MaxCodeNumber)
	}
	n, _ = strconv.ParseInt(num, 10, 64) // at most six digits: always fits
	if n < 1 {
		return prefix, yy, 0, true, fmt.Errorf("sequence number %q: runs are numbered from 1", num)
	}
	if want := fmt.Sprintf("%04d", n); num != want {
		return prefix, yy, 0, true, fmt.Errorf("sequence number %q: write it %s (four digits, no other leading zeros)", num, want)
	}
	return prefix, yy, n, true, nil
}

func digits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return s != ""
}

// quoteShort quotes s for a message, cut to its first 40 bytes (and the
// length said) when longer, so a 100,000-character value does not fill
// the screen.
func quoteShort(s string) string {
	if len(s) <= 40 {
		return strconv.QuoteToASCII(s)
	}
	return fmt.Sprintf("%s… (%d bytes)", strconv.QuoteToASCII(s[:40]), len(s))
}
