package web

import (
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/tabular"
	"github.com/foilrun/foilrun/store"
)

// PageSize is how many runs /runs shows a page.
const PageSize = 100

// runsData is what the runs page shows.
type runsData struct {
	Where     []string // the filter expressions, as given
	WhereText string   // the filter box's text: the expressions joined by "and"
	Error     string   // the filter's error, with its column
	Metrics   []metricChoice
	Columns   []string // chosen metric columns, in the order given
	Units     []string // their units
	Rows      []runRow
	Shown     int
	Matching  int
	Total     int
	Page      int
	Pages     int
	Prev      string // link to the previous page, "" on the first
	Next      string // link to the next page, "" on the last
	CSV, JSON string // download links for the selection
}

// metricChoice is one checkbox of the metric columns.
type metricChoice struct {
	Name, Unit string
	Checked    bool
}

// runRow is one run of the table with its metric cells.
type runRow struct {
	Cells   []string // tabular.RunHeader's columns
	Metrics []string
}

// runs is GET /runs: newest first, PageSize a page, filtered by where
// (repeatable; all must hold), with the metric columns asked for.
func (s *Server) runs(w http.ResponseWriter, r *http.Request) {
	q := r.URL.Query()
	d := runsData{Where: nonEmpty(q["where"]), Columns: nonEmpty(q["metric"]), Page: 1}
	d.WhereText = strings.Join(d.Where, " and ")
	if len(d.Where) > 1 {
		d.WhereText = "(" + strings.Join(d.Where, ") and (") + ")"
	}
	if p := q.Get("page"); p != "" {
		n, err := strconv.Atoi(p)
		if err != nil || n < 1 {
			s.fail(w, r, http.StatusBadRequest, fmt.Errorf("page %q: want a page number from 1", p))
			return
		}
		d.Page = n
	}
	ctx := r.Context()
	names, err := s.log.Names(ctx)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	if err := d.chooseMetrics(names); err != nil {
		s.fail(w, r, http.StatusBadRequest, err)
		return
	}
	if d.Total, err = s.log.Count(ctx, store.Filter{}); err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	d.Matching, err = s.log.Count(ctx, store.Filter{Where: d.Where})
	if errors.Is(err, store.ErrInvalid) {
		d.Error = err.Error()
		s.render(w, r, http.StatusBadRequest, "runs", "Runs", d)
		return
	}
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	runs, err := s.log.List(ctx, store.Filter{Where: d.Where, Newest: true, Limit: PageSize, Offset: (d.Page - 1) * PageSize})
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	if err := s.fillRows(r, &d, runs); err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	d.links(q)
	s.render(w, r, http.StatusOK, "runs", "Runs", d)
}

// nonEmpty drops blank values (an empty filter box).
func nonEmpty(vs []string) []string {
	var out []string
	for _, v := range vs {
		if strings.TrimSpace(v) != "" {
			out = append(out, v)
		}
	}
	return out
}

// chooseMetrics lists the log's metrics as checkboxes and checks the
// columns asked for, refusing a name the log does not hold.
func (d *runsData) chooseMetrics(names []store.Name) error {
	units := map[string]string{}
	for _, n := range names {
		if n.Kind == store.NameMetric {
			units[n.Name] = n.Unit
			d.Metrics = append(d.Metrics, metricChoice{Name: n.Name, Unit: n.Unit, Checked: slices.Contains(d.Columns, n.Name)})
		}
	}
	for _, c := range d.Columns {
		u, ok := units[c]
		if !ok {
			return fmt.Errorf("metric %q: the log holds no such metric; choose among the checkboxes", c)
		}
		if u == "1" { // a fraction: the header needs no unit
			u = ""
		}
		d.Units = append(d.Units, u)
	}
	return nil
}

// fillRows makes the table rows of runs, with the mean of each chosen
// metric per run (one Samples read per metric, over the page's codes).
func (s *Server) fillRows(r *http.Request, d *runsData, runs []store.Run) error {
	codes := make([]string, len(runs))
	for i, run := range runs {
		codes[i] = run.Code
	}
	means := make([]map[string]float64, len(d.Columns))
	for i, m := range d.Columns {
		means[i] = map[string]float64{}
		if len(codes) == 0 {
			continue
		}
		samples, err := s.log.Samples(r.Context(), store.Filter{Codes: codes}, m, nil)
		if err != nil {
			return err
		}
		for _, sm := range samples {
			means[i][sm.Code] = sm.Metric
		}
	}
	for i, cells := range tabular.RunRows(runs) {
		row := runRow{Cells: cells}
		for j := range d.Columns {
			v, ok := means[j][runs[i].Code]
			cell := ""
			if ok {
				cell = strconv.FormatFloat(v, 'g', 4, 64)
			}
			row.Metrics = append(row.Metrics, cell)
		}
		d.Rows = append(d.Rows, row)
	}
	d.Shown = len(d.Rows)
	d.Pages = max(1, (d.Matching+PageSize-1)/PageSize)
	return nil
}

// links sets the previous and next page and the download links, keeping
// the filter and the columns.
func (d *runsData) links(q url.Values) {
	page := func(n int) string {
		v := url.Values{"where": d.Where, "metric": d.Columns}
		v.Set("page", strconv.Itoa(n))
		return "/runs?" + v.Encode()
	}
	if d.Page > 1 {
		d.Prev = page(d.Page - 1)
	}
	if d.Page*PageSize < d.Matching {
		d.Next = page(d.Page + 1)
	}
	sel := ""
	if len(d.Where) > 0 {
		sel = "?" + url.Values{"where": d.Where}.Encode()
	}
	d.CSV, d.JSON = "/runs.csv"+sel, "/runs.json"+sel
}

// runsDownload is GET /runs.csv and /runs.json: every run that passes the
// filter, oldest first, exactly as `runs list --where … --output csv|json`
// writes them.
func (s *Server) runsDownload(w http.ResponseWriter, r *http.Request) {
	where := nonEmpty(r.URL.Query()["where"])
	runs, err := s.log.List(r.Context(), store.Filter{Where: where})
	if errors.Is(err, store.ErrInvalid) {
		s.fail(w, r, http.StatusBadRequest, err)
		return
	}
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	csv := strings.HasSuffix(r.URL.Path, ".csv")
	name := "runs.json"
	w.Header().Set("Content-Type", "application/json; charset=utf-8")
	if csv {
		name = "runs.csv"
		w.Header().Set("Content-Type", "text/csv; charset=utf-8")
	}
	w.Header().Set("Content-Disposition", `attachment; filename="`+name+`"`)
	if err := tabular.WriteRuns(w, runs, csv); err != nil {
		s.logf("write %s: %v", r.URL.Path, err) // the status is sent: only the log can say
	}
}
