package templates

import (
	"bytes"
	"embed"
	"fmt"
	"text/template"
)

//go:embed checklist*.tmpl
var checklistFiles embed.FS

// Checklist formats: "text" (plain, for a printer) and "markdown".
const (
	ChecklistText     = "text"
	ChecklistMarkdown = "markdown"
)

// Checklist returns the text/template source of the pre-run checklist in a
// format, "text" or "markdown". The template is executed with a
// safety.Sheet.
func Checklist(format string) (string, error) {
	name := ""
	switch format {
	case ChecklistText:
		name = "checklist.txt.tmpl"
	case ChecklistMarkdown:
		name = "checklist.md.tmpl"
	default:
		return "", fmt.Errorf("checklist format %q: want text or markdown", format)
	}
	b, err := checklistFiles.ReadFile(name)
	if err != nil {
		return "", fmt.Errorf("checklist template %s: %w", name, err)
	}
	return string(b), nil
}

// RenderChecklist executes the checklist template of a format with sheet,
// a safety.Sheet (`foilrun checklist` and serve's checklist page).
func RenderChecklist(format string, sheet any) ([]byte, error) {
	src, err := Checklist(format)
	if err != nil {
		return nil, err
	}
	tmpl, err := template.New("checklist").Option("missingkey=error").Parse(src)
	if err != nil {
		return nil, fmt.Errorf("checklist template: %w", err)
	}
	var b bytes.Buffer
	if err := tmpl.Execute(&b, sheet); err != nil {
		return nil, fmt.Errorf("checklist template: %w", err)
	}
	return b.Bytes(), nil
}
