package query

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

var testSchema = Schema{
	Columns: map[string]Column{"status": {SQL: "r.status", Text: true}, "furnace": {SQL: "r.furnace", Text: true}, "code": {SQL: "r.code", Text: true},
		"override": {SQL: "r.over", Bool: true}},
	Params:  map[string]bool{"growth_temperature_c": true, "ch4_h2_ratio": true},
	Metrics: map[string]bool{"coverage": true, "layers": true},
	RunID:   "r.id",
}

const (
	inParam  = "r.id IN (SELECT run_id FROM run_params WHERE name = ? AND value "
	inMetric = "r.id IN (SELECT run_id FROM outcomes WHERE metric = ? GROUP BY run_id HAVING AVG(value) "
)

// The SQL each expression must compile to (hand-written from the grammar
// in doc.go: and binds tighter than or).
func TestCompile(t *testing.T) {
	tests := []struct {
		name, src, sql string
		args           []any
	}{
		{"column", `status = "done"`, `(r.status = ?)`, []any{"done"}},
		{"single quotes", `furnace != 'tube-1'`, `(r.furnace <> ?)`, []any{"tube-1"}},
		{"param", `growth_temperature_c >= 1000`, inParam + ">= ?)", []any{"growth_temperature_c", 1000.0}},
		{"metric", `coverage > 0.9`, inMetric + "> ?)", []any{"coverage", 0.9}},
		{"precedence", `growth_temperature_c >= 1000 and coverage > 0.9 or status = "done"`,
			"((" + inParam + ">= ?) AND " + inMetric + "> ?)) OR (r.status = ?))", []any{"growth_temperature_c", 1000.0, "coverage", 0.9, "done"}},
		{"parens and not", `NOT (layers = 1 OR ch4_h2_ratio < 1e-2)`,
			"(NOT (" + inMetric + "= ?) OR " + inParam + "< ?)))", []any{"layers", 1.0, "ch4_h2_ratio", 0.01}},
		{"double equals, negative", `growth_temperature_c == -5`, inParam + "= ?)", []any{"growth_temperature_c", -5.0}},
		{"escaped quote", `code = "G\"1"`, `(r.code = ?)`, []any{`G"1`}},
		{"bool true", `override = true`, `(r.over = ?)`, []any{1.0}},
		{"bool false, not equal", `override != false`, `(r.over <> ?)`, []any{0.0}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			sql, args, err := ParseCompile(tt.src, testSchema)
			if err != nil {
				t.Fatalf("ParseCompile(%q): %v", tt.src, err)
			}
			if sql != tt.sql || !reflect.DeepEqual(args, tt.args) {
				t.Errorf("ParseCompile(%q)\n got %s %v\nwant %s %v", tt.src, sql, args, tt.sql, tt.args)
			}
		})
	}
}

