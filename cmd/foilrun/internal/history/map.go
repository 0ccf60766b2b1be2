// Package history turns a lab's own sheet of past runs (CSV or XLSX) into
// run records: every row a run whose recipe snapshot is a template recipe
// with that row's values written in (recipe.EditSteps, the editing suggest
// uses), with the row's outcomes, notes and provenance (file, sheet, row).
// A map file names, in the sheet's own column headings, which column feeds
// which field (ParseMap); ReadSheet reads the sheet; Convert checks every
// row and builds the runs, all or nothing, each problem named by row and
// column heading. It never prints and never writes the run log.
//
// All quantities are SI inside, as in recipe; units are read once, from
// the map or the cell, by recipe.Parse.
package history

import (
	"fmt"
	"sort"
	"strings"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe"
)

// Column is one column of the sheet that feeds a field, with the unit its
// bare numbers are in ("" when the cells carry their own).
type Column struct {
	Heading string
	Unit    string
	Pos     recipe.Pos // where the map names it
}

// FieldMap is one step field a column sets: Field is a recipe StepEdit
// field (recipe.EditTemperature, …), Gas the gas of a flow.
type FieldMap struct {
	Field  string
	Gas    string
	Column Column
}

// StepMap is the fields one template step takes from the sheet; Key is
// the step's name or kind as the map writes it.
type StepMap struct {
	Key    string
	Pos    recipe.Pos
	Fields []FieldMap
}

// OutcomeMap is one metric, named as stored, and its column.
type OutcomeMap struct {
	Metric string
	Column Column
}

// Map says which sheet column feeds which field of a run.
type Map struct {
	File      string
	Code      *Column // optional: run codes; new codes when nil
	Started   *Column // optional: start date and time
	DateOrder string  // "dmy", "mdy", "ymd" or "" (only unambiguous dates)
	Operator  *Column
	Furnace   *Column // optional: a furnace name per row
	Lot       *Column
	Decimal   string // "point" (default) or "comma"
	Steps     []StepMap
	Outcomes  []OutcomeMap
	Notes     []Column
}

// Columns returns every column the map names, in map order.
func (m *Map) Columns() []Column {
	var cs []Column
	for _, c := range []*Column{m.Code, m.Started, m.Operator, m.Furnace, m.Lot} {
		if c != nil {
			cs = append(cs, *c)
		}
	}
	for _, s := range m.Steps {
		for _, f := range s.Fields {
			cs = append(cs, f.Column)
		}
	}
	for _, o := range m.Outcomes {
		cs = append(cs, o.Column)
	}
	return append(cs, m.Notes...)
}

var topKeys = []string{"code", "started", "date_order", "operator", "furnace", "lot", "decimal", "steps", "outcomes", "notes"}

// ParseMap reads a map file; name is used in messages. Unknown keys, a
// field no step has and a column given twice are errors with the line and
// column in the map.
func ParseMap(name string, data []byte) (*Map, error) {
	p := &mapParser{m: &Map{File: name, Decimal: "point"}}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, p.fail(recipe.Pos{}, "not valid YAML: %s", strings.TrimPrefix(err.Error(), "yaml: "))
	}
	if len(doc.Content) == 0 || doc.Content[0].Kind != yaml.MappingNode {
		return nil, p.fail(recipe.Pos{}, "the map must be a mapping of key: column lines (code, started, steps, outcomes, notes, …)")
	}
	root := doc.Content[0]
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], root.Content[i+1]
		if err := p.top(k, v); err != nil {
			return nil, err
		}
	}
	if len(p.m.Steps) == 0 && len(p.m.Outcomes) == 0 {
		return nil, p.fail(recipe.Pos{}, "the map sets no step field and no outcome")
	}
	return p.m, nil
}

type mapParser struct {
	m *Map
}

func pos(n *yaml.Node) recipe.Pos { return recipe.Pos{Line: n.Line, Col: n.Column} }

func (p *mapParser) fail(at recipe.Pos, format string, args ...any) error {
	where := ""
	if at.Line > 0 {
		where = at.String() + ": "
	}
	return invalid("", "map %q: %s%s", p.m.File, where, fmt.Sprintf(format, args...))
}

func (p *mapParser) top(k, v *yaml.Node) error {
	var err error
	switch k.Value {
	case "code":
		p.m.Code, err = p.column(v)
	case "started":
		p.m.Started, err = p.column(v)
	case "operator":
		p.m.Operator, err = p.column(v)
	case "furnace":
		p.m.Furnace, err = p.column(v)
	case "lot":
		p.m.Lot, err = p.column(v)
	case "date_order":
		return p.choice(v, &p.m.DateOrder, "dmy", "mdy", "ymd")
	case "decimal":
		return p.choice(v, &p.m.Decimal, "point", "comma")
	case "steps":
		return p.steps(v)
	case "outcomes":
		return p.outcomes(v)
	case "notes":
		return p.notes(v)
	default:
		return p.fail(pos(k), "unknown key %q; want one of %s", k.Value, strings.Join(topKeys, ", "))
	}
	return err
}

