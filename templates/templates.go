// Package templates holds the embedded starting files that `foilrun new`
// writes: recipe templates for common ways of growing graphene on copper,
// a furnace and a site template, and the text templates of printed
// outputs such as the pre-run checklist. Every value in them is
// illustrative, not a calibration or an approval.
package templates

import (
	"embed"
	"io/fs"
	"sort"
	"strings"
)

//go:embed *.yaml
var files embed.FS

// FS returns the embedded template files.
func FS() fs.FS { return files }

// Template names one embedded starting file.
type Template struct {
	Name string // e.g. "lowpressure"
	Kind string // "recipe", "furnace" or "site"
	File string // file name in FS
}

// DefaultRecipe is the template `foilrun new recipe` writes without --from.
const DefaultRecipe = "lowpressure"

// List returns every template, by kind then name.
func List() []Template {
	entries, _ := fs.ReadDir(files, ".")
	var ts []Template
	for _, e := range entries {
		n := strings.TrimSuffix(e.Name(), ".yaml")
		if n == e.Name() {
			continue
		}
		kind, name, ok := strings.Cut(n, "-")
		if !ok {
			kind, name = n, n
		}
		ts = append(ts, Template{Name: name, Kind: kind, File: e.Name()})
	}
	sort.Slice(ts, func(i, j int) bool {
		if ts[i].Kind != ts[j].Kind {
			return ts[i].Kind < ts[j].Kind
		}
		return ts[i].Name < ts[j].Name
	})
	return ts
}

// Find returns the template of a kind with a name ("" gives the kind's
// default).
func Find(kind, name string) (Template, bool) {
	if name == "" {
		name = kind
		if kind == "recipe" {
			name = DefaultRecipe
		}
	}
	for _, t := range List() {
		if t.Kind == kind && t.Name == name {
			return t, true
		}
	}
	return Template{}, false
}
