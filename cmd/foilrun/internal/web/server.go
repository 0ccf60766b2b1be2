package web

import (
	"bytes"
	"context"
	"embed"
	"errors"
	"fmt"
	"html/template"
	"io"
	"io/fs"
	"net"
	"net/http"
	"path"
	"strings"
	"sync"
	"time"

	"github.com/foilrun/foilrun/store"
)

//go:embed pages/*.html
var pageFiles embed.FS

//go:embed static
var staticFiles embed.FS

// Config is what New needs to serve a run log.
type Config struct {
	// Log is the run log served; the caller closes it.
	Log store.RunLog
	// ReadOnly refuses every POST with 403 and hides the forms.
	ReadOnly bool
	// Tokens are the people who may use the server (LoadTokens); none:
	// no login, for a loopback address only.
	Tokens []Token
	// Files is the folder uploaded micrographs and their overlays are
	// kept in, by content hash; it is made on first upload.
	Files string
	// MaxUpload is the largest micrograph upload in bytes (0:
	// DefaultMaxUpload).
	MaxUpload int64
	// Now is the clock of notes and outcomes (nil: time.Now).
	Now func() time.Time
	// RequestLog receives one line per request (method, path, status,
	// duration); nil: none.
	RequestLog io.Writer
}

// DefaultMaxUpload is the default size limit of a micrograph upload.
const DefaultMaxUpload = 64 << 20

// Server serves the pages. Make one with New.
type Server struct {
	log      store.RunLog
	readOnly bool
	tokens   []Token
	files    string
	maxBody  int64
	now      func() time.Time
	reqLog   io.Writer
	logMu    sync.Mutex
	sessions *sessions
	pages    map[string]*template.Template
	fits     fitCache   // /fit's latest fits
	maps     windowMaps // /window's latest maps
}

// New returns the server of cfg, with its pages parsed.
func New(cfg Config) (*Server, error) {
	if cfg.Log == nil {
		return nil, errors.New("serve: no run log")
	}
	s := &Server{log: cfg.Log, readOnly: cfg.ReadOnly, tokens: cfg.Tokens, files: cfg.Files,
		maxBody: cfg.MaxUpload, now: cfg.Now, reqLog: cfg.RequestLog, sessions: newSessions()}
	if s.maxBody <= 0 {
		s.maxBody = DefaultMaxUpload
	}
	if s.now == nil {
		s.now = time.Now
	}
	pages, err := parsePages()
	if err != nil {
		return nil, err
	}
	s.pages = pages
	return s, nil
}

// parsePages parses every page of pages/ together with the layout and the
// shared pieces (pages/partial_*.html), one
// template set per page, named by its file name without .html.
func parsePages() (map[string]*template.Template, error) {
	names, err := fs.Glob(pageFiles, "pages/*.html")
	if err != nil {
		return nil, err
	}
	out := map[string]*template.Template{}
	for _, n := range names {
		page := strings.TrimSuffix(path.Base(n), ".html")
		if page == "layout" || strings.HasPrefix(page, "partial_") {
			continue
		}
		t, err := template.New("layout.html").Funcs(funcs).ParseFS(pageFiles, "pages/layout.html", "pages/partial_*.html", n)
		if err != nil {
			return nil, fmt.Errorf("page %s: %w", page, err)
		}
		out[page] = t
	}
	return out, nil
}

// Handler returns the server's routes wrapped in the request log, the
// security headers, the path check and the session check.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	static, _ := fs.Sub(staticFiles, "static") // the directory is embedded
	mux.Handle("GET /static/", http.StripPrefix("/static/", http.FileServerFS(static)))
	mux.HandleFunc("GET /login", s.login)
	mux.HandleFunc("POST /login", s.login)
	mux.HandleFunc("GET /{$}", func(w http.ResponseWriter, r *http.Request) {
		http.Redirect(w, r, "/runs", http.StatusSeeOther)
	})
	mux.HandleFunc("GET /runs", s.runs)
	mux.HandleFunc("GET /runs.csv", s.runsDownload)
	mux.HandleFunc("GET /runs.json", s.runsDownload)
	s.runRoutes(mux)
	s.analysisRoutes(mux)
	return s.logged(secured(s.authenticated(s.themedMisses(mux))))
}