// Each bad expression must fail at the column of the offending token
// (columns counted by hand, 1-based).
func TestErrors(t *testing.T) {
	tests := []struct {
		name, src string
		col       int
		msg       string
	}{
		{"injection", `x'; DROP TABLE runs; --`, 2, "string starting with ' is not closed"},
		{"injection in value", `status = "done"; DROP TABLE runs`, 16, `unexpected character ';'`},
		{"unknown name", `growth_temp > 1000`, 1, `unknown name "growth_temp"`},
		{"typo suggestion", `coverge > 1`, 1, "did you mean coverage?"},
		{"missing value", `coverage >`, 11, "want a number or a quoted string"},
		{"bare word value", `status = done`, 10, `quote text ("done")`},
		{"unit on number", `coverage > 90%`, 14, `unexpected character '%'`},
		{"unit letters", `growth_temperature_c > 1000C`, 24, `values take no unit`},
		{"unclosed paren", `(coverage > 0.5`, 16, `want ")" to close the "(" at col 1`},
		{"dangling and", `coverage > 0.5 and`, 19, "unexpected end of filter"},
		{"text column number", `status = 3`, 10, "status holds text"},
		{"metric string", `coverage = "high"`, 12, "coverage is a number"},
		{"bool column number", `override = 1`, 12, "override is true or false"},
		{"bool column order", `override > false`, 12, "write override = true"},
		{"bool on text column", `status = true`, 10, "status is not true or false"},
		{"bool on metric", `coverage = false`, 12, "coverage is a number; give a number, not false"},
		{"lone bang", `!coverage`, 1, `"!" alone`},
		{"empty", `   `, 4, "empty expression"},
		{"ampersand", `coverage > 1 && layers = 1`, 14, "write and, or"},
		{"trailing", `coverage > 1 layers = 1`, 14, `unexpected "layers"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, _, err := ParseCompile(tt.src, testSchema)
			var qe *Error
			if !errors.As(err, &qe) {
				t.Fatalf("ParseCompile(%q) = %v, want *Error", tt.src, err)
			}
			if qe.Col != tt.col || !strings.Contains(qe.Msg, tt.msg) {
				t.Errorf("ParseCompile(%q): got col %d %q, want col %d containing %q", tt.src, qe.Col, qe.Msg, tt.col, tt.msg)
			}
		})
	}
}

func TestDepthLimit(t *testing.T) {
	src := strings.Repeat("(", 200) + "coverage > 1" + strings.Repeat(")", 200)
	if _, err := Parse(src); err == nil || !strings.Contains(err.Error(), "nested more than") {
		t.Errorf("Parse of 200 nested parentheses: got %v, want a nesting error", err)
	}
}

// FuzzParse: never panics; what parses prints back to an expression that
// parses to the same text; compiled SQL holds no quote, semicolon or
// comment (no user text) and one placeholder per argument.
func FuzzParse(f *testing.F) {
	for _, s := range []string{`growth_temperature_c >= 1000 and coverage > 0.9 or status = "done"`, `not (layers = 1)`,
		`x'; DROP TABLE runs; --`, `code = "a\"b"`, `coverage>-1e-3`, `((status='x'))`, `a = 1 or`} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		e, err := Parse(src)
		if err != nil {
			return
		}
		again, err := Parse(e.String())
		if err != nil {
			t.Fatalf("Parse(%q).String() = %q does not parse: %v", src, e.String(), err)
		}
		if again.String() != e.String() {
			t.Fatalf("round trip: %q then %q", e.String(), again.String())
		}
		sql, args, err := Compile(e, testSchema, src)
		if err != nil {
			return
		}
		if strings.ContainsAny(sql, "'\";") || strings.Contains(sql, "--") {
			t.Fatalf("SQL %q holds user text", sql)
		}
		if n := strings.Count(sql, "?"); n != len(args) {
			t.Fatalf("SQL %q has %d placeholders for %d args", sql, n, len(args))
		}
	})
}

// TestComparisonLimit: a filter of more than MaxComparisons comparisons,
// whether many expressions or one long one, is refused with the count;
// exactly MaxComparisons compiles.
func TestComparisonLimit(t *testing.T) {
	s := Schema{Metrics: map[string]bool{"coverage": true}, RunID: "r.id"}
	many := func(n int) []string {
		out := make([]string, n)
		for i := range out {
			out[i] = "coverage > 0"
		}
		return out
	}
	tests := []struct {
		name string
		srcs []string
		err  string
	}{
		{"100 flags", many(MaxComparisons), ""},
		{"1500 flags", many(1500), "more than 100 comparisons in the 1500 expressions given (the first 101 hold 101)"},
		{"one long expression", []string{strings.Repeat("coverage > 0 or ", 120) + "coverage > 0"}, "more than 100 comparisons in the 1 expressions given (the first 1 hold 121)"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			q, args, err := CompileAll(tt.srcs, s)
			switch {
			case tt.err == "" && (err != nil || len(args) != 2*MaxComparisons || strings.Count(q, "?") != len(args)):
				t.Errorf("got %d arguments, %v; want %d and no error", len(args), err, 2*MaxComparisons)
			case tt.err != "" && (err == nil || !strings.Contains(err.Error(), tt.err)):
				t.Errorf("got %v, want an error containing %q", err, tt.err)
			}
		})
	}
}
