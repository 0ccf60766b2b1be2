package recipe

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe/gas"
)

// The fields of a step a StepEdit can change (each the step's YAML key,
// but EditFlow, which is one gas of "flows").
const (
	EditTemperature = "temperature" // hold temperature, K
	EditDuration    = "duration"    // s
	EditPressure    = "pressure"    // set-point, Pa
	EditFlow        = "flow"        // one gas's flow, mol/s
	EditTo          = "to"          // a ramp's or cool's target temperature, K
	EditRate        = "rate"        // a ramp's or cool's rate, K/s
	EditUntil       = "until"       // a pump step's end pressure, Pa
	EditBackfill    = "backfill"    // a purge's backfill pressure, Pa
	EditMaxRise     = "max_rise"    // a leak check's allowed rise, Pa/s
)

// StepEdit is one change to a step of a recipe file: a field and its new
// value in SI.
type StepEdit struct {
	// Field is one of the Edit constants (EditTemperature, …, EditFlow).
	Field string
	// Gas names the gas whose flow changes (EditFlow only), by symbol or
	// any name the gas table knows ("CH4", "methane").
	Gas string
	// SI is the new value: K, s, Pa or mol/s; finite.
	SI float64
	// Digits is the number of significant digits written, > 0; 0 writes
	// the shortest text that reads back to SI exactly (Format).
	Digits int
}

// Edit is a set of changes to one step of a recipe file.
type Edit struct {
	// Step is the 0-based index of the step to change.
	Step int
	// Changes are applied in order.
	Changes []StepEdit
	// From names the file the recipe text came from, for messages and for
	// the folder relative furnace and site paths start from.
	From string
	// To, when not empty, is the file the result will be written to:
	// relative furnace and site paths are rewritten so they name the same
	// files from its folder.
	To string
}

// ErrEdit: the edit does not fit the recipe (no such step, an unknown
// field or gas, a value that cannot be written).
var ErrEdit = errors.New("cannot edit recipe")

// defaultUnits are the units an edit writes a field in when the file does
// not already give the field in a unit of its dimension (common lab units).
var defaultUnits = map[string]struct {
	dim  Dimension
	unit string
}{
	EditTemperature: {Temperature, "C"},
	EditDuration:    {Duration, "min"},
	EditPressure:    {Pressure, "Torr"},
	EditFlow:        {Flow, "sccm"},
	EditTo:          {Temperature, "C"},
	EditRate:        {TemperatureRate, "C/min"},
	EditUntil:       {Pressure, "mTorr"},
	EditBackfill:    {Pressure, "Torr"},
	EditMaxRise:     {PressureRate, "mTorr/min"},
}

// EditFields lists the fields a StepEdit can change, in the order of the
// Edit constants.
func EditFields() []string {
	return []string{EditTemperature, EditDuration, EditPressure, EditFlow, EditTo, EditRate, EditUntil, EditBackfill, EditMaxRise}
}

// EditDimension returns the dimension of a StepEdit field; false for a
// field an edit cannot change.
func EditDimension(field string) (Dimension, bool) {
	du, ok := defaultUnits[field]
	return du.dim, ok
}

// EditRecipe returns the recipe text data with one step changed. It edits
// the YAML node tree, so comments, key order and the rest of the file
// stay; only YAML's own re-indentation (two spaces) may move text. Each
// value is written in the unit the file already used for that field when
// it had one (a flow in "slm" stays in slm), else in C, min, Torr, sccm,
// C/min, mTorr or mTorr/min.
//
// A temperature change also moves the anneal, ramp and grow steps just
// before the step that sat at its old temperature (a ramp's "to"), up to
// and including the nearest ramp, so the furnace is at the new temperature
// when the step begins.
//
// The result is not validated; parse it with ParseRecipe. Errors wrap
// ErrEdit, or are YAML errors for text that is not a YAML mapping.
func EditRecipe(data []byte, e Edit) ([]byte, error) {
	return EditSteps(data, e.From, e.To, []Edit{e})
}

// EditSteps is EditRecipe for changes to several steps, in one pass over
// the YAML: edits are applied from the last step to the first, so a step's
// own temperature, when an edit sets it, wins over one that followed a
// later step's change. from and to are Edit's From and To (the Edits'
// own are not read).
func EditSteps(data []byte, from, to string, edits []Edit) ([]byte, error) {
	ed, err := NewEditor(data, from)
	if err != nil {
		return nil, err
	}
	return ed.Apply(to, edits)
}

// Editor edits one recipe text many times (a template, once per row of a
// sheet), reading its YAML once. Apply works on a copy of the tree, so an
// Editor may be used from several goroutines at once.
type Editor struct {
	doc  *yaml.Node
	from string
}

