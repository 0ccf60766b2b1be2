package kinetics

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
)

// The parameter file is YAML with one line per parameter; quantities carry
// units, parsed here into SI:
//
//	nucleation_energy: -1.5 eV        # En (eV, meV, kJ/mol, kcal/mol, J)
//	nucleation_prefactor: 50 /m2/s    # I0 (/m2/s, /cm2/s, /mm2/s, /um2/s, …/min)
//	methane_order: 2.5                # a
//	hydrogen_order: 2                 # b
//	growth_energy: 4.5 eV             # Eg
//	growth_prefactor: 1.1e11 m/s      # G0 (m/s, mm/s, um/s, nm/s, um/min, mm/min)
//	reference_pressure: 100 Pa        # p0 (any pressure unit of recipe files)
//	shape: round                      # round or hexagonal (default round)
//	mode: continuous                  # continuous or site-saturated (default continuous)
//	site_density: 1e4 /mm2            # N0, required in site-saturated mode (/m2, /cm2, /mm2, /um2, mm-2)
//	source: fit of 12 runs            # optional metadata
//	runs: 12
//	date: 2026-03-02
//	coverage_only: true               # optional: a fit from coverage alone; predicts
//	                                  # coverage and its timing, not density or size
//	bounds:                           # optional, as a fit writes it: the range each
//	  growth_energy: [-5 eV, 8 eV]    # free parameter was kept within (FitParameters keys,
//	  methane_order: [0, 4]           # values as in FitSettings.Bounds, lo < hi)
//	covariance:                       # optional, as a fit writes it
//	  parameters: [nucleation_energy, growth_energy]
//	  matrix: [[0.01, 0.002], [0.002, 0.02]]
//
// Units are those of recipe.Parse for the dimension (energy, rate per
// area, speed, pressure, density per area). The seven model numbers are
// required; unknown fields are errors.

// paramDims are the dimensions of the file's quantities; each is parsed
// by recipe.Parse, so every unit recipe files accept for the dimension is
// accepted here.
var paramDims = map[string]recipe.Dimension{
	"nucleation_energy":    recipe.Energy,
	"nucleation_prefactor": recipe.AreaRate,
	"growth_energy":        recipe.Energy,
	"growth_prefactor":     recipe.Speed,
	"reference_pressure":   recipe.Pressure,
	"site_density":         recipe.AreaDensity,
}

// parseParamValue reads a quantity of the dimension and returns it in the
// unit Params holds it in: eV for energies (Params' unit, the trade's),
// SI otherwise. A value written in eV is read as written, so that
// FormatParams round-trips bit for bit (x·e/e is not always x).
func parseParamValue(text string, dim recipe.Dimension) (float64, error) {
	q, err := recipe.Parse(text, dim)
	if err != nil {
		return 0, err
	}
	if dim != recipe.Energy {
		return q.SI, nil
	}
	if num, unit := recipe.SplitNumber(strings.TrimSpace(text)); strings.TrimSpace(unit) == "eV" {
		return strconv.ParseFloat(num, 64)
	}
	return recipe.In(q.SI, "eV")
}

// LoadParams reads (through infile: a regular file of at most 1 MiB) and
// validates a parameter file.
func LoadParams(path string) (Params, error) {
	data, err := infile.ReadFile(path, infile.Params)
	if err != nil {
		return Params{}, fmt.Errorf("load params: %w", err)
	}
	return ParseParams(path, data)
}

// paramFields lists the file's keys in the order FormatParams writes them.
var paramFields = []string{
	"nucleation_energy", "nucleation_prefactor", "methane_order", "hydrogen_order",
	"growth_energy", "growth_prefactor", "reference_pressure", "shape", "mode", "site_density",
	"source", "runs", "date", "coverage_only", "bounds", "covariance",
}

// freeParams are the numeric keys a covariance may name.
var freeParams = paramFields[:7]

