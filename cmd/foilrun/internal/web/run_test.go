package web

import (
	"context"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/store"
)

func TestRunFigureAndChecklist(t *testing.T) { backends(t, testRunFigureAndChecklist) }

// testRunFigureAndChecklist serves a demo log whose newest run was logged
// with its site file: its plan figure and checklist, and the 404s of a run
// without a site.
func testRunFigureAndChecklist(t *testing.T) {
	l, _ := testLog(t, 0)
	paths, err := demolab.Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	code := seedBrowserLog(t, l, paths)
	runs, err := l.List(context.Background(), store.Filter{Limit: 1})
	if err != nil || len(runs) == 0 || runs[0].Code == code {
		t.Fatalf("want an older run without a site file: %v", err)
	}
	noSite := runs[0].Code
	srv, c := testServer(t, l, Config{})
	tests := []struct {
		name, path string
		want       int
		body       []string
	}{
		{"plan figure", "/runs/" + code + "/plan.svg", 200, []string{"<svg", "plan and controller log"}},
		{"checklist", "/runs/" + code + "/checklist", 200, []string{"PRE-RUN GAS-SAFETY CHECKLIST", "do not replace", "never judges"}},
		{"no checklist without a site file", "/runs/" + noSite + "/checklist", 404, []string{"without its recipe and site files"}},
		{"unknown run's checklist", "/runs/NO-SUCH-RUN/checklist", 404, []string{"NO-SUCH-RUN"}},
		{"unknown run's figure", "/runs/NO-SUCH-RUN/plan.svg", 404, []string{"NO-SUCH-RUN"}},
		{"checklist by POST", "/runs/" + code + "/checklist", 405, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var status int
			var body string
			if tt.want == 405 {
				resp, err := c.Post(srv.URL+tt.path, "text/plain", nil)
				if err != nil {
					t.Fatal(err)
				}
				resp.Body.Close()
				status = resp.StatusCode
			} else {
				status, body = get(t, c, srv.URL+tt.path)
			}
			if status != tt.want {
				t.Fatalf("%s: got %d, want %d\n%.500s", tt.path, status, tt.want, body)
			}
			for _, b := range tt.body {
				if !strings.Contains(body, b) {
					t.Errorf("%s lacks %q", tt.path, b)
				}
			}
		})
	}
}
