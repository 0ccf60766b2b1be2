package web

import (
	"html/template"
	"strings"
	"time"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
)

// funcs are the template functions every page may use.
var funcs = template.FuncMap{
	"when":  func(t time.Time) string { return tabular.When(t) },
	"short": func(h string) string { return h[:min(12, len(h))] },
	"join":  strings.Join,
}
