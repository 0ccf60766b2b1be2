// Package web is `foilrun serve`: a browser view over the run log,
// rendered on the server with html/template from pages embedded in the
// binary, that people on a lab's network can read and that takes the few
// things people add at the bench (notes, outcomes, micrographs).
//
// Security: every page carries a Content-Security-Policy of
// default-src 'self' (no inline script or style; an SVG figure gets one
// that allows only its own style attributes and data: images), nosniff, a same-origin
// referrer policy and frame denial. With a tokens file (LoadTokens) every
// page needs a session, got once from /login with a person's token and
// kept in an HttpOnly, SameSite=Strict cookie; every form carries a CSRF
// token bound to the session; tokens and CSRF tokens are compared in
// constant time. Files are served only from the embedded assets, and a
// run's attachments only when the log records them and their SHA-256 still
// matches. The server has no TLS of its own: put it behind the lab's
// reverse proxy.
//
// Handlers call the packages the commands call (store, store/query through
// the log, lab, chart, safety, templates, kinetics/micrograph); no logic a
// command needs lives here.
//
// Entry points: New, Server.Handler, Serve, LoadTokens, Loopback.
package web
