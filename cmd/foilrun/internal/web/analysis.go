package web

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
	"github.com/foilrun/foilrun/store"
)

// The analysis pages: /best and /rank (the tables of `runs best` and
// `runs rank`, from store.Best and store.Rank on lab.TwinSamples), /fit
// (the model fitted to the log as `foilrun fit` fits it) and /window (the
// predicted coverage map of `foilrun window` with the logged runs on it).
// Their figures are SVG drawn by internal/chart. Every handler only reads.

// analysisRoutes registers the analysis pages and their figures.
func (s *Server) analysisRoutes(mux *http.ServeMux) {
	mux.HandleFunc("GET /best", s.bestPage)
	mux.HandleFunc("GET /best.svg", s.bestSVG)
	mux.HandleFunc("GET /rank", s.rankPage)
	mux.HandleFunc("GET /fit", s.fitPage)
	mux.HandleFunc("GET /fit/parity.svg", s.fitParity)
	mux.HandleFunc("GET /window", s.windowPage)
	mux.HandleFunc("GET /window.svg", s.windowSVG)
}

// badRequest is a request whose parameters the page refuses: 400 with the
// message.
type badRequest struct{ msg string }

func (e *badRequest) Error() string { return e.msg }

func badf(format string, args ...any) error { return &badRequest{fmt.Sprintf(format, args...)} }

// answerError sends err: 400 for a refused parameter (also a filter or
// value the store or kinetics found invalid), 500 otherwise.
func (s *Server) answerError(w http.ResponseWriter, r *http.Request, err error) {
	var br *badRequest
	var ie *kinetics.InputError
	switch {
	case errors.As(err, &br), errors.As(err, &ie), errors.Is(err, store.ErrInvalid), errors.Is(err, recipe.ErrInvalid):
		s.fail(w, r, http.StatusBadRequest, err)
	case errors.Is(err, store.ErrNotFound):
		s.fail(w, r, http.StatusNotFound, err)
	default:
		s.fail(w, r, http.StatusInternalServerError, err)
	}
}

// writeSVG renders a figure into memory and sends it as image/svg+xml,
// or the error when it cannot be drawn.
func (s *Server) writeSVG(w http.ResponseWriter, r *http.Request, draw func(io.Writer) error) {
	var buf bytes.Buffer
	if err := draw(&buf); err != nil {
		s.answerError(w, r, err)
		return
	}
	svgHeaders(w)
	w.Header().Set("Cache-Control", "no-store")
	_, _ = w.Write(buf.Bytes())
}

// figureCSP is the Content-Security-Policy of an SVG figure: the plotting
// code styles every element with a style attribute and embeds colour bars
// as data: images, which the pages' default-src 'self' would block (the
// figure then shows in the browser's default font, its text overflowing,
// and without its colour bar). Nothing else is allowed: no script, no
// fetch, no other source.
const figureCSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:"

// svgHeaders marks a response as an SVG figure.
func svgHeaders(w http.ResponseWriter) {
	w.Header().Set("Content-Type", "image/svg+xml")
	w.Header().Set("Content-Security-Policy", figureCSP)
}

// names are the log's parameter and metric names, for the forms'
// selects; the logged twins (…_logged) are not offered, since
// conditions=logged picks them.
type names struct {
	Params, Metrics []string
}

func (s *Server) names(ctx context.Context) (names, error) {
	ns, err := s.log.Names(ctx)
	if err != nil {
		return names{}, err
	}
	var out names
	for _, n := range ns {
		switch {
		case n.Kind == store.NameMetric:
			out.Metrics = append(out.Metrics, n.Name)
		case n.Kind == store.NameParam && !lab.IsTwin(n.Name):
			out.Params = append(out.Params, n.Name)
		}
	}
	store.SortParams(out.Params)
	return out, nil
}

