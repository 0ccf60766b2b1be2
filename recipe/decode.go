package recipe

import (
	"fmt"
	"reflect"
	"sort"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe/gas"
)

// decoder turns a yaml.Node tree into the schema structs, collecting every
// problem with its line and column instead of stopping at the first. It
// knows the schema's conventions: yaml tags name fields, req:"true" marks
// required ones, dim:"…" gives a Quantity its dimension, and a field named
// Pos receives the node's position.
type decoder struct {
	problems []Problem
}

func (d *decoder) add(n *yaml.Node, field, msg, hint string) {
	p := Problem{Field: field, Msg: msg, Hint: hint}
	if n != nil {
		p.Pos = Pos{n.Line, n.Column}
	}
	d.problems = append(d.problems, p)
}

var (
	quantityType = reflect.TypeOf(Quantity{})
	posType      = reflect.TypeOf(Pos{})
	pressureType = reflect.TypeOf(PressureSetting{})
	flowsType    = reflect.TypeOf(Flows{})
	kindType     = reflect.TypeOf(StepKind(""))
)

var logColumnsType = reflect.TypeOf(LogColumns{})

// decode fills v (addressable) from n. path is the dotted field path for
// messages; dim is the dim tag of the field, if any. The schema's own types
// have their own rules; other values go by their reflect kind.
func (d *decoder) decode(n *yaml.Node, v reflect.Value, path, dim string) {
	if n.Kind == yaml.AliasNode {
		n = n.Alias
	}
	t := v.Type()
	switch {
	case t == quantityType:
		d.quantity(n, v, path, dim)
		return
	case t == pressureType:
		d.pressure(n, v, path)
		return
	case t == flowsType:
		d.flows(n, v, path)
		return
	case t == kindType:
		d.stepKind(n, v, path)
		return
	}
	switch t.Kind() {
	case reflect.Ptr:
		nv := reflect.New(t.Elem())
		d.decode(n, nv.Elem(), path, dim)
		v.Set(nv)
	case reflect.Struct:
		d.strukt(n, v, path)
	case reflect.Slice:
		if n.Kind == yaml.MappingNode && t == logColumnsType { // one thermocouple, written without a list
			n = &yaml.Node{Kind: yaml.SequenceNode, Line: n.Line, Column: n.Column, Content: []*yaml.Node{n}}
		}
		d.list(n, v, path, dim)
	case reflect.Map:
		d.mapping(n, v, path, dim)
	case reflect.String, reflect.Int, reflect.Float64, reflect.Bool:
		d.plain(n, v, path)
	default:
		panic("recipe: decoder has no rule for " + t.String())
	}
}

// stepKind fills a StepKind from one of StepKinds, in any case.
func (d *decoder) stepKind(n *yaml.Node, v reflect.Value, path string) {
	if !d.scalar(n, path, "a step kind such as \"grow\"") {
		return
	}
	k := StepKind(strings.ToLower(n.Value))
	for _, known := range StepKinds {
		if k == known {
			v.Set(reflect.ValueOf(k))
			return
		}
	}
	d.add(n, path, fmt.Sprintf("unknown step kind %q", n.Value), "use one of: "+kindList()+suggest(n.Value, kindNames()))
}

// list fills a slice from a YAML sequence; elements are numbered from 1
// in their paths ("steps[3]").
func (d *decoder) list(n *yaml.Node, v reflect.Value, path, dim string) {
	if n.Kind != yaml.SequenceNode {
		d.add(n, path, fmt.Sprintf("%s must be a list (lines starting with \"- \")", last(path)), "")
		return
	}
	s := reflect.MakeSlice(v.Type(), len(n.Content), len(n.Content))
	for i, c := range n.Content {
		d.decode(c, s.Index(i), fmt.Sprintf("%s[%d]", path, i+1), dim)
	}
	v.Set(s)
}

