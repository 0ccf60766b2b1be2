package web

import (
	"context"
	"encoding/xml"
	"errors"
	"html"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/store"
)

// analysisRuns is how many generated runs the analysis tests log: enough
// for several bins and a rank, few enough to stay fast.
const analysisRuns = 40

func TestAnalysisRoutes(t *testing.T) { backends(t, testAnalysisRoutes) }

func testAnalysisRoutes(t *testing.T) {
	l, _ := testLog(t, analysisRuns)
	srv, c := testServer(t, l, Config{})
	q := url.QueryEscape
	// The figures' own policy is checked in TestFigureCSP.
	checkRoutes(t, srv, c, "", []route{
		{"best", "GET", "/best", 200, "<h1>Which settings gave good results"},
		{"best by stored names", "GET", "/best?x=growth_temperature_c&y=h2_flow_sccm&bins=3&min=50%25", 200, "share ≥ 0.5"},
		{"best old metric spelling", "GET", "/best?metric=density", 400, "nuclei_density"},
		{"best unknown metric", "GET", "/best?metric=sparkle", 400, "sparkle"},
		{"best one parameter twice", "GET", "/best?x=temperature&y=temperature", 400, "choose two parameters"},
		{"best unknown parameter", "GET", "/best?x=colour", 400, "colour"},
		{"best no bins", "GET", "/best?bins=0", 400, "bins="},
		{"best too many bins", "GET", "/best?bins=31", 400, "from 1 to 30"},
		{"best bad minimum", "GET", "/best?min=lots", 400, "min="},
		{"best bad filter", "GET", "/best?where=" + q("coverage >"), 400, "col 11: unexpected end of filter"},
		{"best heat map", "GET", "/best.svg", 200, "<svg"},
		{"best heat map refuses what the page refuses", "GET", "/best.svg?bins=0", 400, "bins="},
		{"rank", "GET", "/rank", 200, "<h1>Parameters ranked"},
		{"rank with a goal and a filter", "GET", "/rank?min=0.5&where=" + q("growth_temperature_c >= 900"), 200, "good means"},
		{"rank unknown metric", "GET", "/rank?metric=sparkle", 400, "sparkle"},
		{"rank bad conditions", "GET", "/rank?conditions=imagined", 400, "imagined"},
		{"best by POST", "POST", "/best", 405, ""},
		{"rank by POST", "POST", "/rank", 405, ""},
	})
}

var (
	tbodyRe = regexp.MustCompile(`(?s)<table class="analysis">.*?<tbody>(.*?)</tbody>`)
	rowRe   = regexp.MustCompile(`(?s)<tr>(.*?)</tr>`)
	cellRe  = regexp.MustCompile(`(?s)<td[^>]*>(.*?)</td>`)
)

// tableRows are the cells of each row of the page's analysis table.
func tableRows(t *testing.T, page string) [][]string {
	t.Helper()
	m := tbodyRe.FindStringSubmatch(page)
	if m == nil {
		t.Fatal("the page has no analysis table")
	}
	var out [][]string
	for _, r := range rowRe.FindAllStringSubmatch(m[1], -1) {
		var cells []string
		for _, c := range cellRe.FindAllStringSubmatch(r[1], -1) {
			cells = append(cells, html.UnescapeString(c[1]))
		}
		out = append(out, cells)
	}
	return out
}

func TestBestTableIsTheLibrarys(t *testing.T) { backends(t, testBestTableIsTheLibrarys) }