// ParseParams decodes a parameter file; name is used in messages. Every
// problem is reported, each with its line and column, in a
// *recipe.LoadError (which wraps recipe.ErrInvalid).
func ParseParams(name string, data []byte) (Params, error) {
	d := &paramDecoder{seen: map[string]*yaml.Node{}}
	fail := func() (Params, error) {
		return Params{}, &recipe.LoadError{What: "params", File: name, Problems: d.ps}
	}
	if len(bytes.TrimSpace(data)) == 0 {
		d.at(nil, "the file is empty", "list the seven model parameters, one per line, such as \"growth_energy: 4.5 eV\"")
		return fail()
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		d.at(nil, "not valid YAML: "+strings.TrimPrefix(err.Error(), "yaml: "), "")
		return fail()
	}
	if len(doc.Content) != 1 || doc.Content[0].Kind != yaml.MappingNode {
		d.at(&doc, "the params file must be a single mapping of field: value lines", "")
		return fail()
	}
	root := doc.Content[0]
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], root.Content[i+1]
		if d.seen[k.Value] != nil {
			d.at(k, fmt.Sprintf("field %q is given twice", k.Value), "")
			continue
		}
		d.seen[k.Value] = k
		d.field(k, v)
	}
	d.complete(root)
	if len(d.ps) > 0 {
		return fail()
	}
	return d.p, nil
}

// paramDecoder collects a parameter file's values and its problems.
type paramDecoder struct {
	p    Params
	ps   []recipe.Problem
	seen map[string]*yaml.Node // key nodes by key
}

// at records a problem at a node (nil: the whole file).
func (d *paramDecoder) at(n *yaml.Node, msg, hint string) {
	p := recipe.Problem{Msg: msg, Hint: hint}
	if n != nil {
		p.Pos = recipe.Pos{Line: n.Line, Col: n.Column}
	}
	d.ps = append(d.ps, p)
}

// scalar reports whether v is a single value, recording a problem if not.
func (d *paramDecoder) scalar(key string, v *yaml.Node) bool {
	if v.Kind != yaml.ScalarNode {
		d.at(v, key+" must be a single value, not a list or mapping", "")
		return false
	}
	return true
}

// quantity reads a value with a unit of the key's dimension.
func (d *paramDecoder) quantity(key string, v *yaml.Node, dst *float64) {
	if !d.scalar(key, v) {
		return
	}
	x, err := parseParamValue(v.Value, paramDims[key])
	if err != nil {
		d.at(v, key+" "+err.Error(), "")
		return
	}
	*dst = x
}

// number reads a plain finite number.
func (d *paramDecoder) number(key string, v *yaml.Node, dst *float64) {
	if !d.scalar(key, v) {
		return
	}
	x, err := strconv.ParseFloat(strings.TrimSpace(v.Value), 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		d.at(v, fmt.Sprintf("%s %q is not a finite number", key, v.Value), "write a plain number such as 2")
		return
	}
	*dst = x
}

// choice reads one of two words, recording a problem for any other.
func (d *paramDecoder) choice(key string, v *yaml.Node, a, b string) (string, bool) {
	if !d.scalar(key, v) {
		return "", false
	}
	if v.Value != a && v.Value != b {
		d.at(v, fmt.Sprintf("%s %q is not %s or %s", key, v.Value, a, b), "")
		return "", false
	}
	return v.Value, true
}