// mapping fills a map keyed by string from a YAML mapping.
func (d *decoder) mapping(n *yaml.Node, v reflect.Value, path, dim string) {
	if n.Kind != yaml.MappingNode {
		d.add(n, path, fmt.Sprintf("%s must be a mapping of name: value lines", last(path)), "")
		return
	}
	t := v.Type()
	m := reflect.MakeMap(t)
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, val := n.Content[i], n.Content[i+1]
		ev := reflect.New(t.Elem()).Elem()
		d.decode(val, ev, path+"."+k.Value, dim)
		m.SetMapIndex(reflect.ValueOf(k.Value), ev)
	}
	v.Set(m)
}

// plain fills a string, int, float64 or bool from a scalar: text as it
// stands, a whole number, a number, or true/yes and false/no in any case.
func (d *decoder) plain(n *yaml.Node, v reflect.Value, path string) {
	switch v.Kind() {
	case reflect.String:
		if d.scalar(n, path, "text") {
			v.SetString(n.Value)
		}
	case reflect.Int:
		if !d.scalar(n, path, "a whole number") {
			return
		}
		i, err := strconv.Atoi(n.Value)
		if err != nil {
			d.add(n, path, fmt.Sprintf("%s %q is not a whole number", last(path), n.Value), "")
			return
		}
		v.SetInt(int64(i))
	case reflect.Float64:
		if !d.scalar(n, path, "a number") {
			return
		}
		f, err := strconv.ParseFloat(n.Value, 64)
		if err != nil {
			d.add(n, path, fmt.Sprintf("%s %q is not a number", last(path), n.Value), "")
			return
		}
		v.SetFloat(f)
	case reflect.Bool:
		if !d.scalar(n, path, "true or false") {
			return
		}
		switch strings.ToLower(n.Value) {
		case "true", "yes":
			v.SetBool(true)
		case "false", "no":
		default:
			d.add(n, path, fmt.Sprintf("%s %q is not true or false", last(path), n.Value), "")
		}
	}
}

func (d *decoder) scalar(n *yaml.Node, path, want string) bool {
	if n.Kind != yaml.ScalarNode {
		d.add(n, path, fmt.Sprintf("%s must be a single value (%s), not a list or mapping", last(path), want), "")
		return false
	}
	return true
}

func (d *decoder) strukt(n *yaml.Node, v reflect.Value, path string) {
	t := v.Type()
	if n.Kind != yaml.MappingNode {
		d.add(n, path, fmt.Sprintf("%s must be a mapping of field: value lines", nameOr(path, "the file")), "")
		return
	}
	fields := map[string]int{}
	var names []string
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		if f.Type == posType && f.Name == "Pos" {
			v.Field(i).Set(reflect.ValueOf(Pos{n.Line, n.Column}))
			continue
		}
		tag := f.Tag.Get("yaml")
		if tag == "" || tag == "-" {
			continue
		}
		fields[tag] = i
		names = append(names, tag)
	}
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, val := n.Content[i], n.Content[i+1]
		idx, ok := fields[k.Value]
		if !ok {
			d.add(k, join(path, k.Value), fmt.Sprintf("unknown field %q in %s", k.Value, nameOr(path, "the file")),
				"known fields: "+strings.Join(names, ", ")+suggest(k.Value, names))
			continue
		}
		if seen[k.Value] {
			d.add(k, join(path, k.Value), fmt.Sprintf("field %q is given twice", k.Value), "")
			continue
		}
		seen[k.Value] = true
		if val.Kind == yaml.ScalarNode && val.Tag == "!!null" {
			continue // "field:" with nothing after it counts as absent
		}
		f := t.Field(idx)
		d.decode(val, v.Field(idx), join(path, k.Value), f.Tag.Get("dim"))
	}
	for _, name := range names {
		f := t.Field(fields[name])
		if f.Tag.Get("req") == "true" && !seen[name] {
			d.add(n, join(path, name), fmt.Sprintf("missing required field %q in %s", name, nameOr(path, "the file")),
				"add a line \""+name+": …\"")
		}
	}
}

