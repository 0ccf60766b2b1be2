package web

import (
	"context"
	"errors"
	"io"
	"mime/multipart"
	"net/http"
	"net/http/cookiejar"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/postgres"
	"github.com/foilrun/foilrun/store/sqlite"
	"github.com/foilrun/foilrun/store/storetest"
)

// backends runs f once per store back end, as the subtests "sqlite" and
// "postgres"; testLog opens the one the subtest names. PostgreSQL runs
// when .ci/postgres's environment is set, and must under CI=true. Each
// subtest has a log and a server of its own, so the test and both of its
// subtests run in parallel with the others.
func backends(t *testing.T, f func(t *testing.T)) {
	t.Parallel()
	t.Run("sqlite", func(t *testing.T) {
		t.Parallel()
		f(t)
	})
	t.Run("postgres", func(t *testing.T) {
		t.Parallel()
		if os.Getenv(postgresEnv) == "" {
			if os.Getenv("CI") == "true" {
				t.Fatalf("%s is not set and CI=true: source .ci/postgres first", postgresEnv)
			}
			t.Skipf("%s is not set: source .ci/postgres from the repository root to run this back end too", postgresEnv)
		}
		f(t)
	})
}

// testLog is a run log with n generated runs, on the back end named by
// the test's backends subtest (SQLite in t.TempDir, or PostgreSQL in a
// schema of its own); it returns the log and the runs' codes, oldest
// first.
func testLog(t *testing.T, n int) (store.RunLog, []string) {
	t.Helper()
	ctx := context.Background()
	var l store.RunLog
	var err error
	if parts := strings.Split(t.Name(), "/"); len(parts) > 1 && parts[1] == "postgres" {
		l, err = postgres.Open(ctx, pgSchema(t, os.Getenv(postgresEnv)))
	} else {
		l, err = sqlite.Open(ctx, filepath.Join(t.TempDir(), "runs.db"))
	}
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { l.Close() })
	var codes []string
	for i := range n {
		code, err := l.CreateRun(ctx, storetest.GenRecord(i, ""), nil)
		if err != nil {
			t.Fatal(err)
		}
		codes = append(codes, code)
	}
	return l, codes
}

