package recipe

import (
	"bytes"
	"errors"
	"fmt"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"

	"gopkg.in/yaml.v3"

	"github.com/foilrun/foilrun/recipe/infile"
)

// ErrInvalid is wrapped by every error that comes from a file's content (as
// opposed to a file that cannot be read). Callers map it to exit status 2.
var ErrInvalid = errors.New("invalid input")

// Problem is one thing wrong with a file, at a place in it.
type Problem struct {
	Pos   Pos    // line and column; zero for the whole file
	Field string // dotted path such as steps[3].flows.CH4
	Msg   string // what is wrong, with the value quoted
	Hint  string // what to do, or ""
}

// LoadError lists every problem found in one file.
type LoadError struct {
	What     string // "recipe", "furnace" or "site"
	File     string
	Problems []Problem
}

// Error formats the first problem as `load recipe "a.yaml": line 12 col 9:
// …`, followed by the others, one per line, and the hints.
func (e *LoadError) Error() string {
	var b strings.Builder
	for i, p := range e.Problems {
		if i > 0 {
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "load %s %q: ", e.What, e.File)
		if p.Pos.Line > 0 {
			b.WriteString(p.Pos.String() + ": ")
		}
		b.WriteString(p.Msg)
		if p.Hint != "" {
			b.WriteString("\n  hint: " + p.Hint)
		}
	}
	return b.String()
}

// Unwrap makes errors.Is(err, ErrInvalid) true.
func (e *LoadError) Unwrap() error { return ErrInvalid }

// LoadRecipe reads (through infile: a regular file of at most 1 MiB) and
// validates a recipe file. It does not load the
// furnace or site the recipe names; see Resolve.
func LoadRecipe(path string) (*Recipe, error) {
	data, err := infile.ReadFile(path, infile.Recipe)
	if err != nil {
		return nil, fmt.Errorf("load recipe: %w", err)
	}
	return ParseRecipe(path, data)
}

// LoadFurnace reads (as LoadRecipe) and validates a furnace file.
func LoadFurnace(path string) (*Furnace, error) {
	data, err := infile.ReadFile(path, infile.Furnace)
	if err != nil {
		return nil, fmt.Errorf("load furnace: %w", err)
	}
	return ParseFurnace(path, data)
}

// LoadSite reads (as LoadRecipe) and validates a site file.
func LoadSite(path string) (*Site, error) {
	data, err := infile.ReadFile(path, infile.Site)
	if err != nil {
		return nil, fmt.Errorf("load site: %w", err)
	}
	return ParseSite(path, data)
}

// ParseRecipe decodes recipe YAML; name is used in messages.
func ParseRecipe(name string, data []byte) (*Recipe, error) {
	r := &Recipe{}
	if err := parse("recipe", name, data, r, func() []Problem { return validateRecipe(r) }); err != nil {
		return nil, err
	}
	r.File = name
	return r, nil
}

// ParseFurnace decodes furnace YAML; name is used in messages.
func ParseFurnace(name string, data []byte) (*Furnace, error) {
	f := &Furnace{}
	if err := parse("furnace", name, data, f, func() []Problem { return validateFurnace(f) }); err != nil {
		return nil, err
	}
	f.File, f.Content = name, data
	f.applyDefaults()
	return f, nil
}

// ParseSite decodes site YAML; name is used in messages.
func ParseSite(name string, data []byte) (*Site, error) {
	s := &Site{}
	if err := parse("site", name, data, s, func() []Problem { return validateSite(s) }); err != nil {
		return nil, err
	}
	s.File, s.Content = name, data
	return s, nil
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

func parse(what, name string, data []byte, into any, validate func() []Problem) error {
	fail := func(ps ...Problem) error {
		sortProblems(ps)
		return &LoadError{What: what, File: name, Problems: ps}
	}
	if len(bytes.TrimSpace(data)) == 0 {
		return fail(Problem{Msg: "the file is empty", Hint: "start from a template: foilrun new " + what})
	}
	if bytes.IndexByte(data, 0) >= 0 || !utf8.Valid(data) {
		return fail(Problem{Msg: "the file is not UTF-8 text (binary data?)", Hint: "give a YAML " + what + " file; foilrun new " + what + " writes one"})
	}
	if p, ok := findTab(data); ok {
		return fail(Problem{Pos: p, Msg: "a tab is used for indentation; YAML indents with spaces only", Hint: "replace the tabs with spaces"})
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		msg := err.Error()
		if m := yamlLine.FindStringSubmatch(msg); m != nil {
			line, _ := strconv.Atoi(m[1])
			return fail(Problem{Pos: Pos{line, 1}, Msg: "not valid YAML: " + m[2]})
		}
		return fail(Problem{Msg: "not valid YAML: " + strings.TrimPrefix(msg, "yaml: ")})
	}
	if len(doc.Content) == 0 {
		return fail(Problem{Msg: "the file is empty", Hint: "start from a template: foilrun new " + what})
	}
	if len(doc.Content) > 1 {
		return fail(Problem{Msg: "the file holds more than one YAML document", Hint: "keep one " + what + " per file"})
	}
	d := &decoder{}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return fail(Problem{Pos: Pos{root.Line, root.Column}, Msg: "the " + what + " must be a mapping of field: value lines", Hint: "start from a template: foilrun new " + what})
	}
	d.decode(root, reflectValue(into), "", "")
	if len(d.problems) > 0 {
		return fail(d.problems...)
	}
	if ps := validate(); len(ps) > 0 {
		return fail(ps...)
	}
	return nil
}

func findTab(data []byte) (Pos, bool) {
	for i, line := range bytes.Split(data, []byte("\n")) {
		for j, c := range line {
			if c == '\t' {
				return Pos{i + 1, j + 1}, true
			}
			if c != ' ' {
				break
			}
		}
	}
	return Pos{}, false
}

// Resolve loads the furnace and site that a recipe names (paths relative to
// the recipe file). A non-empty furnacePath or sitePath wins over the
// recipe's own. The site is optional: it is nil when neither names one.
func Resolve(r *Recipe, furnacePath, sitePath string) (*Furnace, *Site, error) {
	rel := func(p string) string {
		if p == "" || filepath.IsAbs(p) || r.File == "" {
			return p
		}
		return filepath.Join(filepath.Dir(r.File), p)
	}
	if furnacePath == "" {
		furnacePath = rel(r.Furnace)
	}
	if sitePath == "" {
		sitePath = rel(r.Site)
	}
	if furnacePath == "" {
		return nil, nil, fmt.Errorf("recipe %q names no furnace: %w\n  hint: add \"furnace: path/to/furnace.yaml\" to the recipe or pass --furnace", r.File, ErrInvalid)
	}
	f, err := LoadFurnace(furnacePath)
	if err != nil {
		return nil, nil, err
	}
	var s *Site
	if sitePath != "" {
		if s, err = LoadSite(sitePath); err != nil {
			return nil, nil, err
		}
	}
	return f, s, nil
}