// themedMisses serves what mux has no handler for with the error page: a
// path no route has is 404, a path a route has for another method is 405
// with the Allow header the mux gives.
func (s *Server) themedMisses(mux *http.ServeMux) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h, pattern := mux.Handler(r)
		if pattern != "" {
			mux.ServeHTTP(w, r)
			return
		}
		probe := &headerProbe{header: http.Header{}}
		h.ServeHTTP(probe, r)
		if probe.status == http.StatusMethodNotAllowed {
			w.Header().Set("Allow", probe.header.Get("Allow"))
			s.fail(w, r, http.StatusMethodNotAllowed, fmt.Errorf("%s is not taken at %s", r.Method, r.URL.Path))
			return
		}
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("no page at %s", r.URL.Path))
	})
}

// headerProbe records the status and headers the mux's own miss
// handler would send, and drops its body.
type headerProbe struct {
	header http.Header
	status int
}

func (p *headerProbe) Header() http.Header         { return p.header }
func (p *headerProbe) Write(b []byte) (int, error) { return len(b), nil }
func (p *headerProbe) WriteHeader(code int)        { p.status = code }

// view is what every page's template sees.
type view struct {
	Title    string
	User     string // the person logged in, "" without tokens
	CSRF     string // the form token of the session
	ReadOnly bool
	Nav      []navItem
	Data     any
}

// navItem is one link of the nav bar.
type navItem struct {
	Name, Path string
	Current    bool
}

// nav is the nav bar: every page a person starts from.
var nav = []navItem{{"Runs", "/runs", false}, {"Best settings", "/best", false}, {"Rank", "/rank", false}, {"Fit", "/fit", false}, {"Process window", "/window", false}}

// render executes pages/layout.html with pages/<page>.html, whose
// {{define "content"}} fills the page, and writes it with status. The
// templates see .Title .User .CSRF .ReadOnly .Nav and .Data (= data).
func (s *Server) render(w http.ResponseWriter, r *http.Request, status int, page, title string, data any) {
	t, ok := s.pages[page]
	if !ok {
		s.fail(w, r, http.StatusInternalServerError, fmt.Errorf("no page template %q", page))
		return
	}
	v := view{Title: title, ReadOnly: s.readOnly, Data: data}
	if se, ok := s.sessions.fromRequest(r); ok {
		v.User, v.CSRF = se.user, se.csrf
	}
	for _, n := range nav {
		n.Current = r.URL.Path == n.Path || strings.HasPrefix(r.URL.Path, n.Path+"/")
		v.Nav = append(v.Nav, n)
	}
	var b bytes.Buffer
	if err := t.Execute(&b, v); err != nil {
		if page == "error" {
			http.Error(w, "page template: "+err.Error(), http.StatusInternalServerError)
			return
		}
		s.fail(w, r, http.StatusInternalServerError, fmt.Errorf("page %s: %w", page, err))
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.WriteHeader(status)
	w.Write(b.Bytes())
}

// errorData is what the error page shows.
type errorData struct {
	Status  int
	Text    string
	Message string
}

// fail writes the error page with the message of err and status.
func (s *Server) fail(w http.ResponseWriter, r *http.Request, status int, err error) {
	s.render(w, r, status, "error", http.StatusText(status), errorData{Status: status, Text: http.StatusText(status), Message: err.Error()})
}

// secured sets the security headers of every response and refuses a path
// with a ".." segment (400) before any route sees it.
func secured(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("Content-Security-Policy", "default-src 'self'")
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "same-origin")
		h.Set("X-Frame-Options", "DENY")
		if hasDotDot(r.URL.Path) || hasDotDot(r.URL.RawPath) {
			http.Error(w, "bad path: a path may not climb out with ..", http.StatusBadRequest)
			return
		}
		next.ServeHTTP(w, r)
	})
}

