package web

import (
	"bufio"
	"bytes"
	"crypto/hmac"
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/hex"
	"errors"
	"fmt"
	"net/http"
	"os"
	"strings"
	"sync"
	"time"
)

// Token is one person allowed to use the server: a name and a secret.
type Token struct {
	Name   string
	Secret string
}

// MinTokenLength is the shortest token LoadTokens accepts, in
// characters: 32 hex digits are 128 random bits.
const MinTokenLength = 32

// ErrTokens is wrapped by every error of a tokens file.
var ErrTokens = errors.New("bad tokens file")

// TokenFileError is a tokens file refused, with what to do about it.
type TokenFileError struct {
	Msg  string
	hint string
}

func (e *TokenFileError) Error() string { return e.Msg }

// Hint says how to fix the file.
func (e *TokenFileError) Hint() string { return e.hint }

// Unwrap returns ErrTokens.
func (e *TokenFileError) Unwrap() error { return ErrTokens }

// LoadTokens reads a tokens file: one person per line, "name token",
// blank lines and lines starting with # ignored. The file must not be
// readable or writable by group or others, every token must have at least
// MinTokenLength characters, and names and tokens must be unique.
func LoadTokens(path string) ([]Token, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file: %v", err), hint: "give --tokens FILE with one \"name token\" line per person"}
	}
	if !st.Mode().IsRegular() {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file %q is not a regular file", path), hint: "give a regular file"}
	}
	if perm := st.Mode().Perm(); perm&0o077 != 0 {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file %q has mode %04o: group or others may read it", path, perm),
			hint: fmt.Sprintf("run: chmod 600 %s", path)}
	}
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file: %v", err)}
	}
	return parseTokens(path, data)
}

// parseTokens reads the lines of a tokens file named path.
func parseTokens(path string, data []byte) ([]Token, error) {
	var out []Token
	names, secrets := map[string]int{}, map[string]int{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		f := strings.Fields(line)
		if len(f) != 2 {
			return nil, &TokenFileError{Msg: fmt.Sprintf("%s:%d: want \"name token\", got %d fields", path, n, len(f)),
				hint: "write one person per line: a name without spaces, a space, and the token"}
		}
		name, secret := f[0], f[1]
		if len(secret) < MinTokenLength {
			return nil, &TokenFileError{Msg: fmt.Sprintf("%s:%d: the token of %q has %d characters, want at least %d", path, n, name, len(secret), MinTokenLength),
				hint: "make one with: head -c 24 /dev/urandom | base64"}
		}
		if prev, dup := names[name]; dup {
			return nil, &TokenFileError{Msg: fmt.Sprintf("%s:%d: %q is already on line %d", path, n, name, prev), hint: "give each person one line"}
		}
		if prev, dup := secrets[secret]; dup {
			return nil, &TokenFileError{Msg: fmt.Sprintf("%s:%d: the token of %q is the one on line %d", path, n, name, prev), hint: "give each person their own token"}
		}
		names[name], secrets[secret] = n, n
		out = append(out, Token{Name: name, Secret: secret})
	}
	if err := sc.Err(); err != nil {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file %s: %v", path, err)}
	}
	if len(out) == 0 {
		return nil, &TokenFileError{Msg: fmt.Sprintf("tokens file %s lists nobody", path), hint: "add one \"name token\" line per person"}
	}
	return out, nil
}

// lookup returns the name of the token's holder. Every token is compared
// in constant time, so the time taken says nothing about which one
// nearly matched.
func (s *Server) lookup(secret string) (string, bool) {
	name, found := "", 0
	for _, t := range s.tokens {
		if subtle.ConstantTimeCompare([]byte(t.Secret), []byte(secret)) == 1 {
			name, found = t.Name, 1
		}
	}
	return name, found == 1
}

// The session cookie and how long a session lasts.
const (
	cookieName  = "foilrun_session"
	sessionLife = 12 * time.Hour
	maxSessions = 10000
)

// session is one browser's: who (from the token; "" without tokens) and
// the CSRF token its forms carry.
type session struct {
	user    string
	csrf    string
	expires time.Time
}

// sessions are kept in memory only: a restart logs everyone out.
type sessions struct {
	mu  sync.Mutex
	key []byte // HMAC key of the CSRF tokens
	m   map[string]session
}

func newSessions() *sessions {
	return &sessions{key: []byte(randomHex(32)), m: map[string]session{}}
}

// randomHex returns n random bytes as hex.
func randomHex(n int) string {
	b := make([]byte, n)
	rand.Read(b) // never fails (crypto/rand)
	return hex.EncodeToString(b)
}

