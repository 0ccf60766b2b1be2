package query

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Column is a run column the language may name: the fixed SQL that reads
// it (chosen by the back end, never by the user) and whether it holds text.
type Column struct {
	SQL  string // e.g. "r.status"
	Text bool
	// Bool: the SQL gives 1 or 0 and the language compares it with
	// true or false, by = or != only.
	Bool bool
}

// Schema is what names may appear in an expression.
type Schema struct {
	Columns map[string]Column
	Params  map[string]bool // recipe parameters (table run_params)
	Metrics map[string]bool // outcome metrics (table outcomes)
	// RunID is the SQL of the run's id, e.g. "r.id".
	RunID string
	// Summary, when not nil, is a one-row-per-run summary the query
	// joins: names it has a column for are read from that column, every
	// other parameter or metric from its table of (name, run_id, value)
	// rows, instead of run_params and outcomes.
	Summary *Summary
}

// Summary is where a query with a run summary reads parameters and
// metrics (see Schema.Summary).
type Summary struct {
	Params  map[string]string // parameter name → the SQL of its column
	Metrics map[string]string // metric name → the SQL of its column (the mean)
	Extra   string            // table of (name, run_id, value) for the rest
}

var sqlOps = map[string]string{"=": "=", "!=": "<>", "<": "<", "<=": "<=", ">": ">", ">=": ">="}

// Compile turns an expression into an SQL boolean expression with "?"
// placeholders and its arguments, in order. src is the expression's text,
// for messages.
func Compile(e Expr, s Schema, src string) (string, []any, error) {
	var b strings.Builder
	var args []any
	if err := compile(&b, &args, e, s, src); err != nil {
		return "", nil, err
	}
	return b.String(), args, nil
}

// MaxComparisons bounds the comparisons of one filter, all its
// expressions together: a hundred conditions is more than a person
// writes, and far below what the databases refuse (SQLite's expression
// depth of 1000, which 1,500 repeated --where flags once reached with a
// raw message).
const MaxComparisons = 100

// Comparisons counts the comparisons in an expression.
func Comparisons(e Expr) int {
	switch e := e.(type) {
	case *And:
		return Comparisons(e.L) + Comparisons(e.R)
	case *Or:
		return Comparisons(e.L) + Comparisons(e.R)
	case *Not:
		return Comparisons(e.X)
	}
	return 1
}

// CompileAll parses and compiles the expressions of one filter (a run
// passes when it passes all of them) into one SQL condition joined by
// AND, with its arguments; "" for none. More than MaxComparisons
// comparisons in all is an error that says how many there are.
func CompileAll(srcs []string, s Schema) (string, []any, error) {
	exprs := make([]Expr, len(srcs))
	n := 0
	for i, src := range srcs {
		e, err := Parse(src)
		if err != nil {
			return "", nil, err
		}
		exprs[i] = e
		if n += Comparisons(e); n > MaxComparisons {
			return "", nil, fmt.Errorf("filter: more than %d comparisons in the %d expressions given (the first %d hold %d); combine them with \"or\"/\"and\" and fewer conditions",
				MaxComparisons, len(srcs), i+1, n)
		}
	}
	var parts []string
	var args []any
	for i, e := range exprs {
		q, a, err := Compile(e, s, srcs[i])
		if err != nil {
			return "", nil, err
		}
		parts = append(parts, q)
		args = append(args, a...)
	}
	return strings.Join(parts, " AND "), args, nil
}

// ParseCompile is Parse then Compile.
func ParseCompile(src string, s Schema) (string, []any, error) {
	e, err := Parse(src)
	if err != nil {
		return "", nil, err
	}
	return Compile(e, s, src)
}

func compile(b *strings.Builder, args *[]any, e Expr, s Schema, src string) error {
	switch e := e.(type) {
	case *And, *Or:
		var l, r Expr
		word := " AND "
		if a, ok := e.(*And); ok {
			l, r = a.L, a.R
		} else {
			o := e.(*Or)
			l, r, word = o.L, o.R, " OR "
		}
		b.WriteString("(")
		if err := compile(b, args, l, s, src); err != nil {
			return err
		}
		b.WriteString(word)
		if err := compile(b, args, r, s, src); err != nil {
			return err
		}
		b.WriteString(")")
	case *Not:
		b.WriteString("(NOT ")
		if err := compile(b, args, e.X, s, src); err != nil {
			return err
		}
		b.WriteString(")")
	case *Compare:
		return compare(b, args, e, s, src)
	default:
		panic(fmt.Sprintf("query: unknown expression %T", e))
	}
	return nil
}