// NewEditor reads the recipe text data; from names it in messages and is
// where relative paths start (Edit.From).
func NewEditor(data []byte, from string) (*Editor, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, fmt.Errorf("edit recipe %q: %w", from, err)
	}
	if len(doc.Content) != 1 || doc.Content[0].Kind != yaml.MappingNode {
		return nil, fmt.Errorf("edit recipe %q: not a YAML mapping: %w", from, ErrEdit)
	}
	return &Editor{doc: &doc, from: from}, nil
}

// Apply returns the recipe text with the edits made, as EditSteps does;
// to is Edit.To.
func (ed *Editor) Apply(to string, edits []Edit) ([]byte, error) {
	from := ed.from
	doc := copyNode(ed.doc, map[*yaml.Node]*yaml.Node{})
	root := doc.Content[0]
	steps := mapValue(root, "steps")
	order := make([]Edit, len(edits))
	copy(order, edits)
	sort.SliceStable(order, func(i, j int) bool { return order[i].Step > order[j].Step })
	for _, e := range order {
		if steps == nil || steps.Kind != yaml.SequenceNode || e.Step < 0 || e.Step >= len(steps.Content) || steps.Content[e.Step].Kind != yaml.MappingNode {
			return nil, fmt.Errorf("edit recipe %q: cannot find step %d: %w", from, e.Step+1, ErrEdit)
		}
		st := steps.Content[e.Step]
		for _, c := range e.Changes {
			if err := applyEdit(steps.Content[:e.Step], st, c); err != nil {
				return nil, fmt.Errorf("edit recipe %q: step %d (line %d): %w", from, e.Step+1, st.Line, err)
			}
		}
	}
	if to != "" {
		relocate(root, from, to)
	}
	var b bytes.Buffer
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	if err := enc.Encode(doc); err != nil {
		return nil, fmt.Errorf("edit recipe %q: %w", from, err)
	}
	if err := enc.Close(); err != nil {
		return nil, fmt.Errorf("edit recipe %q: %w", from, err)
	}
	return b.Bytes(), nil
}

// copyNode copies a YAML node tree; seen maps nodes already copied to
// their copies, so an alias points at the copy of its anchor.
func copyNode(n *yaml.Node, seen map[*yaml.Node]*yaml.Node) *yaml.Node {
	if n == nil {
		return nil
	}
	if c, ok := seen[n]; ok {
		return c
	}
	c := *n
	seen[n] = &c
	c.Content = make([]*yaml.Node, len(n.Content))
	for i, k := range n.Content {
		c.Content[i] = copyNode(k, seen)
	}
	c.Alias = copyNode(n.Alias, seen)
	return &c
}

// applyEdit makes one change to the step node st; before are the step
// nodes that precede it.
func applyEdit(before []*yaml.Node, st *yaml.Node, c StepEdit) error {
	du, ok := defaultUnits[c.Field]
	if !ok {
		return fmt.Errorf("field %q: want one of %s: %w", c.Field, strings.Join(EditFields(), ", "), ErrEdit)
	}
	if c.Digits < 0 {
		return fmt.Errorf("%s: %d significant digits: want 0 or more: %w", c.Field, c.Digits, ErrEdit)
	}
	if c.Field != EditFlow {
		old := mapValue(st, c.Field)
		text, err := formatLike(old, c, du.dim, du.unit)
		if err != nil {
			return err
		}
		if c.Field == EditTemperature && old != nil {
			if q, err := Parse(old.Value, Temperature); err == nil {
				followTemperature(before, q.SI, c)
			}
		}
		setScalar(st, c.Field, text)
		return nil
	}
	g, err := gas.Lookup(c.Gas)
	if err != nil {
		return fmt.Errorf("flow of %q: %v: %w", c.Gas, err, ErrEdit)
	}
	flows := mapValue(st, "flows")
	if flows == nil {
		flows = &yaml.Node{Kind: yaml.MappingNode, Style: yaml.FlowStyle}
		setMapValue(st, "flows", flows)
	}
	if flows.Kind != yaml.MappingNode {
		return fmt.Errorf("flows at line %d col %d is not a mapping of gas to flow: %w", flows.Line, flows.Column, ErrEdit)
	}
	key := g.Symbol
	for i := 0; i+1 < len(flows.Content); i += 2 {
		if k, err := gas.Lookup(flows.Content[i].Value); err == nil && k.Symbol == g.Symbol {
			key = flows.Content[i].Value
		}
	}
	text, err := formatLike(mapValue(flows, key), c, Flow, du.unit)
	if err != nil {
		return err
	}
	setScalar(flows, key, text)
	return nil
}

