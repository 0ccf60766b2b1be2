package web

import (
	"context"
	"io/fs"
	"net/url"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/templates"
)

func TestWindowPage(t *testing.T) { backends(t, testWindowPage) }

// testWindowPage checks /window's statuses and refusals: never a path,
// the grid cap, unknown recipes and bad axes.
func testWindowPage(t *testing.T) {
	l := demoLog(t, 12)
	runs, err := l.List(context.Background(), store.Filter{Limit: 1})
	if err != nil || len(runs) == 0 {
		t.Fatalf("no demo run: %v", err)
	}
	srv, c := testServer(t, l, Config{})
	q := url.QueryEscape
	tests := []struct {
		name, path string
		want       int
		body       string
	}{
		{"default template", "/window", 200, "template lowpressure on the template furnace"},
		{"another template by file name", "/window?recipe=recipe-atmospheric", 200, "template atmospheric"},
		{"a run's recipe", "/window?recipe=" + runs[0].Code, 200, "run " + runs[0].Code},
		{"a server path", "/window?recipe=" + q("/etc/passwd"), 400, "not a path"},
		{"a relative path", "/window?recipe=" + q("../templates/recipe-lowpressure.yaml"), 400, "not a path"},
		{"a backslash path", "/window?recipe=" + q(`..\x`), 400, "not a path"},
		{"unknown recipe", "/window?recipe=NO-SUCH-RUN", 404, "no run with that code and no template"},
		{"grid over the cap", "/window?vary=" + q("temperature=950C:1050C:61") + "&vary=" + q("CH4=1sccm:20sccm:60"), 400, "at most 3600"},
		{"one axis", "/window?vary=" + q("temperature=950C:1050C:5"), 400, "want two vary"},
		{"old axis name", "/window?vary=" + q("time=1min:30min:5") + "&vary=" + q("CH4=1sccm:20sccm:5"), 400, "duration"},
		{"bad show", "/window?show=density", 400, "show="},
		{"its figure", "/window.svg?recipe=largedomain", 200, "<svg"},
		{"its figure refuses a path", "/window.svg?recipe=" + q("/etc/passwd"), 400, "not a path"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			status, body := get(t, c, srv.URL+tt.path)
			if status != tt.want || !strings.Contains(body, tt.body) {
				t.Errorf("GET %s: got %d, want %d with %q\n%.600s", tt.path, status, tt.want, tt.body, body)
			}
		})
	}
}

var summaryRe = regexp.MustCompile(`(\d+) × (\d+) points, (\d+) outside the furnace limits; (\d+) logged runs on the map, (\d+) outside its axes`)

func TestWindowPageIsTheLibrarys(t *testing.T) { backends(t, testWindowPageIsTheLibrarys) }

// testWindowPageIsTheLibrarys compares /window's counts with
// kinetics.Window on the same template (the code `foilrun window` runs)
// and the logged runs it draws with the runs the log holds.
func testWindowPageIsTheLibrarys(t *testing.T) {
	l := demoLog(t, 12)
	srv, c := testServer(t, l, Config{})
	vary := []string{"temperature=900C:1100C:9", "CH4=0.5sccm:30sccm:7"}
	status, page := get(t, c, srv.URL+"/window?recipe=lowpressure&vary="+url.QueryEscape(vary[0])+"&vary="+url.QueryEscape(vary[1]))
	if status != 200 {
		t.Fatalf("/window: %d\n%s", status, page)
	}
	m := summaryRe.FindStringSubmatch(page)
	if m == nil {
		t.Fatalf("no summary on the page:\n%.2000s", page)
	}
	rdata, _ := fs.ReadFile(templates.FS(), "recipe-lowpressure.yaml")
	fdata, _ := fs.ReadFile(templates.FS(), "furnace.yaml")
	r, err := recipe.ParseRecipe("recipe-lowpressure.yaml", rdata)
	if err != nil {
		t.Fatal(err)
	}
	f, err := recipe.ParseFurnace("furnace.yaml", fdata)
	if err != nil {
		t.Fatal(err)
	}
	var axes [2]kinetics.Axis
	for i, v := range vary {
		if axes[i], err = kinetics.ParseAxis(v); err != nil {
			t.Fatal(err)
		}
	}
	want, err := kinetics.Window(recipe.Derive(r, f), kinetics.WindowSpec{X: axes[0], Y: axes[1], Params: kinetics.DefaultParams()})
	if err != nil {
		t.Fatal(err)
	}
	infeasible := 0
	for _, row := range want.Points {
		for _, p := range row {
			if !p.Feasible {
				infeasible++
			}
		}
	}
	got := func(i int) int { n, _ := strconv.Atoi(m[i]); return n }
	if got(1) != len(want.Xs) || got(2) != len(want.Ys) || got(3) != infeasible {
		t.Errorf("page: %s × %s points, %s infeasible; kinetics.Window: %d × %d, %d infeasible", m[1], m[2], m[3], len(want.Xs), len(want.Ys), infeasible)
	}
	if infeasible == 0 {
		t.Errorf("a grid to 1100 °C and 30 sccm crosses no furnace limit of the template furnace; widen it so the test sees blocked cells")
	}
	// Every demo run has a coverage, a grow temperature and a CH4 flow;
	// those within the map's outer cell edges are on it: half a step
	// beyond the first and last grid values: 887.5–1112.5 °C (step 25 °C)
	// and 0.5 − 29.5/12 to 30 + 29.5/12 sccm (step 29.5/6 sccm).
	pk, err := lab.TwinSamples(context.Background(), l, store.Filter{}, "coverage", []string{"growth_temperature_c", "ch4_flow_sccm"}, lab.Logged)
	if err != nil {
		t.Fatal(err)
	}
	on := 0
	for _, s := range pk.Samples {
		if s.Params[0] >= 887.5 && s.Params[0] <= 1112.5 && s.Params[1] >= 0.5-29.5/12 && s.Params[1] <= 30+29.5/12 {
			on++
		}
	}
	if got(4) != on || got(5) != 12-on || on == 0 {
		t.Errorf("runs drawn: %d on the map, %d outside; want %d on it of 12", got(4), got(5), on)
	}
}
