package history

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
	"github.com/foilrun/foilrun/store"
)

// Furnace is a furnace a history run can be rebuilt on, and the snapshot
// of its file the run stores.
type Furnace struct {
	Furnace  *recipe.Furnace
	Snapshot store.Snapshot
}

// Input is what Convert turns into runs.
type Input struct {
	Sheet        *Sheet
	Map          *Map
	Template     []byte // the template recipe file's bytes
	TemplateFile string // its path: messages, and the snapshot's file
	// Furnace is the furnace of rows the map gives no furnace for.
	Furnace Furnace
	// FurnaceByName finds the furnace a row's furnace cell names; nil:
	// only Furnace's own name is known.
	FurnaceByName func(name string) (Furnace, error)
}

// Run is one row made a run: the record to log, the recipe snapshot (the
// template with the row's values written in), and the findings of
// recipe.Check on its furnace (the run is imported whatever they are).
type Run struct {
	Record   store.RunRecord
	Recipe   store.Snapshot
	Furnace  store.Snapshot
	Findings []recipe.Finding
}

// Setting is what one column sets, for a dry run: "step 6 grow
// (growth): temperature (the ramp and anneal before it follow)".
type Setting struct {
	Heading string
	Sets    string
}

// Result is the runs of a sheet and what each column set.
type Result struct {
	Runs     []Run
	Settings []Setting
}

// maxProblems is how many row problems an error lists.
const maxProblems = 20

// Convert checks the map against the sheet, the template and the
// furnace, then turns every row into a run. It is all or nothing: any
// problem is an error (a *RowsError for problems in rows, each naming the
// row and column heading) and no run is returned.
func Convert(in Input) (*Result, error) {
	c, err := newConverter(in)
	if err != nil {
		return nil, err
	}
	var problems []string
	rows := make([]pending, 0, len(in.Sheet.Rows))
	for _, row := range in.Sheet.Rows {
		p, errs := c.read(row)
		problems = append(problems, errs...)
		rows = append(rows, p)
	}
	if len(problems) == 0 {
		recipes := c.buildAll(rows)
		res := &Result{Settings: c.settings(), Runs: make([]Run, 0, len(rows))}
		for _, p := range rows {
			run, err := c.finish(p, recipes[p.key])
			if err != nil {
				problems = append(problems, err.Error())
				continue
			}
			res.Runs = append(res.Runs, run)
		}
		if len(problems) == 0 {
			return res, nil
		}
	}
	return nil, &RowsError{Sheet: in.Sheet.label(), Rows: len(in.Sheet.Rows), Problems: problems}
}

// RowsError lists the problems found in a sheet's rows; nothing was
// converted. It wraps ErrInvalid.
type RowsError struct {
	Sheet    string
	Rows     int
	Problems []string
}

func (e *RowsError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "sheet %q: %d %s in %d rows; nothing was imported", e.Sheet, len(e.Problems), plural(len(e.Problems), "problem", "problems"), e.Rows)
	for i, p := range e.Problems {
		if i == maxProblems {
			fmt.Fprintf(&b, "\n… and %d more", len(e.Problems)-maxProblems)
			break
		}
		b.WriteString("\n" + p)
	}
	return b.String()
}

// Unwrap returns ErrInvalid.
func (e *RowsError) Unwrap() error { return ErrInvalid }

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// field is one column that sets a step field, resolved.
type field struct {
	FieldMap
	step int // 0-based template step
	col  int // sheet column
	dim  recipe.Dimension
}

type converter struct {
	in       Input
	tmpl     *recipe.Recipe
	editor   *recipe.Editor // the template, read once
	fields   []field
	outcomes []int // sheet column of each Map.Outcomes
	notes    []int
	// sheet columns of the run's own fields, -1 when not mapped
	code, started, operator, furnace, lot int
}

// built is a recipe made from one set of row values, shared by the rows
// that have them.
type built struct {
	snap     store.Snapshot
	params   map[string]float64
	total    float64 // s
	findings []recipe.Finding
	err      error
}

