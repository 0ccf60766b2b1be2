package web

import (
	"context"
	"math"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/store"
)

// demoLog is a run log (on the subtest's back end) seeded with n demo
// runs: recipe and furnace snapshots, coverage and nuclei density from
// the model plus noise, so that a fit has something to fit.
func demoLog(t *testing.T, n int) store.RunLog {
	t.Helper()
	l, _ := testLog(t, 0)
	paths, err := demolab.Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	if err := demolab.Seed(context.Background(), l, paths, n); err != nil {
		t.Fatal(err)
	}
	return l
}

func TestFitPage(t *testing.T) { backends(t, testFitPage) }

// testFitPage checks /fit against the fit `foilrun fit` makes with its
// defaults on the same log (lab.Collect, kinetics.Fit), the cache, the
// parity figure and the refusals.
func testFitPage(t *testing.T) {
	l := demoLog(t, 24)
	ctx := context.Background()
	b, err := lab.NewRebuilder(l, "")
	if err != nil {
		t.Fatal(err)
	}
	both := lab.Metrics{Coverage: true, Density: true}
	col, err := lab.Collect(ctx, b, store.Filter{}, both, kinetics.DefaultParams(), lab.Logged)
	if err != nil {
		t.Fatal(err)
	}
	want, err := kinetics.Fit(col.Observations, kinetics.DefaultParams(), kinetics.FitSettings{Coverage: true, Density: true})
	if err != nil {
		t.Fatal(err)
	}

	s, err := New(Config{Log: l, Files: t.TempDir()})
	if err != nil {
		t.Fatal(err)
	}
	srv, c := testServer(t, l, Config{})
	direct := func(path string) (int, string) { return get(t, c, srv.URL+path) }
	status, page := direct("/fit")
	if status != 200 {
		t.Fatalf("/fit: %d\n%s", status, page)
	}
	rows := tableRows(t, page)
	if len(rows) != len(want.Estimates) {
		t.Fatalf("/fit shows %d estimates, the fit has %d", len(rows), len(want.Estimates))
	}
	for i, e := range want.Estimates {
		if !strings.HasPrefix(rows[i][0], e.Key) {
			t.Errorf("row %d is %q, want %s", i, rows[i][0], e.Key)
		}
		if e.Fixed || !e.Identifiable {
			continue
		}
		if got, want := rows[i][1], formatValue(e.Value); got != want {
			t.Errorf("%s: value %s, want %s", e.Key, got, want)
		}
		if got, want := rows[i][2], formatValue(e.SE); got != want || math.IsNaN(e.SE) {
			t.Errorf("%s: se %s, want %s", e.Key, got, want)
		}
	}

	// The server's own cache: the page, a reload and the figure fit once.
	h := s.Handler()
	for _, path := range []string{"/fit", "/fit", "/fit/parity.svg"} {
		if code := serve(h, path); code != 200 {
			t.Fatalf("%s: %d", path, code)
		}
	}
	if s.fits.fitted != 1 {
		t.Errorf("the page, a reload and its figure fitted %d times, want once", s.fits.fitted)
	}
	if code := serve(h, "/fit?metric=coverage"); code != 200 || s.fits.fitted != 2 {
		t.Errorf("another metric: %d after %d fits, want 200 after a second fit", code, s.fits.fitted)
	}
	if err := l.AddOutcomes(ctx, col.Observations[0].Label, []store.Outcome{{Metric: "coverage", Value: 0.5, Unit: "1"}}); err != nil {
		t.Fatal(err)
	}
	if serve(h, "/fit"); s.fits.fitted != 3 {
		t.Errorf("after a new outcome /fit fitted %d times in all, want a third fit", s.fits.fitted)
	}

	for _, tt := range []struct {
		path string
		want int
		body string
	}{
		{"/fit/parity.svg", 200, "<svg"},
		{"/fit?metric=domain_size", 400, "want coverage, nuclei_density or both"},
		{"/fit?conditions=imagined", 400, "imagined"},
	} {
		if status, body := direct(tt.path); status != tt.want || !strings.Contains(body, tt.body) {
			t.Errorf("%s: got %d, want %d with %q", tt.path, status, tt.want, tt.body)
		}
	}
}

func TestFitPageWithoutRuns(t *testing.T) { backends(t, testFitPageWithoutRuns) }

// testFitPageWithoutRuns: a log with nothing to fit says so (200, a
// message), and its parity figure is 404.
func testFitPageWithoutRuns(t *testing.T) {
	l, _ := testLog(t, 3) // generated runs have no recipe snapshot
	srv, c := testServer(t, l, Config{})
	status, page := get(t, c, srv.URL+"/fit")
	if status != 200 || !strings.Contains(page, `id="fit-message"`) {
		t.Errorf("/fit on a log without fittable runs: %d, want 200 with a message\n%s", status, page)
	}
	if status, _ := get(t, c, srv.URL+"/fit/parity.svg"); status != 404 {
		t.Errorf("/fit/parity.svg without a fit: %d, want 404", status)
	}
}