// field decodes one key: value line.
func (d *paramDecoder) field(k, v *yaml.Node) {
	p := &d.p
	switch key := k.Value; key {
	case "nucleation_energy":
		d.quantity(key, v, &p.En)
	case "nucleation_prefactor":
		d.quantity(key, v, &p.I0)
	case "methane_order":
		d.number(key, v, &p.A)
	case "hydrogen_order":
		d.number(key, v, &p.B)
	case "growth_energy":
		d.quantity(key, v, &p.Eg)
	case "growth_prefactor":
		d.quantity(key, v, &p.G0)
	case "reference_pressure":
		d.quantity(key, v, &p.P0)
	case "shape":
		if w, ok := d.choice(key, v, string(Round), string(Hexagonal)); ok {
			p.Shape = Shape(w)
		}
	case "mode":
		if w, ok := d.choice(key, v, string(Continuous), string(SiteSaturated)); ok {
			p.Mode = Mode(w)
		}
	case "site_density":
		d.quantity(key, v, &p.SiteDensity)
	case "source":
		if d.scalar(key, v) {
			p.Source = v.Value
		}
	case "date":
		if d.scalar(key, v) {
			p.Date = v.Value
		}
	case "runs":
		if d.scalar(key, v) {
			n, err := strconv.Atoi(v.Value)
			if err != nil || n < 0 {
				d.at(v, fmt.Sprintf("runs %q is not a whole number of runs", v.Value), "")
			} else {
				p.Runs = n
			}
		}
	case "coverage_only":
		if w, ok := d.choice(key, v, "true", "false"); ok {
			p.CoverageOnly = w == "true"
		}
	case "bounds":
		b, msgs := parseBounds(v)
		for _, m := range msgs {
			d.at(m.n, m.msg, "")
		}
		p.Bounds = b
	case "covariance":
		c, msgs := parseCovariance(v)
		for _, m := range msgs {
			d.at(m.n, m.msg, "")
		}
		p.Covariance = c
	default:
		d.at(k, fmt.Sprintf("unknown field %q in the params file", key), "known fields: "+strings.Join(paramFields, ", "))
	}
}

// complete checks what no single line shows: missing required fields,
// site_density for site-saturated mode, prefactors above zero.
func (d *paramDecoder) complete(root *yaml.Node) {
	for _, key := range freeParams {
		if d.seen[key] == nil {
			d.at(root, fmt.Sprintf("missing required field %q in the params file", key), "add a line \""+key+": …\"")
		}
	}
	if d.p.Mode == SiteSaturated && d.seen["site_density"] == nil {
		d.at(root, "mode site-saturated needs site_density", "add a line such as \"site_density: 1e4 /mm2\"")
	}
	if len(d.ps) == 0 {
		positive := []struct {
			key string
			v   float64
		}{{"nucleation_prefactor", d.p.I0}, {"growth_prefactor", d.p.G0}, {"reference_pressure", d.p.P0}, {"site_density", d.p.SiteDensity}}
		for _, c := range positive {
			if n := d.seen[c.key]; n != nil && !(c.v > 0) {
				d.at(valueOf(root, n), fmt.Sprintf("%s %q must be greater than zero", c.key, valueOf(root, n).Value), "")
			}
		}
	}
}

// valueOf returns the value node of a key node in a mapping.
func valueOf(m, key *yaml.Node) *yaml.Node {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i] == key {
			return m.Content[i+1]
		}
	}
	return key
}

type nodeMsg struct {
	n   *yaml.Node
	msg string
}

// parseBounds reads the bounds block: a mapping of fit parameter keys to
// [lo, hi], each a plain number in the file's unit or a quantity of the
// parameter's dimension, lo < hi and, for prefactors, lo > 0.
func parseBounds(v *yaml.Node) (map[string][2]float64, []nodeMsg) {
	var msgs []nodeMsg
	bad := func(n *yaml.Node, format string, args ...any) {
		msgs = append(msgs, nodeMsg{n, fmt.Sprintf(format, args...)})
	}
	if v.Kind != yaml.MappingNode {
		bad(v, "bounds must be a mapping of parameter: [lo, hi]")
		return nil, msgs
	}
	out := map[string][2]float64{}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k, r := v.Content[i], v.Content[i+1]
		j := fitIndex(k.Value)
		if j < 0 || FitParameters[j].Key != k.Value {
			bad(k, "bounds names unknown parameter %q, want one of %s", k.Value, knownFitNames())
			continue
		}
		if _, dup := out[k.Value]; dup {
			bad(k, "bounds names %q twice", k.Value)
			continue
		}
		if r.Kind != yaml.SequenceNode || len(r.Content) != 2 {
			bad(r, "bounds of %s must be a list [lo, hi] of two values", k.Value)
			continue
		}
		fp := FitParameters[j]
		var b [2]float64
		ok := true
		for e, n := range r.Content {
			x, err := fp.parse(n.Value)
			if err != nil {
				bad(n, "bounds of %s: %v", k.Value, err)
				ok = false
			}
			b[e] = x
		}
		switch {
		case !ok:
		case fp.Log && !(b[0] > 0):
			bad(r.Content[0], "bounds of %s: the lower bound %q must be greater than zero", k.Value, r.Content[0].Value)
		case !(b[0] < b[1]):
			bad(r, "bounds of %s: lower %q is not below upper %q", k.Value, r.Content[0].Value, r.Content[1].Value)
		default:
			out[k.Value] = b
		}
	}
	if len(msgs) > 0 || len(out) == 0 {
		return nil, msgs
	}
	return out, nil
}