// testServer serves l with cfg's other settings; it returns the test
// server and a client that keeps cookies.
func testServer(t *testing.T, l store.RunLog, cfg Config) (*httptest.Server, *http.Client) {
	t.Helper()
	cfg.Log = l
	if cfg.Files == "" {
		cfg.Files = t.TempDir()
	}
	s, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(s.Handler())
	t.Cleanup(srv.Close)
	jar, _ := cookiejar.New(nil)
	c := &http.Client{Jar: jar, CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	return srv, c
}

func get(t *testing.T, c *http.Client, u string) (int, string) {
	t.Helper()
	resp, err := c.Get(u)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

var csrfField = regexp.MustCompile(`name="csrf" value="([^"]+)"`)

// csrf loads a run page and returns the token of its forms.
func csrf(t *testing.T, c *http.Client, u string) string {
	t.Helper()
	_, body := get(t, c, u)
	m := csrfField.FindStringSubmatch(body)
	if m == nil {
		t.Fatalf("no csrf field on %s", u)
	}
	return m[1]
}

func TestRoutes(t *testing.T) { backends(t, testRoutes) }

func testRoutes(t *testing.T) {
	l, codes := testLog(t, 3)
	srv, c := testServer(t, l, Config{})
	checkRoutes(t, srv, c, "default-src 'self'", []route{
		{"runs", "GET", "/runs", 200, codes[2]},
		{"root goes to runs", "GET", "/", 303, ""},
		{"runs filtered", "GET", "/runs?where=" + url.QueryEscape("growth_temperature_c >= 900"), 200, codes[0]},
		{"metric columns with a filter", "GET", "/runs?metric=coverage&where=" + url.QueryEscape("growth_temperature_c >= 900"), 200, `<th class="num">coverage</th>`},
		{"where error with its column", "GET", "/runs?where=" + url.QueryEscape("coverage >"), 400, `id="where-error">where &#34;coverage &gt;&#34;: col 11:`},
		{"csv download", "GET", "/runs.csv", 200, codes[1]},
		{"json download", "GET", "/runs.json", 200, `"` + codes[1] + `"`},
		{"one run", "GET", "/runs/" + codes[0], 200, "<h1>" + codes[0]},
		{"no plan without a recipe file", "GET", "/runs/" + codes[0] + "/plan.svg", 404, "without its recipe file"},
		{"unknown run", "GET", "/runs/NO-SUCH-RUN", 404, "NO-SUCH-RUN"},
		{"wrong method", "DELETE", "/runs", 405, ""},
		{"note by GET", "GET", "/runs/" + codes[0] + "/notes", 405, ""},
		{"stylesheet", "GET", "/static/style.css", 200, "{"},
		{"no such static file", "GET", "/static/nothing.css", 404, ""},
	})
}

// route is one request of a route table and what its answer must hold.
type route struct {
	name, method, path string
	want               int
	body               string // a substring the answer must hold
}

// checkRoutes sends each request of routes to srv with c and checks the
// status and body; with csp not empty, also the Content-Security-Policy.
func checkRoutes(t *testing.T, srv *httptest.Server, c *http.Client, csp string, routes []route) {
	t.Helper()
	for _, tt := range routes {
		t.Run(tt.name, func(t *testing.T) {
			req, _ := http.NewRequest(tt.method, srv.URL+tt.path, nil)
			resp, err := c.Do(req)
			if err != nil {
				t.Fatal(err)
			}
			defer resp.Body.Close()
			b, _ := io.ReadAll(resp.Body)
			if resp.StatusCode != tt.want {
				t.Fatalf("%s %s: got %d, want %d\n%s", tt.method, tt.path, resp.StatusCode, tt.want, b)
			}
			if !strings.Contains(string(b), tt.body) {
				t.Errorf("%s %s: the answer lacks %q:\n%.2000s", tt.method, tt.path, tt.body, b)
			}
			if got := resp.Header.Get("Content-Security-Policy"); csp != "" && got != csp {
				t.Errorf("%s %s: Content-Security-Policy %q, want %q", tt.method, tt.path, got, csp)
			}
		})
	}
}

// TestStaticTraversal asks for files outside the embedded assets with
// the dots sent as they are (no client-side cleaning).
func TestStaticTraversal(t *testing.T) { backends(t, testStaticTraversal) }

func testStaticTraversal(t *testing.T) {
	l, _ := testLog(t, 1)
	srv, _ := testServer(t, l, Config{})
	for _, p := range []string{"/static/../../etc/passwd", "/static/%2e%2e/%2e%2e/etc/passwd", "/static/..%2f..%2fetc/passwd"} {
		resp, err := http.Get(srv.URL + p)
		if err != nil {
			t.Fatal(err)
		}
		b, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		if resp.StatusCode < 400 || strings.Contains(string(b), "root:") {
			t.Errorf("%s: got %d; want a refusal (4xx) and no file", p, resp.StatusCode)
		}
	}
}

func notes(t *testing.T, l store.RunLog, code string) []store.Note {
	t.Helper()
	rec, err := l.Record(context.Background(), code)
	if err != nil {
		t.Fatal(err)
	}
	return rec.Notes
}

func TestNotesCSRFAndEscaping(t *testing.T) { backends(t, testNotesCSRFAndEscaping) }

func testNotesCSRFAndEscaping(t *testing.T) {
	l, codes := testLog(t, 1)
	srv, c := testServer(t, l, Config{})
	page := srv.URL + "/runs/" + codes[0]
	token := csrf(t, c, page)
	before := len(notes(t, l, codes[0]))

	tests := []struct {
		name  string
		form  url.Values
		want  int
		added int
	}{
		{"no token", url.Values{"note": {"x"}}, 403, 0},
		{"wrong token", url.Values{"note": {"x"}, "csrf": {strings.Repeat("0", len(token))}}, 403, 0},
		{"script note", url.Values{"note": {"<script>alert(1)</script>"}, "csrf": {token}, "operator": {"ana"}}, 303, 1},
		{"empty note", url.Values{"note": {"  "}, "csrf": {token}}, 400, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			n := len(notes(t, l, codes[0]))
			resp, err := c.PostForm(page+"/notes", tt.form)
			if err != nil {
				t.Fatal(err)
			}
			resp.Body.Close()
			if resp.StatusCode != tt.want {
				t.Fatalf("got %d, want %d", resp.StatusCode, tt.want)
			}
			if got := len(notes(t, l, codes[0])) - n; got != tt.added {
				t.Errorf("notes added: got %d, want %d", got, tt.added)
			}
		})
	}
	_, body := get(t, c, page)
	if strings.Contains(body, "<script>alert(1)") || !strings.Contains(body, "&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Errorf("the <script> note is not shown escaped")
	}
	if got := len(notes(t, l, codes[0])); got != before+1 {
		t.Errorf("notes: got %d, want %d", got, before+1)
	}
}

func TestReadOnlyRefusesWrites(t *testing.T) { backends(t, testReadOnlyRefusesWrites) }

func testReadOnlyRefusesWrites(t *testing.T) {
	l, codes := testLog(t, 1)
	srv, c := testServer(t, l, Config{ReadOnly: true})
	page := srv.URL + "/runs/" + codes[0]
	_, body := get(t, c, page)
	if strings.Contains(body, `id="note-form"`) {
		t.Errorf("a read-only run page shows the note form")
	}
	before := len(notes(t, l, codes[0]))
	for _, path := range []string{"/notes", "/outcomes", "/micrographs"} {
		resp, err := c.PostForm(page+path, url.Values{"note": {"x"}, "outcome": {"coverage=90%"}})
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		if resp.StatusCode != http.StatusForbidden {
			t.Errorf("POST %s on a read-only server: got %d, want 403", path, resp.StatusCode)
		}
	}
	if got := len(notes(t, l, codes[0])); got != before {
		t.Errorf("a read-only server wrote notes: %d → %d", before, got)
	}
}

func TestTokens(t *testing.T) { backends(t, testTokens) }

func testTokens(t *testing.T) {
	l, _ := testLog(t, 1)
	secret := strings.Repeat("ab12", 8) // MinTokenLength characters
	srv, c := testServer(t, l, Config{Tokens: []Token{{Name: "ana", Secret: secret}}})
	if code, _ := get(t, c, srv.URL+"/runs"); code != http.StatusUnauthorized {
		t.Errorf("/runs without a session: got %d, want 401", code)
	}
	if code, _ := get(t, c, srv.URL+"/login?token="+strings.Repeat("0", len(secret))); code != http.StatusUnauthorized {
		t.Errorf("a wrong token: got %d, want 401", code)
	}
	code, _ := get(t, c, srv.URL+"/login?token="+secret)
	if code != http.StatusSeeOther {
		t.Fatalf("the right token: got %d, want 303", code)
	}
	u, _ := url.Parse(srv.URL)
	var cookie *http.Cookie
	for _, ck := range c.Jar.Cookies(u) {
		cookie = ck
	}
	if cookie == nil {
		t.Fatal("no session cookie after login")
	}
	if code, body := get(t, c, srv.URL+"/runs"); code != http.StatusOK || !strings.Contains(body, "ana") {
		t.Errorf("/runs with the session: got %d (name shown: %v), want 200", code, strings.Contains(body, "ana"))
	}
}

// countingReader is an endless upload that counts what the server read.
type countingReader struct{ n int64 }

func (r *countingReader) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = 'x'
	}
	r.n += int64(len(p))
	return len(p), nil
}

