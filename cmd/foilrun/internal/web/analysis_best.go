package web

import (
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"slices"
	"strconv"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/store"
)

// option is one entry of a form's select.
type option struct {
	Value    string
	Selected bool
}

func options(values []string, selected string) []option {
	out := make([]option, len(values))
	for i, v := range values {
		out[i] = option{v, v == selected}
	}
	return out
}

// queryForm is the form above /best and /rank, filled with the request's
// values.
type queryForm struct {
	Metrics, X, Y []option
	Min, Max      string
	Bins          int
	Where         []string // each filter, and one empty box for another
	Planned       bool     // conditions=planned
}

// table is an HTML table: a header, rows of cells, and which columns are
// numbers (right-aligned).
type table struct {
	Header  []string
	Numeric []bool
	Rows    [][]string
}

// bestQuery is a /best request, read and checked.
type bestQuery struct {
	metric string
	by     []string // x and y, stored names
	bins   int
	goal   store.Goal
	where  []string
	src    lab.Source
}

// maxBins is the most bins per parameter /best draws (runs best allows
// 100; a 100 × 100 heat map is unreadable in a page).
const maxBins = 30

func readBest(q url.Values, n names) (bestQuery, error) {
	var b bestQuery
	var err error
	if b.metric, err = n.metric(q); err != nil {
		return b, err
	}
	x, err := n.param(q, "x", "temperature")
	if err != nil {
		return b, err
	}
	y, err := n.param(q, "y", "CH4")
	if err != nil {
		return b, err
	}
	if x == y {
		return b, badf("x and y are both %q: choose two parameters", x)
	}
	b.by = []string{x, y}
	b.bins = 5
	if t := q.Get("bins"); t != "" {
		if b.bins, err = strconv.Atoi(t); err != nil || b.bins < 1 || b.bins > maxBins {
			return b, badf("bins=%q: want a whole number from 1 to %d", t, maxBins)
		}
	}
	if b.goal, err = goal(q, b.metric); err != nil {
		return b, err
	}
	b.where = where(q)
	b.src, err = conditions(q)
	return b, err
}

// best reads the request, checks it against the log's names and bins the
// samples as `runs best` does.
func (s *Server) best(r *http.Request) (bestQuery, names, store.BestTable, lab.Picked, error) {
	n, err := s.names(r.Context())
	if err != nil {
		return bestQuery{}, n, store.BestTable{}, lab.Picked{}, err
	}
	b, err := readBest(r.URL.Query(), n)
	if err != nil {
		return b, n, store.BestTable{}, lab.Picked{}, err
	}
	pk, err := lab.TwinSamples(r.Context(), s.log, store.Filter{Where: b.where}, b.metric, b.by, b.src)
	if err != nil {
		return b, n, store.BestTable{}, pk, err
	}
	return b, n, store.Best(pk.Samples, b.metric, b.by, b.bins, b.goal), pk, nil
}

// bestView is the data of pages/best.html.
type bestView struct {
	Form    queryForm
	Table   table
	Summary string
	Figure  string // URL of the heat map
}

func (s *Server) bestPage(w http.ResponseWriter, r *http.Request) {
	b, n, bt, pk, err := s.best(r)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	m := metricUnit(b.metric)
	v := bestView{Form: form(r.URL.Query(), n, b.metric, b.by), Figure: "/best.svg?" + r.URL.RawQuery,
		Summary: fmt.Sprintf("%s over %d runs (%d without the parameters left out); %s", b.metric, bt.Runs, bt.Missing, pk.Line())}
	v.Form.Bins = b.bins
	t := &v.Table
	t.Header = append(slices.Clone(b.by), "runs", "mean "+m.label, "min", "max")
	t.Numeric = []bool{false, false, true, true, true, true, true}
	if b.goal.Set() { // the share column only says something with a goal
		t.Header = append(t.Header, "share "+b.goal.String())
	}
	for _, bin := range bt.Bins {
		row := []string{binRange(bin, 0), binRange(bin, 1), strconv.Itoa(bin.Count),
			m.format(bin.Mean), m.format(bin.Min), m.format(bin.Max)}
		if b.goal.Set() {
			share := ""
			if !math.IsNaN(bin.Share) {
				share = strconv.FormatFloat(100*bin.Share, 'f', 0, 64) + " %"
			}
			row = append(row, share)
		}
		t.Rows = append(t.Rows, row)
	}
	s.render(w, r, http.StatusOK, "best", "Best settings", v)
}

func binRange(b store.Bin, j int) string {
	return chart.FormatValue(b.Lo[j]) + " – " + chart.FormatValue(b.Hi[j])
}

// form fills the query form from the request.
func form(q url.Values, n names, metric string, by []string) queryForm {
	f := queryForm{Metrics: options(n.Metrics, metric), Min: q.Get("min"), Max: q.Get("max"), Planned: q.Get("conditions") == "planned"}
	if len(by) == 2 {
		f.X, f.Y = options(n.Params, by[0]), options(n.Params, by[1])
	}
	f.Where = append(where(q), "")
	return f
}

// shownMetric is how a metric is shown: fractions in %, the rest in their
// canonical unit.
type shownMetric struct {
	label string  // "(%)", "(1/mm2)"
	scale float64 // display = scale × canonical
}