func newConverter(in Input) (*converter, error) {
	m := in.Map
	tmpl, err := recipe.ParseRecipe(in.TemplateFile, in.Template)
	if err != nil {
		return nil, fmt.Errorf("template: %w", err)
	}
	editor, err := recipe.NewEditor(in.Template, in.TemplateFile)
	if err != nil {
		return nil, fmt.Errorf("template: %w", err)
	}
	c := &converter{in: in, tmpl: tmpl, editor: editor}
	heading := map[string]int{}
	for i, h := range in.Sheet.Headings {
		if _, dup := heading[h]; !dup && h != "" {
			heading[h] = i
		}
	}
	col := func(cl *Column) (int, error) {
		if cl == nil {
			return -1, nil
		}
		i, ok := heading[cl.Heading]
		if !ok {
			return -1, invalid("", "map %q: %s: column %q is not in sheet %q; its headings: %s", m.File, cl.Pos, cl.Heading, in.Sheet.label(), quoteList(in.Sheet.Headings))
		}
		return i, nil
	}
	for _, p := range []struct {
		c    *Column
		into *int
	}{{m.Code, &c.code}, {m.Started, &c.started}, {m.Operator, &c.operator}, {m.Furnace, &c.furnace}, {m.Lot, &c.lot}} {
		if *p.into, err = col(p.c); err != nil {
			return nil, err
		}
	}
	for _, sm := range m.Steps {
		step, err := c.step(sm)
		if err != nil {
			return nil, err
		}
		for _, f := range sm.Fields {
			i, err := col(&f.Column)
			if err != nil {
				return nil, err
			}
			dim, _ := recipe.EditDimension(f.Field)
			if f.Field == recipe.EditFlow {
				if err := c.gasLine(in.Furnace.Furnace, sm, f); err != nil {
					return nil, err
				}
			}
			c.fields = append(c.fields, field{FieldMap: f, step: step, col: i, dim: dim})
		}
	}
	for _, o := range m.Outcomes {
		i, err := col(&o.Column)
		if err != nil {
			return nil, err
		}
		c.outcomes = append(c.outcomes, i)
	}
	for _, n := range m.Notes {
		i, err := col(&n)
		if err != nil {
			return nil, err
		}
		c.notes = append(c.notes, i)
	}
	return c, nil
}

// step finds the template step a map key names: a step's name, else its
// kind when the template has exactly one step of that kind.
func (c *converter) step(sm StepMap) (int, error) {
	var byKind []int
	for i, s := range c.tmpl.Steps {
		if s.Name == sm.Key {
			return i, nil
		}
		if string(s.Kind) == sm.Key {
			byKind = append(byKind, i)
		}
	}
	switch len(byKind) {
	case 1:
		return byKind[0], nil
	case 0:
		var labels []string
		for i, s := range c.tmpl.Steps {
			labels = append(labels, s.Label(i))
		}
		return 0, invalid("", "map %q: %s: steps.%s: the template %q has no step named %q or of that kind; its steps: %s",
			c.in.Map.File, sm.Pos, sm.Key, c.in.TemplateFile, sm.Key, strings.Join(labels, ", "))
	}
	var nums []string
	for _, i := range byKind {
		nums = append(nums, strconv.Itoa(i+1))
	}
	return 0, invalid("", "map %q: %s: steps.%s: the template has %d %s steps (%s); give the step's name instead",
		c.in.Map.File, sm.Pos, sm.Key, len(byKind), sm.Key, strings.Join(nums, ", "))
}

// gasLine checks that the furnace has a line for a flow's gas.
func (c *converter) gasLine(f *recipe.Furnace, sm StepMap, fm FieldMap) error {
	g, err := gas.Lookup(fm.Gas)
	if err != nil {
		return invalid("", "map %q: %s: steps.%s.flows.%s: %v", c.in.Map.File, fm.Column.Pos, sm.Key, fm.Gas, err)
	}
	var have []string
	for _, l := range f.Lines {
		lg, err := gas.Lookup(l.Gas)
		if err == nil && lg.Symbol == g.Symbol {
			return nil
		}
		have = append(have, l.Gas)
	}
	return invalid("map the column to a gas the furnace has, or give the furnace file that has the line with --furnace",
		"map %q: %s: steps.%s.flows.%s: furnace %q has no gas line for %s (its lines: %s)",
		c.in.Map.File, fm.Column.Pos, sm.Key, fm.Gas, f.Name, g.Symbol, strings.Join(have, ", "))
}

// settings says what each column sets.
func (c *converter) settings() []Setting {
	m := c.in.Map
	var out []Setting
	add := func(cl *Column, sets string) {
		if cl != nil {
			out = append(out, Setting{cl.Heading, sets})
		}
	}
	add(m.Code, "run code")
	add(m.Started, "start date")
	add(m.Operator, "operator")
	add(m.Furnace, "furnace (by name)")
	add(m.Lot, "foil lot")
	for _, f := range c.fields {
		label := c.tmpl.Steps[f.step].Label(f.step)
		what := f.Field
		if f.Field == recipe.EditFlow {
			what = "flow of " + f.Gas
		}
		if f.Field == recipe.EditTemperature {
			what += " (the ramp and anneal before it follow unless the map sets them)"
		}
		out = append(out, Setting{f.Column.Heading, "step " + label + ": " + what})
	}
	for _, o := range m.Outcomes {
		out = append(out, Setting{o.Column.Heading, "outcome " + o.Metric})
	}
	for _, n := range m.Notes {
		out = append(out, Setting{n.Heading, "note"})
	}
	return out
}

// problem is "row 17, column 'CH4 (sccm)': msg".
func (c *converter) problem(row Row, col int, msg string) string {
	return fmt.Sprintf("row %d, column '%s': %s", row.N, c.in.Sheet.Headings[col], msg)
}

// cell returns a row's cell in the column, "" for an unmapped one.
func cell(row Row, col int) string {
	if col < 0 {
		return ""
	}
	return row.Cells[col]
}