func TestUploadTooLarge(t *testing.T) { backends(t, testUploadTooLarge) }

func testUploadTooLarge(t *testing.T) {
	l, codes := testLog(t, 1)
	const limit = 1 << 20
	s, err := New(Config{Log: l, Files: t.TempDir(), MaxUpload: limit})
	if err != nil {
		t.Fatal(err)
	}
	h := s.Handler()
	// a page first, for the session and its CSRF token
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest("GET", "/runs/"+codes[0], nil))
	m := csrfField.FindStringSubmatch(rec.Body.String())
	if m == nil {
		t.Fatal("no csrf field on the run page")
	}
	cookies := rec.Result().Cookies()
	before, err := l.Record(context.Background(), codes[0])
	if err != nil {
		t.Fatal(err)
	}

	const size = 100 << 20 // 100 MB
	tests := []struct {
		name   string
		length int64 // the Content-Length sent; -1: none
	}{
		{"declared 100 MB", size},
		{"undeclared", -1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pr, pw := io.Pipe()
			mw := multipart.NewWriter(pw)
			body := &countingReader{}
			go func() {
				mw.WriteField("csrf", m[1])
				fw, err := mw.CreateFormFile("micrograph", "big.png")
				if err == nil {
					_, err = io.Copy(fw, io.LimitReader(body, size))
				}
				pw.CloseWithError(errors.Join(err, mw.Close()))
			}()
			req := httptest.NewRequest("POST", "/runs/"+codes[0]+"/micrographs", pr)
			req.ContentLength = tt.length
			req.Header.Set("Content-Type", mw.FormDataContentType())
			for _, ck := range cookies {
				req.AddCookie(ck)
			}
			rec := httptest.NewRecorder()
			h.ServeHTTP(rec, req)
			pr.CloseWithError(errors.New("done"))
			if rec.Code != http.StatusRequestEntityTooLarge {
				t.Errorf("got %d, want 413", rec.Code)
			}
			// the slack is the pipe's and the multipart reader's buffering:
			// far below the 100 MB sent, so a server that read it all fails
			if body.n > limit+(1<<20) {
				t.Errorf("the server read %d bytes of a %d-byte upload with a %d-byte limit", body.n, size, limit)
			}
		})
	}
	after, err := l.Record(context.Background(), codes[0])
	if err != nil || len(after.Outcomes) != len(before.Outcomes) || len(after.Attachments) != len(before.Attachments) {
		t.Errorf("a refused upload changed the run: outcomes %d → %d, attachments %d → %d, %v",
			len(before.Outcomes), len(after.Outcomes), len(before.Attachments), len(after.Attachments), err)
	}
}