func metricUnit(metric string) shownMetric {
	m, ok := store.MetricByName(metric)
	switch {
	case ok && slices.Contains(m.Units(), "%"):
		return shownMetric{"(%)", 100}
	case ok && m.Unit != "1":
		return shownMetric{"(" + m.Unit + ")", 1}
	}
	return shownMetric{"", 1}
}

func (m shownMetric) format(v float64) string { return chart.FormatValue(m.scale * v) }

func (s *Server) bestSVG(w http.ResponseWriter, r *http.Request) {
	b, _, bt, pk, err := s.best(r)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	m := bestMap(b, bt)
	for _, sm := range pk.Samples {
		m.Points = append(m.Points, chart.MapPoint{X: sm.Params[0], Y: sm.Params[1]})
	}
	m.Title = fmt.Sprintf("mean %s, %d runs", b.metric, bt.Runs)
	s.writeSVG(w, r, func(out io.Writer) error { return chart.WriteHeatMap(out, "best.svg", m) })
}

// bestMap lays the bins of a two-parameter table out on their grid: the
// equal-width bins of each parameter's range, empty cells without a
// value.
func bestMap(b bestQuery, bt store.BestTable) chart.HeatMap {
	shown := metricUnit(b.metric)
	m := chart.HeatMap{XLabel: b.by[0], YLabel: b.by[1], ZLabel: "mean " + b.metric + " " + shown.label, MissingLabel: "no runs"}
	var axes [2]binAxis
	for j := range axes {
		axes[j] = newBinAxis(bt.Bins, j)
	}
	m.X, m.Y = axes[0].centres(), axes[1].centres()
	m.Z = make([][]float64, len(m.Y))
	for iy := range m.Z {
		m.Z[iy] = make([]float64, len(m.X))
		for ix := range m.Z[iy] {
			m.Z[iy][ix] = math.NaN()
		}
	}
	for _, bin := range bt.Bins {
		m.Z[axes[1].index(bin.Lo[1])][axes[0].index(bin.Lo[0])] = shown.scale * bin.Mean
	}
	return m
}

// binAxis is one parameter's bins: n equal widths from lo to hi.
type binAxis struct {
	lo, w float64
	n     int
}

func newBinAxis(bins []store.Bin, j int) binAxis {
	if len(bins) == 0 {
		return binAxis{0, 1, 1}
	}
	lo, hi, w := math.Inf(1), math.Inf(-1), math.Inf(1)
	for _, b := range bins {
		lo, hi, w = math.Min(lo, b.Lo[j]), math.Max(hi, b.Hi[j]), math.Min(w, b.Hi[j]-b.Lo[j])
	}
	if w <= 0 || hi == lo {
		return binAxis{lo, 1, 1}
	}
	return binAxis{lo, w, max(1, int(math.Round((hi-lo)/w)))}
}

func (a binAxis) centres() []float64 {
	c := make([]float64, a.n)
	for k := range c {
		c[k] = a.lo + (float64(k)+0.5)*a.w
	}
	if a.n == 1 && a.w == 1 {
		c[0] = a.lo
	}
	return c
}

func (a binAxis) index(lo float64) int {
	return min(max(int(math.Round((lo-a.lo)/a.w)), 0), a.n-1)
}

// rankView is the data of pages/rank.html.
type rankView struct {
	Form    queryForm
	Table   table
	Summary string
}

func (s *Server) rankPage(w http.ResponseWriter, r *http.Request) {
	q := r.URL.Query()
	n, err := s.names(r.Context())
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	metric, err := n.metric(q)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	g, err := goal(q, metric)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	src, err := conditions(q)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	pk, err := lab.TwinSamples(r.Context(), s.log, store.Filter{Where: where(q)}, metric, n.Params, src)
	if err != nil {
		s.answerError(w, r, err)
		return
	}
	m, _ := store.MetricByName(metric)
	res := store.Rank(pk.Samples, metric, n.Params, g, m.LowerBetter)
	logged := map[string]int{}
	for i, p := range n.Params {
		logged[p] = pk.PerParam[i]
	}
	v := rankView{Form: form(q, n, metric, nil),
		Summary: fmt.Sprintf("%s: good means %s; %d runs; %s", metric, res.Goal, len(pk.Samples), pk.Line())}
	v.Table = table{Header: []string{"parameter", "rho", "runs", "logged", "good", "good range", "rest range"},
		Numeric: []bool{false, true, true, true, true, false, false}}
	for _, row := range res.Rows {
		rho := "constant"
		if !math.IsNaN(row.Rho) {
			rho = strconv.FormatFloat(row.Rho, 'f', 3, 64)
		}
		v.Table.Rows = append(v.Table.Rows, []string{row.Param, rho, strconv.Itoa(row.N), strconv.Itoa(logged[row.Param]),
			strconv.Itoa(row.Good), valueRange(row.GoodMin, row.GoodMax), valueRange(row.RestMin, row.RestMax)})
	}
	s.render(w, r, http.StatusOK, "rank", "Ranked parameters", v)
}

func valueRange(lo, hi float64) string {
	if math.IsNaN(lo) {
		return ""
	}
	return chart.FormatValue(lo) + " – " + chart.FormatValue(hi)
}