func parseCovariance(v *yaml.Node) (*Covariance, []nodeMsg) {
	var msgs []nodeMsg
	bad := func(n *yaml.Node, format string, args ...any) {
		msgs = append(msgs, nodeMsg{n, fmt.Sprintf(format, args...)})
	}
	if v.Kind != yaml.MappingNode {
		bad(v, "covariance must be a mapping with parameters and matrix")
		return nil, msgs
	}
	c := &Covariance{}
	var names, matrix *yaml.Node
	for i := 0; i+1 < len(v.Content); i += 2 {
		switch k := v.Content[i]; k.Value {
		case "parameters":
			names = v.Content[i+1]
		case "matrix":
			matrix = v.Content[i+1]
		default:
			bad(k, "unknown field %q in covariance, want parameters and matrix", k.Value)
		}
	}
	if names == nil || matrix == nil {
		bad(v, "covariance needs both parameters and matrix")
		return nil, msgs
	}
	if names.Kind != yaml.SequenceNode {
		bad(names, "covariance.parameters must be a list of parameter names")
		return nil, msgs
	}
	seen := map[string]bool{}
	for _, n := range names.Content {
		known := false
		for _, f := range freeParams {
			known = known || f == n.Value
		}
		if !known {
			bad(n, "covariance names unknown parameter %q, want one of %s", n.Value, strings.Join(freeParams, ", "))
		}
		if seen[n.Value] {
			bad(n, "covariance names %q twice", n.Value)
		}
		seen[n.Value] = true
		c.Names = append(c.Names, n.Value)
	}
	if matrix.Kind != yaml.SequenceNode || len(matrix.Content) != len(c.Names) {
		bad(matrix, "covariance.matrix must be a list of %d rows, one per parameter", len(c.Names))
		return nil, msgs
	}
	for i, row := range matrix.Content {
		if row.Kind != yaml.SequenceNode || len(row.Content) != len(c.Names) {
			bad(row, "covariance.matrix row %d must hold %d numbers", i+1, len(c.Names))
			continue
		}
		r := make([]float64, len(row.Content))
		for j, e := range row.Content {
			x, err := strconv.ParseFloat(e.Value, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				bad(e, "covariance.matrix %q is not a finite number", e.Value)
			}
			r[j] = x
		}
		c.Matrix = append(c.Matrix, r)
	}
	if len(msgs) > 0 {
		return nil, msgs
	}
	for i := range c.Matrix {
		if c.Matrix[i][i] < 0 {
			bad(matrix.Content[i].Content[i], "covariance.matrix variance of %s is negative", c.Names[i])
		}
		for j := range i {
			a, b := c.Matrix[i][j], c.Matrix[j][i]
			if math.Abs(a-b) > 1e-9*math.Max(math.Abs(a), math.Abs(b)) {
				bad(matrix.Content[i].Content[j], "covariance.matrix is not symmetric: row %d col %d is %g, row %d col %d is %g", i+1, j+1, a, j+1, i+1, b)
			}
		}
	}
	if len(msgs) > 0 {
		return nil, msgs
	}
	return c, nil
}