// metric reads the metric= parameter (default coverage): a metric the log
// holds values of. An old spelling is refused naming the new one.
func (n names) metric(q url.Values) (string, error) {
	m := strings.TrimSpace(q.Get("metric"))
	if m == "" {
		m = kinetics.MetricCoverage
	}
	if slices.Contains(n.Metrics, m) {
		return m, nil
	}
	var ie *kinetics.InputError
	if _, err := kinetics.ParseMetric(m); errors.As(err, &ie) && ie.Reason == kinetics.ReasonRenamed {
		return "", badf("metric=: %v", err)
	}
	return "", badf("metric %q has no logged values; choose one of: %s", m, orNone(n.Metrics))
}

// param reads a parameter of the query by key: a stored parameter name
// (growth_temperature_c) or a word of the vary vocabulary (temperature,
// duration, pressure or a gas symbol such as CH4, meaning the grow step's
// value), which must have logged values.
func (n names) param(q url.Values, key, def string) (string, error) {
	v := strings.TrimSpace(q.Get(key))
	if v == "" {
		v = def
	}
	p := storedParam(v)
	if !slices.Contains(n.Params, p) {
		return "", badf("%s=%q: parameter %q has no logged values; choose one of: %s", key, v, p, orNone(n.Params))
	}
	return p, nil
}

// storedParam is the stored parameter a word of the vary vocabulary names
// (recipe.Plan.Parameters): temperature growth_temperature_c, duration
// growth_time_min, pressure growth_pressure_torr, a gas symbol its grow
// flow (CH4: ch4_flow_sccm); any other name is returned as it is.
func storedParam(name string) string {
	switch strings.ToLower(name) {
	case kinetics.ParamTemperature:
		return "growth_temperature_c"
	case kinetics.ParamDuration:
		return "growth_time_min"
	case kinetics.ParamPressure:
		return "growth_pressure_torr"
	}
	if isGas(name) {
		return strings.ToLower(name) + "_flow_sccm"
	}
	return name
}

// isGas reports whether name is a gas of recipe/gas's table by its
// symbol (CH4, H2, Ar).
func isGas(name string) bool {
	g, err := gas.Lookup(name)
	return err == nil && strings.EqualFold(g.Symbol, name)
}

func orNone(vs []string) string {
	if len(vs) == 0 {
		return "(none logged yet)"
	}
	return strings.Join(vs, ", ")
}

// where reads the where= filters (repeatable, as --where); empty ones
// are dropped.
func where(q url.Values) []string {
	var out []string
	for _, w := range q["where"] {
		if w = strings.TrimSpace(w); w != "" {
			out = append(out, w)
		}
	}
	return out
}

// conditions reads conditions= (logged, the default, or planned).
func conditions(q url.Values) (lab.Source, error) {
	c := q.Get("conditions")
	if c == "" {
		c = "logged"
	}
	src, err := lab.ParseSource(c)
	if err != nil {
		return src, badf("%v", err)
	}
	return src, nil
}

// goal reads min= and max= for metric: numbers in the metric's canonical
// unit, or for a fraction (coverage) also percentages such as 90%.
func goal(q url.Values, metric string) (store.Goal, error) {
	g := store.NoGoal()
	parse := func(text string) (float64, error) {
		v, err := recipe.Parse(text, recipe.Dimensionless)
		return v.SI, err
	}
	if m, ok := store.MetricByName(metric); ok && slices.Contains(m.Units(), "%") {
		parse = recipe.ParseFraction
	}
	for _, b := range []struct {
		key  string
		into *store.Optional
	}{{"min", &g.Min}, {"max", &g.Max}} {
		text := strings.TrimSpace(q.Get(b.key))
		if text == "" {
			continue
		}
		v, err := parse(text)
		if err != nil {
			return g, badf("%s=%q: %v; want a number in the unit of %s (a fraction also as 90%%)", b.key, text, err, metric)
		}
		*b.into = store.Optional(v)
	}
	return g, nil
}
