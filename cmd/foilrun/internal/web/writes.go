package web

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/imageoutcome"
	"io"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"

	"github.com/foilrun/foilrun/kinetics/micrograph"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/infile"
	"github.com/foilrun/foilrun/store"
)

// maxForm is the size limit of a note or outcome form.
const maxForm = 64 << 10

// back sends the browser back to the run page after a write (303).
func back(w http.ResponseWriter, r *http.Request, code string) {
	http.Redirect(w, r, "/runs/"+url.PathEscape(code), http.StatusSeeOther)
}

// writeFailed answers a refused write: 404 for an unknown run, 400 for
// bad input, 403 for a read-only log, else 500.
func (s *Server) writeFailed(w http.ResponseWriter, r *http.Request, err error) {
	switch {
	case errors.Is(err, store.ErrNotFound):
		s.fail(w, r, http.StatusNotFound, err)
	case errors.Is(err, store.ErrInvalid):
		s.fail(w, r, http.StatusBadRequest, err)
	case errors.Is(err, store.ErrReadOnly):
		s.fail(w, r, http.StatusForbidden, err)
	default:
		s.fail(w, r, http.StatusInternalServerError, err)
	}
}

// addNote is POST /runs/{code}/notes: the form's note, signed with the
// writer's name.
func (s *Server) addNote(w http.ResponseWriter, r *http.Request) {
	r.Body = http.MaxBytesReader(w, r.Body, maxForm)
	who, ok := s.writer(w, r)
	if !ok {
		return
	}
	text := strings.TrimSpace(r.PostFormValue("note"))
	if text == "" {
		s.fail(w, r, http.StatusBadRequest, errors.New("the note is empty: nothing was added"))
		return
	}
	if who != "" {
		text = who + ": " + text
	}
	code := r.PathValue("code")
	if err := s.log.AddNote(r.Context(), code, store.Note{At: s.now(), Text: text}); err != nil {
		s.writeFailed(w, r, err)
		return
	}
	back(w, r, code)
}

// addOutcome is POST /runs/{code}/outcomes: one metric=value[unit], read
// as `outcome add` reads it (store.ParseOutcome).
func (s *Server) addOutcome(w http.ResponseWriter, r *http.Request) {
	r.Body = http.MaxBytesReader(w, r.Body, maxForm)
	who, ok := s.writer(w, r)
	if !ok {
		return
	}
	var ocs []store.Outcome
	for _, v := range strings.Fields(r.PostFormValue("outcome")) {
		oc, err := store.ParseOutcome(v, recipe.IsParameter)
		if err != nil {
			s.fail(w, r, http.StatusBadRequest, fmt.Errorf("outcome %q: %w", v, err))
			return
		}
		oc.Method, oc.Measured = enteredBy(who), s.now()
		ocs = append(ocs, oc)
	}
	if len(ocs) == 0 {
		s.fail(w, r, http.StatusBadRequest, errors.New("no outcome given: write metric=value, e.g. coverage=95%"))
		return
	}
	code := r.PathValue("code")
	if err := s.log.AddOutcomes(r.Context(), code, ocs); err != nil {
		s.writeFailed(w, r, err)
		return
	}
	back(w, r, code)
}

func enteredBy(who string) string {
	if who == "" {
		return "entered in the browser"
	}
	return "entered in the browser by " + who
}

// Pixel sizes a micrograph may have (as outcome measure takes them).
const (
	minPixel = 1e-10 // m
	maxPixel = 1e-3  // m
)

// addMicrograph is POST /runs/{code}/micrographs: a multipart upload of a
// micrograph with its pixel size and the polarity of its domains. The body
// is cut off past the size limit (413), refused at once when its declared
// length is over it; the image goes through the decoder's limits; a
// polarity that would be a guess is refused, as outcome measure refuses
// it. The image and its overlay are kept under the files folder by hash
// and recorded as attachments; coverage and domain size become outcomes.
func (s *Server) addMicrograph(w http.ResponseWriter, r *http.Request) {
	if s.readOnly {
		s.writer(w, r) // the read-only refusal, before the body is read
		return
	}
	if r.ContentLength > s.maxBody {
		s.fail(w, r, http.StatusRequestEntityTooLarge, fmt.Errorf("the upload is %d bytes, over the limit of %d", r.ContentLength, s.maxBody))
		return
	}
	r.Body = http.MaxBytesReader(w, r.Body, s.maxBody)
	if err := r.ParseMultipartForm(8 << 20); err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			s.fail(w, r, http.StatusRequestEntityTooLarge, fmt.Errorf("the upload is over the limit of %d bytes", s.maxBody))
			return
		}
		s.fail(w, r, http.StatusBadRequest, fmt.Errorf("read the upload: %w", err))
		return
	}
	defer r.MultipartForm.RemoveAll()
	who, ok := s.writer(w, r)
	if !ok {
		return
	}
	up, err := readUpload(r, s.maxBody)
	if err != nil {
		s.fail(w, r, http.StatusBadRequest, err)
		return
	}
	code := r.PathValue("code")
	if err := s.measureUpload(r, code, who, up); err != nil {
		s.writeFailed(w, r, err)
		return
	}
	back(w, r, code)
}