func hasDotDot(p string) bool {
	for _, seg := range strings.FieldsFunc(p, func(r rune) bool { return r == '/' || r == '\\' }) {
		if seg == ".." || strings.EqualFold(seg, "%2e%2e") {
			return true
		}
	}
	return false
}

// statusWriter remembers the status a handler wrote.
type statusWriter struct {
	http.ResponseWriter
	status int
}

func (w *statusWriter) WriteHeader(code int) {
	if w.status == 0 {
		w.status = code
	}
	w.ResponseWriter.WriteHeader(code)
}

func (w *statusWriter) Write(p []byte) (int, error) {
	if w.status == 0 {
		w.status = http.StatusOK
	}
	return w.ResponseWriter.Write(p)
}

// logged writes one line per request to the request log: method, path
// (never the query, which may hold a login token), status and duration.
func (s *Server) logged(next http.Handler) http.Handler {
	if s.reqLog == nil {
		return next
	}
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		start := time.Now()
		sw := &statusWriter{ResponseWriter: w}
		next.ServeHTTP(sw, r)
		if sw.status == 0 {
			sw.status = http.StatusOK
		}
		s.logf("%s %s %s %d %s", start.Format(time.RFC3339), r.Method, escapeLog(r.URL.Path), sw.status, time.Since(start).Round(time.Microsecond))
	})
}

// logf writes a line to the request log, if there is one.
func (s *Server) logf(format string, args ...any) {
	if s.reqLog == nil {
		return
	}
	s.logMu.Lock()
	defer s.logMu.Unlock()
	fmt.Fprintf(s.reqLog, format+"\n", args...)
}

// escapeLog quotes a path with spaces or control characters so that one
// request stays one line.
func escapeLog(p string) string {
	if strings.ContainsFunc(p, func(r rune) bool { return r <= ' ' || r == 0x7f }) {
		return fmt.Sprintf("%q", p)
	}
	return p
}

// Timeouts of the HTTP server: a slow client cannot hold a connection
// open (ReadHeader, Read), a stuck handler is cut off (Write), idle
// keep-alive connections close (Idle). Read and Write leave room for a
// micrograph upload and its measurement.
const (
	ReadHeaderTimeout = 10 * time.Second
	ReadTimeout       = 2 * time.Minute
	WriteTimeout      = 3 * time.Minute
	IdleTimeout       = 2 * time.Minute
	// ShutdownTimeout is how long Serve waits for requests in flight
	// once ctx is done.
	ShutdownTimeout = 10 * time.Second
)

// Serve serves h on ln until ctx is done (SIGINT, SIGTERM), then shuts
// down gracefully: no new connections, requests in flight get up to
// ShutdownTimeout to finish.
func Serve(ctx context.Context, ln net.Listener, h http.Handler) error {
	srv := &http.Server{Handler: h, ReadHeaderTimeout: ReadHeaderTimeout, ReadTimeout: ReadTimeout,
		WriteTimeout: WriteTimeout, IdleTimeout: IdleTimeout}
	done := make(chan error, 1)
	go func() { done <- srv.Serve(ln) }()
	select {
	case err := <-done:
		return err
	case <-ctx.Done():
	}
	sctx, cancel := context.WithTimeout(context.Background(), ShutdownTimeout)
	defer cancel()
	if err := srv.Shutdown(sctx); err != nil {
		return fmt.Errorf("shut down: %w", err)
	}
	if err := <-done; !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	return nil
}

// Loopback reports whether the listen address addr (host:port) is on the
// loopback interface only: localhost or a loopback IP. An empty host
// listens on every interface.
func Loopback(addr string) (bool, error) {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return false, err
	}
	if host == "localhost" {
		return true, nil
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback(), nil
}
