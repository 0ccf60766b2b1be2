package web

import "net/http"

// analysisRoutes is a stand-in for the analysis pages (/best, /rank,
// /fit, /window), which another file of this package registers.
func (s *Server) analysisRoutes(mux *http.ServeMux) {}