// FormatParams writes p as a parameter file that ParseParams reads back to
// the same values (energies in eV, the rest in SI units, shortest exact
// form, written by recipe.Format).
func FormatParams(p Params) []byte {
	var b bytes.Buffer
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	// si writes an SI value in a unit of scale 1, so Parse reads it back
	// exactly; a non-finite value (never in validated parameters) is
	// written as Go formats it and fails to parse.
	si := func(v float64, unit string) string {
		if text, err := recipe.Format(v, unit); err == nil {
			return text
		}
		return g(v) + " " + unit
	}
	b.WriteString("# foilrun kinetics parameters (SI units; see foilrun predict --help)\n")
	fmt.Fprintf(&b, "nucleation_energy: %s eV\n", g(p.En))
	fmt.Fprintf(&b, "nucleation_prefactor: %s\n", si(p.I0, "/m2/s"))
	fmt.Fprintf(&b, "methane_order: %s\n", g(p.A))
	fmt.Fprintf(&b, "hydrogen_order: %s\n", g(p.B))
	fmt.Fprintf(&b, "growth_energy: %s eV\n", g(p.Eg))
	fmt.Fprintf(&b, "growth_prefactor: %s\n", si(p.G0, "m/s"))
	fmt.Fprintf(&b, "reference_pressure: %s\n", si(p.P0, "Pa"))
	if p.Shape != "" {
		fmt.Fprintf(&b, "shape: %s\n", p.Shape)
	}
	if p.Mode != "" {
		fmt.Fprintf(&b, "mode: %s\n", p.Mode)
	}
	if p.SiteDensity != 0 {
		fmt.Fprintf(&b, "site_density: %s\n", si(p.SiteDensity, "/m2"))
	}
	if p.Source != "" {
		fmt.Fprintf(&b, "source: %s\n", strconv.Quote(p.Source))
	}
	if p.Runs != 0 {
		fmt.Fprintf(&b, "runs: %d\n", p.Runs)
	}
	if p.Date != "" {
		fmt.Fprintf(&b, "date: %s\n", strconv.Quote(p.Date))
	}
	if p.CoverageOnly {
		b.WriteString("# calibrated on coverage only: predicts coverage and time to coverage,\n")
		b.WriteString("# not nuclei density or domain size\n")
		b.WriteString("coverage_only: true\n")
	}
	writeBounds(&b, p.Bounds, si)
	if c := p.Covariance; c != nil {
		b.WriteString("covariance:\n  parameters: [" + strings.Join(c.Names, ", ") + "]\n  matrix:\n")
		for _, row := range c.Matrix {
			cells := make([]string, len(row))
			for j, x := range row {
				cells[j] = g(x)
			}
			b.WriteString("    - [" + strings.Join(cells, ", ") + "]\n")
		}
	}
	return b.Bytes()
}

// writeBounds writes the bounds block in FitParameters order, energies in
// eV, orders as plain numbers, prefactors through si.
func writeBounds(b *bytes.Buffer, bounds map[string][2]float64, si func(float64, string) string) {
	if len(bounds) == 0 {
		return
	}
	b.WriteString("bounds:  # the range the fit kept each free parameter within\n")
	for _, fp := range FitParameters {
		r, ok := bounds[fp.Key]
		if !ok {
			continue
		}
		var cells [2]string
		for i, x := range r {
			switch {
			case fp.Unit == "":
				cells[i] = strconv.FormatFloat(x, 'g', -1, 64)
			case fp.Unit == "eV":
				cells[i] = strconv.FormatFloat(x, 'g', -1, 64) + " eV"
			default:
				cells[i] = si(x, fp.Unit)
			}
		}
		fmt.Fprintf(b, "  %s: [%s, %s]\n", fp.Key, cells[0], cells[1])
	}
}
