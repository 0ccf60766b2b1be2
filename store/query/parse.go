package query

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Expr is a parsed --where expression.
type Expr interface {
	// String writes the expression back in the language, fully
	// parenthesised; parsing it again gives the same expression.
	String() string
}

// Compare is "name op value".
type Compare struct {
	Name  string
	Op    string // =, !=, <, <=, >, >=
	Num   float64
	Text  string
	IsStr bool // the value is Text, not Num
	// IsBool: the value was written true or false (Num 1 or 0).
	IsBool bool
	Pos    int // column of the name
	VPos   int // column of the value
}

// And is "L and R".
type And struct{ L, R Expr }

// Or is "L or R".
type Or struct{ L, R Expr }

// Not is "not X".
type Not struct{ X Expr }

func (c *Compare) String() string {
	v := strconv.FormatFloat(c.Num, 'g', -1, 64)
	switch {
	case c.IsStr:
		v = quote(c.Text)
	case c.IsBool:
		v = strconv.FormatBool(c.Num != 0)
	}
	return c.Name + " " + c.Op + " " + v
}

// quote writes s in double quotes, escaping only " and \ with a
// backslash, the one escape the lexer reads.
func quote(s string) string {
	return `"` + strings.NewReplacer(`\`, `\\`, `"`, `\"`).Replace(s) + `"`
}

func (a *And) String() string { return "(" + a.L.String() + " and " + a.R.String() + ")" }
func (o *Or) String() string  { return "(" + o.L.String() + " or " + o.R.String() + ")" }
func (n *Not) String() string { return "not " + n.X.String() }

// Error is a problem with an expression at a column (1-based, in
// characters).
type Error struct {
	Src string
	Col int
	Msg string
}

func (e *Error) Error() string {
	return fmt.Sprintf("where %q: col %d: %s", e.Src, e.Col, e.Msg)
}

type tokKind int

const (
	tEOF tokKind = iota
	tName
	tNum
	tStr
	tOp
	tLParen
	tRParen
	tAnd
	tOr
	tNot
)

type token struct {
	kind tokKind
	text string // as written (names, ops), or the string's value
	num  float64
	col  int
}

func describe(t token) string {
	switch t.kind {
	case tEOF:
		return "end of filter"
	case tStr:
		return strconv.Quote(t.text)
	}
	return "\"" + t.text + "\""
}

// maxDepth bounds nesting so that a hostile expression cannot exhaust the
// stack.
const maxDepth = 64

// maxLen bounds the expression's length.
const maxLen = 4096

type parser struct {
	src   string
	toks  []token
	i     int
	depth int
}

// Parse reads an expression. Errors are *Error.
func Parse(src string) (Expr, error) {
	if len(src) > maxLen {
		return nil, &Error{src[:40] + "…", 1, fmt.Sprintf("expression is %d bytes long; the limit is %d", len(src), maxLen)}
	}
	if !utf8.ValidString(src) {
		return nil, &Error{strings.ToValidUTF8(src, "?"), 1, "expression is not valid UTF-8 text"}
	}
	toks, err := lex(src)
	if err != nil {
		return nil, err
	}
	p := &parser{src: src, toks: toks}
	if p.peek().kind == tEOF {
		return nil, p.fail(p.peek(), "empty expression; want a comparison such as coverage > 0.9")
	}
	e, err := p.or()
	if err != nil {
		return nil, err
	}
	if t := p.peek(); t.kind != tEOF {
		return nil, p.fail(t, "unexpected %s; want \"and\", \"or\" or the end", describe(t))
	}
	return e, nil
}

func (p *parser) peek() token { return p.toks[p.i] }
func (p *parser) next() token {
	t := p.toks[p.i]
	if p.i < len(p.toks)-1 {
		p.i++
	}
	return t
}

func (p *parser) fail(t token, format string, args ...any) error {
	return &Error{p.src, t.col, fmt.Sprintf(format, args...)}
}

func (p *parser) or() (Expr, error) {
	l, err := p.and()
	if err != nil {
		return nil, err
	}
	for p.peek().kind == tOr {
		p.next()
		r, err := p.and()
		if err != nil {
			return nil, err
		}
		l = &Or{l, r}
	}
	return l, nil
}

func (p *parser) and() (Expr, error) {
	l, err := p.factor()
	if err != nil {
		return nil, err
	}
	for p.peek().kind == tAnd {
		p.next()
		r, err := p.factor()
		if err != nil {
			return nil, err
		}
		l = &And{l, r}
	}
	return l, nil
}

func (p *parser) factor() (Expr, error) {
	p.depth++
	defer func() { p.depth-- }()
	t := p.peek()
	if p.depth > maxDepth {
		return nil, p.fail(t, "nested more than %d deep", maxDepth)
	}
	switch t.kind {
	case tNot:
		p.next()
		x, err := p.factor()
		if err != nil {
			return nil, err
		}
		return &Not{x}, nil
	case tLParen:
		p.next()
		e, err := p.or()
		if err != nil {
			return nil, err
		}
		if c := p.peek(); c.kind != tRParen {
			return nil, p.fail(c, "unexpected %s; want \")\" to close the \"(\" at col %d", describe(c), t.col)
		}
		p.next()
		return e, nil
	case tName:
		return p.compare()
	}
	return nil, p.fail(t, "unexpected %s; want a name such as coverage, \"not\" or \"(\"", describe(t))
}

func (p *parser) compare() (Expr, error) {
	name := p.next()
	op := p.peek()
	if op.kind != tOp {
		return nil, p.fail(op, "unexpected %s after %q; want a comparison: = != < <= > >=", describe(op), name.text)
	}
	p.next()
	v := p.next()
	c := &Compare{Name: name.text, Op: op.text, Pos: name.col, VPos: v.col}
	switch v.kind {
	case tNum:
		c.Num = v.num
	case tStr:
		c.Text, c.IsStr = v.text, true
	case tName:
		if v.text == "true" || v.text == "false" {
			c.Num, c.IsBool = boolNum(v.text == "true"), true
			return c, nil
		}
		return nil, p.fail(v, "%s is not a value; quote text (\"%s\") or give a number", describe(v), v.text)
	default:
		return nil, p.fail(v, "unexpected %s after %s %s; want a number or a quoted string", describe(v), name.text, op.text)
	}
	return c, nil
}

func boolNum(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func lex(src string) ([]token, error) {
	var toks []token
	col := 1
	fail := func(c int, format string, args ...any) error {
		return &Error{src, c, fmt.Sprintf(format, args...)}
	}
	for i := 0; i < len(src); {
		r, size := utf8.DecodeRuneInString(src[i:])
		start := col
		switch {
		case r == ' ' || r == '\t' || r == '\n' || r == '\r':
			i += size
			col++
		case r == '(' || r == ')':
			k := tLParen
			if r == ')' {
				k = tRParen
			}
			toks = append(toks, token{kind: k, text: string(r), col: start})
			i++
			col++
		case r == '=' || r == '!' || r == '<' || r == '>':
			op := string(r)
			if i+1 < len(src) && src[i+1] == '=' {
				op += "="
			}
			switch op {
			case "!":
				return nil, fail(start, "\"!\" alone is not an operator; write != or not")
			case "==":
				op = "="
			}
			toks = append(toks, token{kind: tOp, text: op, col: start})
			i += len(op)
			if op == "=" && i < len(src) && src[i] == '=' {
				i++ // "==" written
				col++
			}
			col += len(op)
		case r == '"' || r == '\'':
			var b strings.Builder
			j, c := i+1, col+1
			closed := false
			for j < len(src) {
				q, qs := utf8.DecodeRuneInString(src[j:])
				if q == r {
					closed = true
					j += qs
					c++
					break
				}
				if q == '\\' && j+1 < len(src) {
					j += qs
					c++
					q, qs = utf8.DecodeRuneInString(src[j:])
				}
				b.WriteRune(q)
				j += qs
				c++
			}
			if !closed {
				return nil, fail(start, "string starting with %c is not closed; end it with %c", r, r)
			}
			toks = append(toks, token{kind: tStr, text: b.String(), col: start})
			i, col = j, c
		case r == '-' || r == '+' || r == '.' || r >= '0' && r <= '9':
			j := i + 1
			for j < len(src) && (isDigit(src[j]) || src[j] == '.' || src[j] == 'e' || src[j] == 'E' ||
				(src[j] == '-' || src[j] == '+') && (src[j-1] == 'e' || src[j-1] == 'E')) {
				j++
			}
			text := src[i:j]
			v, err := strconv.ParseFloat(text, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fail(start, "%q is not a number", text)
			}
			if j < len(src) && isNameByte(src[j]) {
				return nil, fail(start, "%q is not a number; values take no unit (parameters are in the unit their name carries, metrics in their canonical unit)", text+nameAt(src[j:]))
			}
			toks = append(toks, token{kind: tNum, text: text, num: v, col: start})
			col += j - i
			i = j
		case r == '_' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z':
			j := i + 1
			for j < len(src) && isNameByte(src[j]) {
				j++
			}
			text := src[i:j]
			k := tName
			switch strings.ToLower(text) {
			case "and":
				k = tAnd
			case "or":
				k = tOr
			case "not":
				k = tNot
			}
			toks = append(toks, token{kind: k, text: text, col: start})
			col += j - i
			i = j
		default:
			hint := ""
			if r == '&' || r == '|' {
				hint = "; write and, or"
			}
			return nil, fail(start, "unexpected character %q%s", r, hint)
		}
	}
	return append(toks, token{kind: tEOF, col: col}), nil
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }
func isNameByte(c byte) bool {
	return c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || isDigit(c)
}

func nameAt(s string) string {
	j := 0
	for j < len(s) && isNameByte(s[j]) {
		j++
	}
	return s[:j]
}
