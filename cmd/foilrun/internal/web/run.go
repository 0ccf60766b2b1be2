package web

import (
	"context"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"slices"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/lab"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/runfig"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/safety"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/templates"
)

// runRoutes registers the pages of one run and its writes.
func (s *Server) runRoutes(mux *http.ServeMux) {
	mux.HandleFunc("GET /runs/{code}", s.run)
	mux.HandleFunc("GET /runs/{code}/plan.svg", s.planSVG)
	mux.HandleFunc("GET /runs/{code}/files/{sha}", s.attachment)
	mux.HandleFunc("GET /runs/{code}/checklist", s.checklist)
	mux.HandleFunc("POST /runs/{code}/notes", s.addNote)
	mux.HandleFunc("POST /runs/{code}/outcomes", s.addOutcome)
	mux.HandleFunc("POST /runs/{code}/micrographs", s.addMicrograph)
}

// record returns the run of the path's code; a code an import renumbered
// to exactly one run redirects there (as run show resolves it). It writes
// the 404 or the redirect itself and returns false then.
func (s *Server) record(w http.ResponseWriter, r *http.Request) (store.RunRecord, bool) {
	code := r.PathValue("code")
	rec, err := s.log.Record(r.Context(), code)
	if err == nil {
		return rec, true
	}
	if !errors.Is(err, store.ErrNotFound) {
		s.fail(w, r, http.StatusInternalServerError, err)
		return rec, false
	}
	renamed, rerr := s.log.Renamed(r.Context(), code)
	switch {
	case rerr != nil:
		s.fail(w, r, http.StatusInternalServerError, rerr)
	case len(renamed) == 1 && r.Method == http.MethodGet:
		http.Redirect(w, r, "/runs/"+url.PathEscape(renamed[0]), http.StatusSeeOther)
	case len(renamed) > 1:
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %s: no run has this code, and imports renumbered %d runs from it: %v", code, len(renamed), renamed))
	default:
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %q: no such run in the log", code))
	}
	return rec, false
}

// runData is what the run page shows.
type runData struct {
	Rec        store.RunRecord
	Recipe     string // the recipe snapshot's text
	FurnaceOn  string // which furnace the checks ran on
	NotChecked string // why the recipe was not checked, when it was not
	Findings   []recipe.Finding
	Images     []store.Attachment // micrographs and overlays, served by hash
	Renamed    []string           // other runs renumbered from this code
}

// run is GET /runs/{code}.
func (s *Server) run(w http.ResponseWriter, r *http.Request) {
	rec, ok := s.record(w, r)
	if !ok {
		return
	}
	d := runData{Rec: rec}
	ctx := r.Context()
	if rec.RecipeHash != "" {
		snap, err := s.log.Snapshot(ctx, rec.RecipeHash)
		if err != nil {
			s.fail(w, r, http.StatusInternalServerError, err)
			return
		}
		d.Recipe = string(snap.Content)
		rb, err := s.rebuild(ctx, rec)
		if err != nil {
			d.NotChecked = err.Error()
		} else {
			d.FurnaceOn, d.Findings = fmt.Sprintf("%s from %s", rb.Furnace.Name, rb.FurnacePath), recipe.Check(rb.Plan)
		}
	}
	for _, a := range rec.Attachments {
		if a.Kind == "micrograph" || a.Kind == "overlay" {
			d.Images = append(d.Images, a)
		}
	}
	renamed, err := s.log.Renamed(ctx, rec.Code)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	d.Renamed = renamed
	s.render(w, r, http.StatusOK, "run", "Run "+rec.Code, d)
}

// rebuild rebuilds the run's plan from its snapshots (lab.Rebuilder, the
// way run show does).
func (s *Server) rebuild(ctx context.Context, rec store.RunRecord) (*lab.Rebuilt, error) {
	b, err := lab.NewRebuilder(s.log, "")
	if err != nil {
		return nil, err
	}
	return b.Rebuild(ctx, rec)
}

// planSVG is GET /runs/{code}/plan.svg: the plan against the logged
// conditions, drawn by the CLI's plotting code.
func (s *Server) planSVG(w http.ResponseWriter, r *http.Request) {
	rec, ok := s.record(w, r)
	if !ok {
		return
	}
	if rec.RecipeHash == "" {
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %s was logged without its recipe file: no plan to draw", rec.Code))
		return
	}
	fig, _, err := runfig.PlanFigure(r.Context(), s.log, rec)
	if errors.Is(err, store.ErrNotFound) {
		s.fail(w, r, http.StatusNotFound, err)
		return
	}
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	if len(fig.Rows) == 0 {
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %s: no plan to draw", rec.Code))
		return
	}
	svgHeaders(w)
	if err := chart.WriteTimeFigure(w, "plan.svg", fig); err != nil {
		s.logf("draw %s: %v", r.URL.Path, err)
	}
}

// attachment is GET /runs/{code}/files/{sha}: a file the run's
// attachments record with that hash, read from the recorded path and
// served only when its bytes still hash to it. The URL names a hash,
// never a path.
func (s *Server) attachment(w http.ResponseWriter, r *http.Request) {
	rec, ok := s.record(w, r)
	if !ok {
		return
	}
	sha := r.PathValue("sha")
	i := slices.IndexFunc(rec.Attachments, func(a store.Attachment) bool { return a.SHA256 == sha })
	if i < 0 {
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %s has no attachment with sha256 %.12s", rec.Code, sha))
		return
	}
	data, err := readAttachment(rec.Attachments[i], s.maxBody)
	if err != nil {
		s.fail(w, r, http.StatusNotFound, err)
		return
	}
	ctype := http.DetectContentType(data)
	switch ctype {
	case "image/png", "image/jpeg", "image/gif", "image/webp":
	default:
		ctype = "application/octet-stream"
		w.Header().Set("Content-Disposition", "attachment")
	}
	w.Header().Set("Content-Type", ctype)
	w.Write(data)
}

// checklistData is what the checklist page shows.
type checklistData struct {
	Rec   store.RunRecord
	Text  string
	Stops bool
}

// checklist is GET /runs/{code}/checklist: the pre-run checklist of the
// run's recipe, furnace and site snapshots, from the template `foilrun
// checklist` prints.
func (s *Server) checklist(w http.ResponseWriter, r *http.Request) {
	rec, ok := s.record(w, r)
	if !ok {
		return
	}
	ctx := r.Context()
	if rec.SiteHash == "" || rec.RecipeHash == "" {
		s.fail(w, r, http.StatusNotFound, fmt.Errorf("run %s was logged without its recipe and site files: no checklist", rec.Code))
		return
	}
	rb, err := s.rebuild(ctx, rec)
	if err != nil {
		s.fail(w, r, http.StatusNotFound, err)
		return
	}
	snap, err := s.log.Snapshot(ctx, rec.SiteHash)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	site, err := recipe.ParseSite(snap.File, snap.Content)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, fmt.Errorf("run %s: site snapshot: %w", rec.Code, err))
		return
	}
	plan := *rb.Plan
	plan.Site = site
	rep, err := safety.Analyze(&plan, site, safety.Options{})
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	out, err := templates.RenderChecklist(templates.ChecklistText, safety.NewSheet(&plan, site, rep))
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err)
		return
	}
	s.render(w, r, http.StatusOK, "checklist", "Checklist "+rec.Code, checklistData{Rec: rec, Text: string(out), Stops: safety.HasStop(rep.Findings)})
}
