package web

import (
	"context"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
	"github.com/foilrun/foilrun/store/sqlite"
	"github.com/foilrun/foilrun/store/storetest"
)

// BenchmarkServe times the server's side of the two busiest pages over
// the store's 100,000-run benchmark log (storetest.BenchBundle), on each
// back end: /runs (the newest 100, the counts), /runs with a two-condition
// filter, and one run's page. The log is built once per back end, not
// timed; PostgreSQL runs when .ci/postgres's environment is set.
//
//	go test -run '^$' -bench Serve -benchtime 20x ./cmd/foilrun/internal/web
func BenchmarkServe(b *testing.B) {
	ctx := context.Background()
	open := map[string]func(b *testing.B) store.RunLog{
		"sqlite": func(b *testing.B) store.RunLog {
			l, err := sqlite.Open(ctx, filepath.Join(b.TempDir(), "runs.db"))
			if err != nil {
				b.Fatal(err)
			}
			return l
		},
		"postgres": func(b *testing.B) store.RunLog {
			u := os.Getenv(postgresEnv)
			if u == "" {
				b.Skipf("%s is not set: source .ci/postgres to benchmark PostgreSQL too", postgresEnv)
			}
			l, err := postgres.Open(ctx, pgSchema(b, u))
			if err != nil {
				b.Fatal(err)
			}
			return l
		},
	}
	for _, backend := range []string{"sqlite", "postgres"} {
		b.Run(backend, func(b *testing.B) {
			l := open[backend](b)
			b.Cleanup(func() { l.Close() })
			storetest.Backend(b, l).SetClock(storetest.BenchNow)
			if _, err := l.Import(ctx, storetest.BenchBundle(), nil); err != nil {
				b.Fatal(err)
			}
			s, err := New(Config{Log: l, Files: b.TempDir()})
			if err != nil {
				b.Fatal(err)
			}
			h := s.Handler()
			mid, err := l.List(ctx, store.Filter{Offset: storetest.BenchRuns / 2, Limit: 1})
			if err != nil || len(mid) == 0 {
				b.Fatalf("no run in the middle of the benchmark log: %v", err)
			}
			pages := []struct{ name, path string }{
				{"runs", "/runs"},
				{"runs_where2", "/runs?where=" + url.QueryEscape("growth_temperature_c >= 1000 and coverage > 0.9") + "&metric=coverage"},
				{"run", "/runs/" + mid[0].Code},
			}
			for _, p := range pages {
				b.Run(p.name, func(b *testing.B) {
					for b.Loop() {
						w := httptest.NewRecorder()
						h.ServeHTTP(w, httptest.NewRequest("GET", p.path, nil))
						if w.Code != http.StatusOK {
							b.Fatalf("GET %s: %d %s", p.path, w.Code, w.Body.String())
						}
					}
				})
			}
		})
	}
}