// upload is a decoded micrograph with its settings.
type upload struct {
	data     []byte
	name     string
	settings micrograph.Settings
	polarity string
}

// readUpload reads the form's micrograph, pixel size and polarity.
func readUpload(r *http.Request, limit int64) (*upload, error) {
	f, hdr, err := r.FormFile("micrograph")
	if err != nil {
		return nil, errors.New("no micrograph in the form: choose an image file")
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, limit))
	if err != nil {
		return nil, err
	}
	px, err := recipe.Parse(r.PostFormValue("pixel"), recipe.Length)
	if err != nil {
		return nil, fmt.Errorf("pixel size: %w; give it with a unit, e.g. 0.25um", err)
	}
	if !(px.SI >= minPixel && px.SI <= maxPixel) {
		return nil, fmt.Errorf("pixel size %q: want one between 0.1 nm and 1 mm", r.PostFormValue("pixel"))
	}
	pol, err := micrograph.ParsePolarity(r.PostFormValue("polarity"))
	if err != nil || pol == micrograph.PolarityAuto {
		return nil, errors.New("the polarity of the domains is not known, and a guess is not stored as a measurement: choose darker or brighter")
	}
	return &upload{data: data, name: filepath.Base(hdr.Filename), polarity: pol.String(),
		settings: micrograph.Settings{Polarity: pol, PixelSize: px.SI}}, nil
}

// measureUpload measures the micrograph, keeps it and its overlay under
// the files folder and logs the outcomes and attachments.
func (s *Server) measureUpload(r *http.Request, code, who string, up *upload) error {
	ctx := r.Context()
	if _, err := s.log.Record(ctx, code); err != nil {
		return err
	}
	img, _, err := micrograph.Decode(bytes.NewReader(up.data), micrograph.Limits{MaxBytes: s.maxBody})
	if err != nil {
		return fmt.Errorf("micrograph %q: %w: %w", up.name, err, store.ErrInvalid)
	}
	res, err := micrograph.Analyze(img, up.settings)
	if err != nil {
		return fmt.Errorf("micrograph %q: %w: %w", up.name, err, store.ErrInvalid)
	}
	var overlay bytes.Buffer
	if err := res.WriteOverlay(&overlay, img); err != nil {
		return err
	}
	imgPath, imgSum, err := s.keep(up.data, filepath.Ext(up.name))
	if err != nil {
		return err
	}
	ovPath, ovSum, err := s.keep(overlay.Bytes(), ".png")
	if err != nil {
		return err
	}
	now := s.now().UTC()
	suffix := "uploaded in the browser"
	if who != "" {
		suffix += " by " + who
	}
	ms, _ := imageoutcome.Measurements(res, imageoutcome.Settings{Source: "given", IslandLimit: imageoutcome.DefaultIslandLimit, Suffix: suffix})
	ocs := make([]store.Outcome, len(ms))
	for i, m := range ms {
		ocs[i] = store.Outcome{Metric: m.Metric, Value: m.Value, Unit: m.Unit, Entered: m.Text, Method: m.Method, Measured: now}
	}
	if err := s.log.AddOutcomes(ctx, code, ocs); err != nil {
		return err
	}
	for _, a := range []store.Attachment{{Path: imgPath, SHA256: imgSum, Kind: "micrograph", Added: now}, {Path: ovPath, SHA256: ovSum, Kind: "overlay", Added: now}} {
		if err := s.log.AddAttachment(ctx, code, a); err != nil {
			return err
		}
	}
	return nil
}

// keep writes data under the files folder as <sha256><ext> (once per
// content) and returns the path and the hash.
func (s *Server) keep(data []byte, ext string) (string, string, error) {
	sum := sha256.Sum256(data)
	hash := hex.EncodeToString(sum[:])
	ext = strings.ToLower(ext)
	switch ext {
	case ".png", ".jpg", ".jpeg", ".tif", ".tiff":
	default:
		ext = ".img"
	}
	if err := os.MkdirAll(s.files, 0o755); err != nil {
		return "", "", fmt.Errorf("files folder: %w", err)
	}
	path := filepath.Join(s.files, hash+ext)
	if _, err := os.Stat(path); err == nil {
		return path, hash, nil
	}
	tmp, err := os.CreateTemp(s.files, ".upload-*")
	if err != nil {
		return "", "", err
	}
	defer os.Remove(tmp.Name())
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return "", "", err
	}
	if err := tmp.Close(); err != nil {
		return "", "", err
	}
	return path, hash, os.Rename(tmp.Name(), path)
}

// readAttachment reads an attachment's file through the bounded reader
// and checks that it still hashes to the recorded SHA-256.
func readAttachment(a store.Attachment, limit int64) ([]byte, error) {
	fh, err := infile.Open(a.Path, infile.Image)
	if err != nil {
		return nil, fmt.Errorf("attachment %.12s: %w", a.SHA256, err)
	}
	defer fh.Close()
	data, err := io.ReadAll(io.LimitReader(fh, limit+1))
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	if hex.EncodeToString(sum[:]) != a.SHA256 {
		return nil, fmt.Errorf("attachment %.12s: the file at its path no longer has the recorded content", a.SHA256)
	}
	return data, nil
}