// followTemperature moves the anneal, ramp and grow steps just before the
// edited one that sat at its old temperature (old, K) to the new one,
// stopping at the first step that differs and after the nearest ramp (it
// brings the furnace there; steps before it are colder).
func followTemperature(before []*yaml.Node, old float64, c StepEdit) {
	for i := len(before) - 1; i >= 0; i-- {
		st := before[i]
		kind := mapValue(st, "kind")
		if kind == nil {
			return
		}
		key := ""
		switch StepKind(kind.Value) {
		case KindAnneal, KindGrow:
			key = "temperature"
		case KindRamp:
			key = "to"
		default:
			return
		}
		n := mapValue(st, key)
		if n == nil || n.Kind != yaml.ScalarNode {
			return
		}
		q, err := Parse(n.Value, Temperature)
		if err != nil || math.Abs(q.SI-old) > 0.01 {
			return
		}
		text, err := formatLike(n, c, Temperature, defaultUnits[EditTemperature].unit)
		if err != nil {
			return
		}
		n.Value, n.Tag, n.Style = text, "!!str", 0
		if StepKind(kind.Value) == KindRamp {
			return
		}
	}
}

// formatLike writes c's value in the unit of the quantity the node old
// holds when it is one of dimension dim, else in unit.
func formatLike(old *yaml.Node, c StepEdit, dim Dimension, unit string) (string, error) {
	if u := unitOf(old, dim); u != "" {
		unit = u
	}
	text, err := formatDigits(c.SI, unit, c.Digits)
	if err != nil {
		return "", fmt.Errorf("%s: %v: %w", c.Field, err, ErrEdit)
	}
	return text, nil
}

// unitOf returns the unit a scalar node's quantity is written in when it
// parses as a quantity of dimension dim, else "".
func unitOf(n *yaml.Node, dim Dimension) string {
	if n == nil || n.Kind != yaml.ScalarNode {
		return ""
	}
	if _, err := Parse(n.Value, dim); err != nil {
		return ""
	}
	_, u := splitNumber(strings.TrimSpace(n.Value))
	u = strings.TrimSpace(u)
	if _, ok := units[u]; !ok {
		u = strings.ReplaceAll(u, " ", "")
	}
	return u
}

// formatDigits is Format with the number rounded to digits significant
// digits (0: Format's shortest exact text).
func formatDigits(si float64, unit string, digits int) (string, error) {
	if digits == 0 {
		return Format(si, unit)
	}
	v, err := In(si, unit)
	if err != nil {
		return "", err
	}
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', digits, 64), 64)
	if err != nil {
		return "", err
	}
	format := byte('f')
	if a := math.Abs(r); a != 0 && (a < 1e-4 || a >= 1e21) {
		format = 'g'
	}
	return strconv.FormatFloat(r, format, -1, 64) + " " + unit, nil
}

// relocate rewrites the recipe's relative furnace and site paths, which
// start from the folder of from, so they name the same files from the
// folder of to. Paths it cannot rewrite stay as they are.
func relocate(root *yaml.Node, from, to string) {
	for _, k := range []string{"furnace", "site"} {
		n := mapValue(root, k)
		if n == nil || n.Kind != yaml.ScalarNode || n.Value == "" || filepath.IsAbs(n.Value) {
			continue
		}
		abs, err1 := filepath.Abs(filepath.Join(filepath.Dir(from), n.Value))
		outDir, err2 := filepath.Abs(filepath.Dir(to))
		if err1 != nil || err2 != nil {
			continue
		}
		if rel, err := filepath.Rel(outDir, abs); err == nil {
			n.Value = filepath.ToSlash(rel)
		}
	}
}

// mapValue returns the value node of key in the mapping m, nil when m is
// not a mapping or lacks the key.
func mapValue(m *yaml.Node, key string) *yaml.Node {
	if m == nil || m.Kind != yaml.MappingNode {
		return nil
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			return m.Content[i+1]
		}
	}
	return nil
}

// setMapValue sets key in the mapping m to v, adding the key at the end
// when it is not there.
func setMapValue(m *yaml.Node, key string, v *yaml.Node) {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			m.Content[i+1] = v
			return
		}
	}
	m.Content = append(m.Content, &yaml.Node{Kind: yaml.ScalarNode, Value: key}, v)
}

// setScalar sets key in the mapping m to a plain string scalar, keeping
// the node (and its comments) when it is already a scalar.
func setScalar(m *yaml.Node, key, text string) {
	if v := mapValue(m, key); v != nil && v.Kind == yaml.ScalarNode {
		v.Value, v.Tag, v.Style = text, "!!str", 0
		return
	}
	setMapValue(m, key, &yaml.Node{Kind: yaml.ScalarNode, Value: text})
}