func compare(b *strings.Builder, args *[]any, c *Compare, s Schema, src string) error {
	op, ok := sqlOps[c.Op]
	if !ok {
		return &Error{src, c.Pos, fmt.Sprintf("unknown operator %q", c.Op)}
	}
	if col, ok := s.Columns[c.Name]; ok {
		switch {
		case col.Bool && (!c.IsBool || (op != "=" && op != "<>")):
			return &Error{src, c.VPos, fmt.Sprintf("%s is true or false; write %s = true or %s = false", c.Name, c.Name, c.Name)}
		case !col.Bool && c.IsBool:
			return &Error{src, c.VPos, fmt.Sprintf("%s is not true or false; give a %s", c.Name, kindOf(col))}
		case col.Text && !c.IsStr:
			return &Error{src, c.VPos, fmt.Sprintf("%s holds text; quote the value, e.g. %s %s \"%s\"", c.Name, c.Name, c.Op, strings.TrimSpace(fmt.Sprint(c.Num)))}
		case !col.Text && c.IsStr:
			return &Error{src, c.VPos, fmt.Sprintf("%s holds numbers; give a number, not %q", c.Name, c.Text)}
		}
		b.WriteString("(" + col.SQL + " " + op + " ?)")
		if c.IsStr {
			*args = append(*args, c.Text)
		} else {
			*args = append(*args, c.Num)
		}
		return nil
	}
	isParam, isMetric := s.Params[c.Name], s.Metrics[c.Name]
	if !isParam && !isMetric {
		return &Error{src, c.Pos, unknownName(c.Name, s)}
	}
	switch {
	case c.IsStr:
		return &Error{src, c.VPos, fmt.Sprintf("%s is a number; give a number, not %q", c.Name, c.Text)}
	case c.IsBool:
		return &Error{src, c.VPos, fmt.Sprintf("%s is a number; give a number, not %s", c.Name, strconv.FormatBool(c.Num != 0))}
	}
	if sm := s.Summary; sm != nil {
		col, ok := sm.Params[c.Name]
		if !isParam {
			col, ok = sm.Metrics[c.Name]
		}
		if ok {
			// a run without the value fails the comparison, and so
			// passes its negation, as with IN below
			b.WriteString("(" + col + " IS NOT NULL AND " + col + " " + op + " ?)")
			*args = append(*args, c.Num)
			return nil
		}
		b.WriteString(s.RunID + " IN (SELECT run_id FROM " + sm.Extra + " WHERE name = ? AND value " + op + " ?)")
		*args = append(*args, c.Name, c.Num)
		return nil
	}
	if isParam {
		b.WriteString(s.RunID + " IN (SELECT run_id FROM run_params WHERE name = ? AND value " + op + " ?)")
	} else {
		b.WriteString(s.RunID + " IN (SELECT run_id FROM outcomes WHERE metric = ? GROUP BY run_id HAVING AVG(value) " + op + " ?)")
	}
	*args = append(*args, c.Name, c.Num)
	return nil
}

// kindOf names what a column holds, for messages.
func kindOf(col Column) string {
	if col.Text {
		return "quoted text"
	}
	return "number"
}

func unknownName(name string, s Schema) string {
	var all []string
	for n := range s.Columns {
		all = append(all, n)
	}
	for n := range s.Params {
		all = append(all, n)
	}
	for n := range s.Metrics {
		all = append(all, n)
	}
	sort.Strings(all)
	best, bd := "", 1<<30
	for _, n := range all {
		if d := distance(strings.ToLower(name), n); d < bd {
			best, bd = n, d
		}
	}
	msg := fmt.Sprintf("unknown name %q; want a run column, recipe parameter or outcome metric", name)
	if best != "" && bd <= max(2, len(name)/3) {
		msg += fmt.Sprintf(" (did you mean %s?)", best)
	}
	return msg
}

// distance is the Levenshtein edit distance.
func distance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			c := 1
			if a[i-1] == b[j-1] {
				c = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+c)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
