package templates

import (
	"strings"
	"testing"
	"text/template"
)

// Both checklist templates parse and carry the disclaimer, the three
// sections and the sign-off lines; an unknown format is an error.
func TestChecklistTemplates(t *testing.T) {
	for _, f := range []string{ChecklistText, ChecklistMarkdown} {
		src, err := Checklist(f)
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		if _, err := template.New(f).Parse(src); err != nil {
			t.Errorf("%s: %v", f, err)
		}
		low := strings.ToLower(src)
		for _, want := range []string{"{{.disclaimer}}", "before the run", "during the run", "after the run", "operator", "approved by", "{{.gascode}}"} {
			if !strings.Contains(low, want) {
				t.Errorf("%s template: got no %q", f, want)
			}
		}
	}
	if _, err := Checklist("pdf"); err == nil {
		t.Errorf("format pdf: got no error, want one")
	}
}