func (d *decoder) quantity(n *yaml.Node, v reflect.Value, path, dim string) {
	if dim == "" {
		panic("recipe: Quantity field " + path + " has no dim tag")
	}
	want, ok := DimensionByName(dim)
	if !ok {
		panic("recipe: unknown dim tag " + dim)
	}
	if !d.scalar(n, path, "a "+want.String()+" such as \""+want.Example()+"\"") {
		return
	}
	q, err := Parse(n.Value, want)
	if err != nil {
		d.add(n, path, last(path)+" "+err.Error(), "")
		return
	}
	q.Pos = Pos{n.Line, n.Column}
	v.Set(reflect.ValueOf(q))
}

func (d *decoder) pressure(n *yaml.Node, v reflect.Value, path string) {
	if !d.scalar(n, path, "a pressure such as \"500 mTorr\", or \"pump\"") {
		return
	}
	ps := PressureSetting{Pos: Pos{n.Line, n.Column}}
	if strings.EqualFold(strings.TrimSpace(n.Value), "pump") {
		ps.Pump = true
		v.Set(reflect.ValueOf(ps))
		return
	}
	q, err := Parse(n.Value, Pressure)
	if err != nil {
		d.add(n, path, "pressure "+err.Error(), "or write \"pump\" for a step open to the pump")
		return
	}
	q.Pos = ps.Pos
	ps.Setpoint = q
	v.Set(reflect.ValueOf(ps))
}

func (d *decoder) flows(n *yaml.Node, v reflect.Value, path string) {
	if n.Kind != yaml.MappingNode {
		d.add(n, path, "flows must be a mapping of gas: flow lines such as \"H2: 20 sccm\"", "")
		return
	}
	var fl Flows
	seen := map[string]bool{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, val := n.Content[i], n.Content[i+1]
		if seen[k.Value] {
			d.add(k, path+"."+k.Value, fmt.Sprintf("gas %q is given twice", k.Value), "")
			continue
		}
		seen[k.Value] = true
		if !d.scalar(val, path+"."+k.Value, "a flow such as \"20 sccm\"") {
			continue
		}
		q, err := Parse(val.Value, Flow)
		if err != nil {
			d.add(val, path+"."+k.Value, "flow "+err.Error(), "")
			continue
		}
		q.Pos = Pos{val.Line, val.Column}
		fl = append(fl, GasFlow{Gas: k.Value, Flow: q, Pos: Pos{k.Line, k.Column}})
	}
	v.Set(reflect.ValueOf(fl))
}

func kindNames() []string {
	s := make([]string, len(StepKinds))
	for i, k := range StepKinds {
		s[i] = string(k)
	}
	return s
}

func kindList() string { return strings.Join(kindNames(), ", ") }

func join(path, name string) string {
	if path == "" {
		return name
	}
	return path + "." + name
}

func last(path string) string {
	if i := strings.LastIndexByte(path, '.'); i >= 0 {
		return path[i+1:]
	}
	if path == "" {
		return "value"
	}
	return path
}

func nameOr(path, def string) string {
	if path == "" {
		return def
	}
	return path
}

// suggest returns `; did you mean "x"?` for the closest name within two
// edits, or "".
func suggest(got string, names []string) string {
	best, bestD := "", 3
	for _, n := range names {
		if d := gas.EditDistance(strings.ToLower(got), strings.ToLower(n)); d < bestD {
			best, bestD = n, d
		}
	}
	if best == "" {
		return ""
	}
	return fmt.Sprintf("; did you mean %q?", best)
}

func reflectValue(p any) reflect.Value { return reflect.ValueOf(p).Elem() }

// sortProblems orders problems by position.
func sortProblems(ps []Problem) {
	sort.SliceStable(ps, func(i, j int) bool {
		if ps[i].Pos.Line != ps[j].Pos.Line {
			return ps[i].Pos.Line < ps[j].Pos.Line
		}
		return ps[i].Pos.Col < ps[j].Pos.Col
	})
}