// create starts a session for user and returns its id.
func (ss *sessions) create(user string) (string, session) {
	id := randomHex(32)
	mac := hmac.New(sha256.New, ss.key)
	mac.Write([]byte(id))
	se := session{user: user, csrf: hex.EncodeToString(mac.Sum(nil)), expires: time.Now().Add(sessionLife)}
	ss.mu.Lock()
	defer ss.mu.Unlock()
	if len(ss.m) >= maxSessions {
		ss.prune()
	}
	ss.m[id] = se
	return id, se
}

// prune drops expired sessions, and the oldest half when that is not
// enough; the caller holds mu.
func (ss *sessions) prune() {
	now := time.Now()
	for id, se := range ss.m {
		if now.After(se.expires) {
			delete(ss.m, id)
		}
	}
	for id := range ss.m {
		if len(ss.m) < maxSessions/2 {
			break
		}
		delete(ss.m, id)
	}
}

// fromRequest returns the session of the request's cookie, if it is
// live.
func (ss *sessions) fromRequest(r *http.Request) (session, bool) {
	c, err := r.Cookie(cookieName)
	if err != nil {
		return session{}, false
	}
	ss.mu.Lock()
	defer ss.mu.Unlock()
	se, ok := ss.m[c.Value]
	if !ok || time.Now().After(se.expires) {
		return session{}, false
	}
	return se, true
}

// setCookie gives the browser the session id: HttpOnly (no script reads
// it), SameSite=Strict (no other site's page sends it), Secure when the
// request came over TLS (the reverse proxy says so).
func setCookie(w http.ResponseWriter, r *http.Request, id string) {
	http.SetCookie(w, &http.Cookie{Name: cookieName, Value: id, Path: "/", HttpOnly: true, SameSite: http.SameSiteStrictMode,
		Secure: r.TLS != nil || r.Header.Get("X-Forwarded-Proto") == "https", MaxAge: int(sessionLife / time.Second)})
}

// authenticated lets a request through when it has a live session. With
// tokens, a request without one gets the login page (401); without
// tokens, a new anonymous session is started so that forms have a CSRF
// token. /login and /static need no session.
func (s *Server) authenticated(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.URL.Path == "/login" || strings.HasPrefix(r.URL.Path, "/static/") {
			next.ServeHTTP(w, r)
			return
		}
		if _, ok := s.sessions.fromRequest(r); ok {
			next.ServeHTTP(w, r)
			return
		}
		if len(s.tokens) > 0 {
			s.render(w, r, http.StatusUnauthorized, "login", "Log in", loginData{})
			return
		}
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			s.fail(w, r, http.StatusForbidden, errors.New("no session: load the page again and resend the form"))
			return
		}
		id, _ := s.sessions.create("")
		setCookie(w, r, id)
		r.AddCookie(&http.Cookie{Name: cookieName, Value: id})
		next.ServeHTTP(w, r)
	})
}

// loginData is what the login page shows.
type loginData struct {
	Error string
}

// login exchanges a token (GET /login?token=… or the POST form) for a
// session cookie and sends the browser to /runs; a wrong token gets the
// login page again with 401.
func (s *Server) login(w http.ResponseWriter, r *http.Request) {
	if len(s.tokens) == 0 {
		http.Redirect(w, r, "/runs", http.StatusSeeOther)
		return
	}
	secret := r.URL.Query().Get("token")
	if r.Method == http.MethodPost {
		r.Body = http.MaxBytesReader(w, r.Body, 4096)
		secret = r.PostFormValue("token")
	}
	if secret == "" {
		s.render(w, r, http.StatusOK, "login", "Log in", loginData{})
		return
	}
	name, ok := s.lookup(secret)
	if !ok {
		s.render(w, r, http.StatusUnauthorized, "login", "Log in", loginData{Error: "that token is not on the server's list"})
		return
	}
	id, _ := s.sessions.create(name)
	setCookie(w, r, id)
	http.Redirect(w, r, "/runs", http.StatusSeeOther)
}

// writer checks a POST: the server takes writes, and the form's CSRF
// token is the session's (constant-time). It returns who writes (the
// token's holder, else the form's operator field) or writes the refusal
// (403) and returns false.
func (s *Server) writer(w http.ResponseWriter, r *http.Request) (string, bool) {
	if s.readOnly {
		s.fail(w, r, http.StatusForbidden, errors.New("this server is read-only (serve --read-only): nothing was changed"))
		return "", false
	}
	se, ok := s.sessions.fromRequest(r)
	got := r.PostFormValue("csrf")
	if !ok || subtle.ConstantTimeCompare([]byte(got), []byte(se.csrf)) != 1 {
		s.fail(w, r, http.StatusForbidden, errors.New("the form's token is missing or stale: load the page again and resend; nothing was changed"))
		return "", false
	}
	if se.user != "" {
		return se.user, true
	}
	return strings.TrimSpace(r.PostFormValue("operator")), true
}
