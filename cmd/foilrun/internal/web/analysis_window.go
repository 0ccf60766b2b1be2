package web

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"
	"sync"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/templates"
)

// The /window page: the coverage (or another quantity) the model predicts
// over two grow-step parameters of a recipe, as `foilrun window` maps it
// (kinetics.Window: each point derived, checked against the furnace and
// predicted), with the logged runs drawn on the map. The recipe is a run
// code (that run's recipe and furnace snapshots) or an embedded template
// with the embedded furnace; never a path on the server.

// maxWindowPoints caps a /window grid. Each point derives, checks and
// predicts a recipe; 3,600 points (60 × 60) take a fraction of a second,
// so no request holds the server long. `foilrun window` maps larger grids.
const maxWindowPoints = 3600

// Default axes of /window: a span around the templates' grow steps.
var defaultVary = []string{"temperature=950C:1070C:25", "CH4=0.5sccm:20sccm:20"}

// windowQuery is a /window request, read and checked.
type windowQuery struct {
	recipe string // run code or template name, as given
	vary   []string
	axes   [2]kinetics.Axis
	show   string
	where  []string
}

func readWindow(q url.Values) (windowQuery, error) {
	wq := windowQuery{recipe: strings.TrimSpace(q.Get("recipe")), show: q.Get("show"), where: where(q)}
	if wq.recipe == "" {
		wq.recipe = templates.DefaultRecipe
	}
	if strings.ContainsAny(wq.recipe, `/\`) || strings.Contains(wq.recipe, "..") {
		return wq, badf("recipe=%q: give a run code or a template name (%s), not a path", wq.recipe, strings.Join(recipeTemplates(), ", "))
	}
	if wq.show == "" {
		wq.show = kinetics.MetricCoverage
	}
	if !slices.Contains(chart.WindowShows, wq.show) {
		return wq, badf("show=%q: want %s", wq.show, strings.Join(chart.WindowShows, ", "))
	}
	for _, v := range q["vary"] {
		if v = strings.TrimSpace(v); v != "" {
			wq.vary = append(wq.vary, v)
		}
	}
	if len(wq.vary) == 0 {
		wq.vary = defaultVary
	}
	if len(wq.vary) != 2 {
		return wq, badf("want two vary=PARAM=FROM:TO:STEPS, got %d", len(wq.vary))
	}
	for i, v := range wq.vary {
		a, err := kinetics.ParseAxis(v)
		if err != nil {
			return wq, badf("vary=%q: %v", v, err)
		}
		wq.axes[i] = a
	}
	if n := wq.axes[0].Steps * wq.axes[1].Steps; n > maxWindowPoints {
		return wq, badf("a %d × %d grid is %d points; this page maps at most %d (for more, run foilrun window)",
			wq.axes[0].Steps, wq.axes[1].Steps, n, maxWindowPoints)
	}
	return wq, nil
}

// recipeTemplates names the embedded recipe templates.
func recipeTemplates() []string {
	var out []string
	for _, t := range templates.List() {
		if t.Kind == "recipe" {
			out = append(out, t.Name)
		}
	}
	return out
}

// windowPlan is the plan of a run code or of an embedded template
// (with the embedded furnace), and a label for people.
func (s *Server) windowPlan(ctx context.Context, name string) (*recipe.Plan, string, error) {
	if t, ok := templates.Find("recipe", strings.TrimPrefix(name, "recipe-")); ok && t.Name != "" {
		ft, _ := templates.Find("furnace", "")
		rdata, err := fs.ReadFile(templates.FS(), t.File)
		if err != nil {
			return nil, "", err
		}
		fdata, err := fs.ReadFile(templates.FS(), ft.File)
		if err != nil {
			return nil, "", err
		}
		r, err := recipe.ParseRecipe(t.File, rdata)
		if err != nil {
			return nil, "", err
		}
		f, err := recipe.ParseFurnace(ft.File, fdata)
		if err != nil {
			return nil, "", err
		}
		return recipe.Derive(r, f), "template " + t.Name + " on the template furnace", nil
	}
	rec, err := s.log.Record(ctx, name)
	if errors.Is(err, store.ErrNotFound) {
		return nil, "", fmt.Errorf("recipe=%q: no run with that code and no template of that name (templates: %s): %w",
			name, strings.Join(recipeTemplates(), ", "), store.ErrNotFound)
	}
	if err != nil {
		return nil, "", err
	}
	b, err := lab.NewRebuilder(s.log, "")
	if err != nil {
		return nil, "", err
	}
	rb, err := b.Rebuild(ctx, rec)
	if errors.Is(err, lab.ErrNoSnapshot) {
		return nil, "", badf("run %s was logged without its recipe: it has no plan to map", rec.Code)
	}
	if err != nil {
		return nil, "", err
	}
	return rb.Plan, "run " + rec.Code + "'s recipe on furnace " + rb.FurnacePath, nil
}

// windowMaps caches the latest maps by recipe, axes and show: the page
// and its figure are two requests for one map, and a run's recipe
// snapshot does not change.
type windowMaps struct {
	mu   sync.Mutex
	maps map[string]windowMap
}

type windowMap struct {
	m     *kinetics.Map
	label string
}

// maxCachedMaps bounds the map cache.
const maxCachedMaps = 8

// window returns the map of a request, computed or cached.
func (s *Server) window(ctx context.Context, wq windowQuery) (windowMap, error) {
	key := wq.recipe + "\x00" + wq.vary[0] + "\x00" + wq.vary[1]
	c := &s.maps
	c.mu.Lock()
	wm, ok := c.maps[key]
	c.mu.Unlock()
	if ok {
		return wm, nil
	}
	plan, label, err := s.windowPlan(ctx, wq.recipe)
	if err != nil {
		return wm, err
	}
	m, err := kinetics.Window(plan, kinetics.WindowSpec{X: wq.axes[0], Y: wq.axes[1], Params: kinetics.DefaultParams()})
	if err != nil {
		return wm, err
	}
	wm = windowMap{m: m, label: label}
	c.mu.Lock()
	if c.maps == nil || len(c.maps) >= maxCachedMaps {
		c.maps = map[string]windowMap{}
	}
	c.maps[key] = wm
	c.mu.Unlock()
	return wm, nil
}

// loggedPoints are the logged runs that have a coverage and both axes'
// parameters (their grow step's values, on logged conditions where a run
// has them), in the axes' display units.
func (s *Server) loggedPoints(ctx context.Context, wq windowQuery) ([]chart.MapPoint, error) {
	units := map[string]string{}
	for _, p := range recipe.ParameterNames() {
		units[p.Name] = p.Unit
	}
	by := []string{storedParam(wq.axes[0].Param), storedParam(wq.axes[1].Param)}
	for _, p := range by {
		if units[p] == "" {
			return nil, nil // a parameter runs do not log: no points
		}
	}
	pk, err := lab.TwinSamples(ctx, s.log, store.Filter{Where: wq.where}, kinetics.MetricCoverage, by, lab.Logged)
	if err != nil {
		return nil, err
	}
	display := func(a kinetics.Axis, v float64, unit string) float64 {
		if math.IsNaN(v) {
			return v // the run lacks the parameter: left off the map
		}
		q, err := recipe.Parse(strconv.FormatFloat(v, 'g', -1, 64)+" "+unit, a.Dim)
		if err != nil {
			return math.NaN()
		}
		return a.Display(q.SI)
	}
	pts := make([]chart.MapPoint, 0, len(pk.Samples))
	for _, sm := range pk.Samples {
		pts = append(pts, chart.MapPoint{X: display(wq.axes[0], sm.Params[0], units[by[0]]), Y: display(wq.axes[1], sm.Params[1], units[by[1]])})
	}
	return pts, nil
}

// windowView is the data of pages/window.html.
type windowView struct {
	Recipe       string
	Vary         [2]string
	Shows        []option
	Templates    []string
	Where        []string
	Label        string
	Summary      string
	Rules        []string // the checks that made points infeasible
	Figure       string
	MaxPoints    int
	NotPredicted string
}

// windowRequest reads a /window request and gives its map and the logged
// runs to draw on it, or answers the error and returns false.
func (s *Server) windowRequest(w http.ResponseWriter, r *http.Request) (windowQuery, windowMap, []chart.MapPoint, bool) {
	wq, err := readWindow(r.URL.Query())
	if err == nil {
		var wm windowMap
		if wm, err = s.window(r.Context(), wq); err == nil {
			var pts []chart.MapPoint
			if pts, err = s.loggedPoints(r.Context(), wq); err == nil {
				return wq, wm, pts, true
			}
		}
	}
	s.answerError(w, r, err)
	return wq, windowMap{}, nil, false
}

func (s *Server) windowPage(w http.ResponseWriter, r *http.Request) {
	wq, wm, pts, ok := s.windowRequest(w, r)
	if !ok {
		return
	}
	m := wm.m
	v := windowView{Recipe: wq.recipe, Vary: [2]string{wq.vary[0], wq.vary[1]}, Shows: options(chart.WindowShows, wq.show),
		Templates: recipeTemplates(), Where: append(slices.Clone(wq.where), ""), Label: wm.label, MaxPoints: maxWindowPoints,
		Figure: "/window.svg?" + r.URL.RawQuery}
	infeasible, rules := 0, map[string]bool{}
	for _, row := range m.Points {
		for _, p := range row {
			if !p.Feasible {
				infeasible++
				if !rules[p.Rule] {
					rules[p.Rule] = true
					v.Rules = append(v.Rules, p.Rule+": "+p.Message)
				}
			}
		}
	}
	drawn := chart.WindowMap(m, wq.show).Covered(pts)
	v.Summary = fmt.Sprintf("%s, step %s: %d × %d points, %d outside the furnace limits; %d logged runs on the map, %d outside its axes",
		m.Recipe, m.Step, len(m.Xs), len(m.Ys), infeasible, drawn, len(pts)-drawn)
	if wq.show != "time_to_99" {
		if err := kinetics.DefaultParams().Predicts(wq.show); err != nil {
			v.NotPredicted = err.Error()
		}
	}
	s.render(w, r, http.StatusOK, "window", "Process window", v)
}

func (s *Server) windowSVG(w http.ResponseWriter, r *http.Request) {
	wq, wm, pts, ok := s.windowRequest(w, r)
	if !ok {
		return
	}
	hm := chart.WindowMap(wm.m, wq.show)
	hm.Points = pts
	s.writeSVG(w, r, func(out io.Writer) error { return chart.WriteHeatMap(out, "window.svg", hm) })
}
