package web

import (
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"strconv"
	"sync"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// The /fit page: the model fitted to the log as it is now, the way
// `foilrun fit` fits it with its defaults (lab.Collect on the stored
// profiles, kinetics.Fit from the illustrative start). There is no
// stored calibration to show, so the page fits; the fit is cached by
// what it was fitted to, so a reload, or the parity figure after the
// page, does not fit again while the log's fitted runs are unchanged.

// fitQuery is a /fit request: the metrics and the conditions.
type fitQuery struct {
	metrics lab.Metrics
	src     lab.Source
	text    string // the metric= value, for the form
}

func readFit(q url.Values) (fitQuery, error) {
	f := fitQuery{text: q.Get("metric")}
	switch f.text {
	case "", "both":
		f.metrics, f.text = lab.Metrics{Coverage: true, Density: true}, "both"
	case kinetics.MetricCoverage:
		f.metrics.Coverage = true
	case kinetics.MetricNucleiDensity:
		f.metrics.Density = true
	default:
		return f, badf("metric=%q: want coverage, nuclei_density or both", f.text)
	}
	var err error
	f.src, err = conditions(q)
	return f, err
}

// fitted is one fit and what it was fitted to.
type fitted struct {
	col lab.Observations
	res *kinetics.FitResult
	err error // the fit's refusal (too few runs, one temperature, …)
}

// fitCache keeps the latest fits by a digest of their observations.
type fitCache struct {
	mu   sync.Mutex
	fits map[[32]byte]*fitted
	// fitted counts the fits made (not served from the cache), for tests.
	fitted int
}

// maxSkippedShown is how many runs not fitted the page lists by name.
const maxSkippedShown = 20

// maxCachedFits bounds the cache: a few metric and condition choices.
const maxCachedFits = 8

// fit collects the observations and returns the cached fit of them, or
// fits them.
func (s *Server) fit(r *http.Request, fq fitQuery) (*fitted, error) {
	ctx := r.Context()
	start := kinetics.DefaultParams()
	b, err := lab.NewRebuilder(s.log, "")
	if err != nil {
		return nil, err
	}
	col, err := lab.Collect(ctx, b, store.Filter{}, fq.metrics, start, fq.src)
	if errors.Is(err, lab.ErrNoFurnace) {
		return nil, fmt.Errorf("fit: %w; the runs' recipes name no furnace file the server can read", err)
	}
	if err != nil {
		return nil, fmt.Errorf("fit: %w", err)
	}
	key := observationsDigest(fq, col)
	c := &s.fits
	c.mu.Lock()
	defer c.mu.Unlock()
	if f, ok := c.fits[key]; ok {
		return f, nil
	}
	f := &fitted{col: col}
	f.res, f.err = kinetics.Fit(col.Observations, start, kinetics.FitSettings{Coverage: fq.metrics.Coverage, Density: fq.metrics.Density})
	if f.err != nil {
		var ie *kinetics.InputError
		if !errors.As(f.err, &ie) {
			return nil, f.err
		}
	}
	c.fitted++
	if c.fits == nil || len(c.fits) >= maxCachedFits {
		c.fits = map[[32]byte]*fitted{}
	}
	c.fits[key] = f
	return f, nil
}

// observationsDigest is a SHA-256 of everything the fit sees: the
// request's choices and each observation's code, measured values,
// conditions and profile (the rest of a Prepared follows from the profile
// and the fixed start parameters).
func observationsDigest(fq fitQuery, col lab.Observations) [32]byte {
	h := sha256.New()
	fmt.Fprintf(h, "%v %v %d\n", fq.metrics, fq.src, len(col.Observations))
	for i, o := range col.Observations {
		fmt.Fprintf(h, "%s %x %x %v %v\n", o.Label, math.Float64bits(o.Coverage), math.Float64bits(o.NucleiDensity), col.Logged[i], o.Prepared.Profile)
	}
	var out [32]byte
	h.Sum(out[:0])
	return out
}

// fitView is the data of pages/fit.html.
type fitView struct {
	Metrics   []option
	Planned   bool
	Message   string // why there is no fit
	Summary   string
	Estimates table
	Combined  table
	Skipped   []string
	Figure    string
	Warnings  []string
	Reference string // T_ref
}

// fitRequest reads a /fit request and gives its fit, or answers the
// error and returns false.
func (s *Server) fitRequest(w http.ResponseWriter, r *http.Request) (fitQuery, *fitted, bool) {
	fq, err := readFit(r.URL.Query())
	if err == nil {
		var f *fitted
		if f, err = s.fit(r, fq); err == nil {
			return fq, f, true
		}
	}
	s.answerError(w, r, err)
	return fq, nil, false
}

func (s *Server) fitPage(w http.ResponseWriter, r *http.Request) {
	fq, f, ok := s.fitRequest(w, r)
	if !ok {
		return
	}
	v := fitView{Metrics: options([]string{"both", kinetics.MetricCoverage, kinetics.MetricNucleiDensity}, fq.text),
		Planned: fq.src == lab.Planned}
	for i, sk := range f.col.Skipped {
		if i == maxSkippedShown {
			v.Skipped = append(v.Skipped, fmt.Sprintf("and %d more", len(f.col.Skipped)-i))
			break
		}
		v.Skipped = append(v.Skipped, sk.String())
	}
	if f.err != nil {
		v.Message = fmt.Sprintf("No fit: %v. %d runs have a fitted metric.", f.err, len(f.col.Observations))
		s.render(w, r, http.StatusOK, "fit", "Fit", v)
		return
	}
	res := f.res
	v.Summary = fmt.Sprintf("%d runs, %d measurements, %d free parameters; %s after %d iterations; reduced chi-square %s",
		res.Runs, res.N, res.P, res.Status, res.Iterations, chart.FormatValue(res.ReducedChiSq))
	v.Reference = strconv.FormatFloat(recipe.Celsius(res.ReferenceTemperature), 'f', 1, 64) + " °C"
	v.Estimates = estimatesTable(res.Estimates)
	v.Combined = combinedTable(res.Combined)
	v.Warnings = res.Warnings
	v.Figure = "/fit/parity.svg?" + r.URL.RawQuery
	s.render(w, r, http.StatusOK, "fit", "Fit", v)
}

// estimatesTable shows each parameter with its standard error; a
// prefactor also referred to T_ref with its ×/÷ factor.
func estimatesTable(es []kinetics.Estimate) table {
	t := table{Header: []string{"parameter", "value", "± se", "unit", "at T_ref", "×/÷", "note"},
		Numeric: []bool{false, true, true, false, true, true, false}}
	for _, e := range es {
		row := []string{e.Key + " (" + e.Short + ")", chart.FormatValue(e.Value), chart.FormatValue(e.SE), e.Unit, "", "", ""}
		switch {
		case e.Fixed:
			row[2], row[6] = "", "fixed"
		case !e.Identifiable:
			row[1], row[2], row[6] = "", "", "not identifiable from these metrics"
		case e.AtBound:
			row[6] = "at a bound"
		}
		if e.Log && e.Identifiable && !e.Fixed && !math.IsNaN(e.RefValue) {
			row[4], row[5] = chart.FormatValue(e.RefValue), chart.FormatValue(math.Exp(e.RefLogSE))
		}
		t.Rows = append(t.Rows, row)
	}
	return t
}

// combinedTable shows the combinations a coverage-only fit estimates.
func combinedTable(cs []kinetics.Combined) table {
	t := table{Header: []string{"combination", "value", "± se", "unit"}, Numeric: []bool{false, true, true, false}}
	for _, c := range cs {
		t.Rows = append(t.Rows, []string{c.Name, chart.FormatValue(c.Value), chart.FormatValue(c.SE), c.Unit})
	}
	return t
}

func (s *Server) fitParity(w http.ResponseWriter, r *http.Request) {
	_, f, ok := s.fitRequest(w, r)
	if !ok {
		return
	}
	if f.err != nil {
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("no parity plot: %w", f.err))
		return
	}
	fig, ok := chart.FitParity(f.res.Residuals)
	if !ok {
		s.fail(w, r, http.StatusNotFound, errors.New("no parity plot: the fit has no residuals"))
		return
	}
	s.writeSVG(w, r, func(out io.Writer) error { return chart.WriteParity(out, "parity.svg", fig) })
}