// testBestTableIsTheLibrarys checks /best's rows against store.Best on
// the same log (the code `runs best` runs), bin by bin.
func testBestTableIsTheLibrarys(t *testing.T) {
	l, _ := testLog(t, analysisRuns)
	srv, c := testServer(t, l, Config{})
	by := []string{"growth_temperature_c", "ch4_flow_sccm"}
	pk, err := lab.TwinSamples(context.Background(), l, store.Filter{}, "coverage", by, lab.Logged)
	if err != nil {
		t.Fatal(err)
	}
	bt := store.Best(pk.Samples, "coverage", by, 4, store.NoGoal())
	status, page := get(t, c, srv.URL+"/best?metric=coverage&x=temperature&y=CH4&bins=4")
	if status != 200 {
		t.Fatalf("/best: %d", status)
	}
	rows := tableRows(t, page)
	if len(rows) != len(bt.Bins) {
		t.Fatalf("/best shows %d bins, store.Best gives %d", len(rows), len(bt.Bins))
	}
	total := 0
	for i, bin := range bt.Bins {
		total += bin.Count
		if got, want := rows[i][2], strconv.Itoa(bin.Count); got != want {
			t.Errorf("bin %d: %s runs, want %s", i, got, want)
		}
		if got, want := rows[i][3], metricUnit("coverage").format(bin.Mean); got != want {
			t.Errorf("bin %d: mean %s, want %s", i, got, want)
		}
	}
	if total != analysisRuns {
		t.Errorf("the bins hold %d runs, want all %d", total, analysisRuns)
	}

	// The heat map is well-formed SVG with the runs marked on it.
	_, svg := get(t, c, srv.URL+"/best.svg?metric=coverage&x=temperature&y=CH4&bins=4")
	dec := xml.NewDecoder(strings.NewReader(svg))
	for {
		_, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("the heat map is not well-formed XML: %v", err)
		}
	}
	if !strings.Contains(svg, "logged runs") {
		t.Errorf("the heat map has no legend entry for the logged runs")
	}
}

func TestRankTableIsTheLibrarys(t *testing.T) { backends(t, testRankTableIsTheLibrarys) }

// testRankTableIsTheLibrarys checks /rank's order and rho against
// store.Rank over every parameter the log holds.
func testRankTableIsTheLibrarys(t *testing.T) {
	l, _ := testLog(t, analysisRuns)
	s, err := New(Config{Log: l, Files: t.TempDir()})
	if err != nil {
		t.Fatal(err)
	}
	n, err := s.names(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	pk, err := lab.TwinSamples(context.Background(), l, store.Filter{}, "coverage", n.Params, lab.Logged)
	if err != nil {
		t.Fatal(err)
	}
	res := store.Rank(pk.Samples, "coverage", n.Params, store.NoGoal(), false)
	srv, c := testServer(t, l, Config{})
	_, page := get(t, c, srv.URL+"/rank?metric=coverage")
	rows := tableRows(t, page)
	if len(rows) != len(res.Rows) || len(rows) < 3 {
		t.Fatalf("/rank shows %d parameters, store.Rank gives %d (want at least 3)", len(rows), len(res.Rows))
	}
	for i, want := range res.Rows {
		if rows[i][0] != want.Param {
			t.Errorf("rank %d: %s, want %s", i+1, rows[i][0], want.Param)
		}
		if want.Rho == want.Rho && rows[i][1] != strconv.FormatFloat(want.Rho, 'f', 3, 64) {
			t.Errorf("rank %d (%s): rho %s, want %.3f", i+1, want.Param, rows[i][1], want.Rho)
		}
	}
}

// serve answers a GET of path through h and returns the status.
func serve(h http.Handler, path string) int {
	w := httptest.NewRecorder()
	h.ServeHTTP(w, httptest.NewRequest("GET", path, nil))
	return w.Code
}

// formatValue is how the analysis pages write a number.
func formatValue(v float64) string { return chart.FormatValue(v) }

func TestFigureCSP(t *testing.T) { backends(t, testFigureCSP) }

// testFigureCSP: an SVG figure may use its style attributes and data:
// images and nothing else (no script source at all); pages keep
// default-src 'self'.
func testFigureCSP(t *testing.T) {
	l, _ := testLog(t, analysisRuns)
	srv, c := testServer(t, l, Config{})
	for _, tt := range []struct{ path, csp string }{
		{"/best.svg", figureCSP},
		{"/window.svg", figureCSP},
		{"/best", "default-src 'self'"},
		{"/window", "default-src 'self'"},
	} {
		resp, err := c.Get(srv.URL + tt.path)
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		if resp.StatusCode != 200 {
			t.Errorf("%s: %d", tt.path, resp.StatusCode)
		}
		if got := resp.Header.Get("Content-Security-Policy"); got != tt.csp {
			t.Errorf("%s: Content-Security-Policy %q, want %q", tt.path, got, tt.csp)
		}
		// A figure's policy starts from nothing allowed and never allows a
		// script source.
		if strings.HasSuffix(tt.path, ".svg") && (!strings.HasPrefix(tt.csp, "default-src 'none';") || strings.Contains(tt.csp, "script")) {
			t.Errorf("%s: the figure policy %q allows more than its styles and data: images", tt.path, tt.csp)
		}
	}
}