func (p *mapParser) choice(v *yaml.Node, into *string, choices ...string) error {
	for _, c := range choices {
		if v.Kind == yaml.ScalarNode && v.Value == c {
			*into = c
			return nil
		}
	}
	return p.fail(pos(v), "%q: want %s", v.Value, strings.Join(choices, " or "))
}

// column reads a column: a heading, or {column: HEADING, unit: UNIT}.
func (p *mapParser) column(v *yaml.Node) (*Column, error) {
	c := &Column{Pos: pos(v)}
	switch v.Kind {
	case yaml.ScalarNode:
		c.Heading = v.Value
	case yaml.MappingNode:
		for i := 0; i+1 < len(v.Content); i += 2 {
			k, val := v.Content[i], v.Content[i+1]
			if val.Kind != yaml.ScalarNode {
				return nil, p.fail(pos(val), "%s: want text", k.Value)
			}
			switch k.Value {
			case "column":
				c.Heading = val.Value
			case "unit":
				c.Unit = val.Value
			default:
				return nil, p.fail(pos(k), "unknown key %q in a column; want column and unit", k.Value)
			}
		}
	default:
		return nil, p.fail(pos(v), "want a column heading or {column: HEADING, unit: UNIT}")
	}
	if c.Heading == "" {
		return nil, p.fail(pos(v), "no column heading; write {column: \"heading as in the sheet\", unit: UNIT}")
	}
	return c, nil
}

func (p *mapParser) steps(v *yaml.Node) error {
	if v.Kind != yaml.MappingNode {
		return p.fail(pos(v), "steps: want a mapping of step name or kind to fields")
	}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k, fields := v.Content[i], v.Content[i+1]
		if fields.Kind != yaml.MappingNode {
			return p.fail(pos(fields), "steps.%s: want a mapping of field to column", k.Value)
		}
		sm := StepMap{Key: k.Value, Pos: pos(k)}
		for j := 0; j+1 < len(fields.Content); j += 2 {
			fk, fv := fields.Content[j], fields.Content[j+1]
			if fk.Value == "flows" {
				if err := p.flows(&sm, fv); err != nil {
					return err
				}
				continue
			}
			dim, ok := recipe.EditDimension(fk.Value)
			if !ok || fk.Value == recipe.EditFlow {
				also := ""
				if fk.Value == "time" {
					also = ` (a step's time is "duration")`
				}
				return p.fail(pos(fk), "steps.%s.%s: no step field %q%s; want one of %s, or flows.GAS", k.Value, fk.Value, fk.Value, also, strings.Join(stepFields(), ", "))
			}
			c, err := p.column(fv)
			if err != nil {
				return err
			}
			if err := p.unit(*c, dim, "steps."+k.Value+"."+fk.Value); err != nil {
				return err
			}
			sm.Fields = append(sm.Fields, FieldMap{Field: fk.Value, Column: *c})
		}
		p.m.Steps = append(p.m.Steps, sm)
	}
	return nil
}

func (p *mapParser) flows(sm *StepMap, v *yaml.Node) error {
	if v.Kind != yaml.MappingNode {
		return p.fail(pos(v), "steps.%s.flows: want a mapping of gas to column", sm.Key)
	}
	for i := 0; i+1 < len(v.Content); i += 2 {
		g, cv := v.Content[i], v.Content[i+1]
		c, err := p.column(cv)
		if err != nil {
			return err
		}
		if err := p.unit(*c, recipe.Flow, "steps."+sm.Key+".flows."+g.Value); err != nil {
			return err
		}
		sm.Fields = append(sm.Fields, FieldMap{Field: recipe.EditFlow, Gas: g.Value, Column: *c})
	}
	return nil
}

// unit checks that a column's unit, when given, measures dim.
func (p *mapParser) unit(c Column, dim recipe.Dimension, field string) error {
	if c.Unit == "" {
		return nil
	}
	if _, err := recipe.Parse("1 "+c.Unit, dim); err != nil {
		return p.fail(c.Pos, "%s: unit %q: %v", field, c.Unit, err)
	}
	return nil
}

func (p *mapParser) outcomes(v *yaml.Node) error {
	if v.Kind != yaml.MappingNode {
		return p.fail(pos(v), "outcomes: want a mapping of metric to column")
	}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k := v.Content[i]
		c, err := p.column(v.Content[i+1])
		if err != nil {
			return err
		}
		p.m.Outcomes = append(p.m.Outcomes, OutcomeMap{Metric: k.Value, Column: *c})
	}
	return nil
}

func (p *mapParser) notes(v *yaml.Node) error {
	items := []*yaml.Node{v}
	if v.Kind == yaml.SequenceNode {
		items = v.Content
	}
	for _, n := range items {
		c, err := p.column(n)
		if err != nil {
			return err
		}
		p.m.Notes = append(p.m.Notes, *c)
	}
	return nil
}

// stepFields are the step field names a map may set, sorted.
func stepFields() []string {
	var fs []string
	for _, f := range recipe.EditFields() {
		if f != recipe.EditFlow {
			fs = append(fs, f)
		}
	}
	sort.Strings(fs)
	return fs
}
