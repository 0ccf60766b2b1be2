package web

import (
	"html/template"
	"path/filepath"
	"strings"
	"time"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
)

// funcs are the template functions every page may use.
var funcs = template.FuncMap{
	"when":  func(t time.Time) string { return tabular.When(t) },
	"short": func(h string) string { return h[:min(12, len(h))] },
	"join":  strings.Join,
	// base is a stored path's last element: the page never shows where
	// on the server a file lives.
	"base": func(p string) string { return filepath.Base(filepath.FromSlash(p)) },
}
