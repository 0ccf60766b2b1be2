package store

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/foilrun/foilrun/recipe"
)

// The exchange formats.
//
// JSON is complete: every run with its parameters, notes, outcomes,
// actuals, deviations and attachments, and the recipe snapshots the runs
// refer to (content base64-encoded, so the bytes come back exactly):
//
//	{"format": "foilrun-runs", "version": 1, "runs": [...], "snapshots": [...]}
//
// CSV is for spreadsheets: one row per run, the run's columns (code,
// status, recipe_name, recipe_sha256, furnace, operator, lot, started,
// ended), then one column per recipe parameter (its name; the unit is in
// the name) and one per metric, headed "metric [unit]" and holding the mean
// of the run's measurements in that unit. Notes, actuals, deviations,
// attachments and snapshots are not in CSV.

// JSONFormat and JSONVersion identify the JSON exchange format.
const (
	JSONFormat  = "foilrun-runs"
	JSONVersion = 1
)

type jsonHeader struct {
	Format    string          `json:"format"`
	Version   int             `json:"version"`
	Runs      json.RawMessage `json:"runs"`
	Snapshots []Snapshot      `json:"snapshots"`
}

// givenTimes are the times of a run as written in the JSON: a pointer is
// set when the key is there, so a time written as 0001-01-01T00:00:00Z
// (which decodes to the zero time, "not given") is told from one left out.
type givenTimes struct {
	Started, Ended, Created *time.Time
	Notes                   []struct{ At *time.Time }
	Outcomes                []struct{ Measured *time.Time }
	Attachments             []struct{ Added *time.Time }
}

// zeroTime names the first time of the run written as the zero time.
func (g givenTimes) zeroTime() string {
	zero := func(t *time.Time) bool { return t != nil && t.IsZero() }
	switch {
	case zero(g.Started):
		return "started"
	case zero(g.Ended):
		return "ended"
	case zero(g.Created):
		return "created"
	}
	for i, n := range g.Notes {
		if zero(n.At) {
			return fmt.Sprintf("notes[%d].at", i)
		}
	}
	for i, o := range g.Outcomes {
		if zero(o.Measured) {
			return fmt.Sprintf("outcomes[%d].measured", i)
		}
	}
	for i, a := range g.Attachments {
		if zero(a.Added) {
			return fmt.Sprintf("attachments[%d].added", i)
		}
	}
	return ""
}

// WriteJSON writes the runs that pass the filter, and their snapshots, as
// JSON. It returns the number of runs written.
func WriteJSON(ctx context.Context, w io.Writer, log RunLog, f Filter) (int, error) {
	if _, err := fmt.Fprintf(w, "{\n\"format\": %q,\n\"version\": %d,\n\"runs\": [", JSONFormat, JSONVersion); err != nil {
		return 0, err
	}
	hashes := map[string]bool{}
	var order []string
	n := 0
	err := log.Export(ctx, f, func(rec RunRecord) error {
		b, err := json.Marshal(rec)
		if err != nil {
			return fmt.Errorf("run %s: %w", rec.Code, err)
		}
		sep := ",\n"
		if n == 0 {
			sep = "\n"
		}
		n++
		for _, h := range []string{rec.RecipeHash, rec.FurnaceHash, rec.SiteHash} {
			if h != "" && !hashes[h] {
				hashes[h] = true
				order = append(order, h)
			}
		}
		_, err = io.WriteString(w, sep+string(b))
		return err
	})
	if err != nil {
		return n, err
	}
	if _, err := io.WriteString(w, "\n],\n\"snapshots\": ["); err != nil {
		return n, err
	}
	for i, h := range order {
		s, err := log.Snapshot(ctx, h)
		if err != nil {
			return n, err
		}
		b, err := json.Marshal(s)
		if err != nil {
			return n, err
		}
		sep := ",\n"
		if i == 0 {
			sep = "\n"
		}
		if _, err := io.WriteString(w, sep+string(b)); err != nil {
			return n, err
		}
	}
	_, err = io.WriteString(w, "\n]\n}\n")
	return n, err
}

// ReadJSON reads a JSON export. It checks the format and version, that
// the document is all there is (trailing data is refused), that no time
// is written as the zero time (0001-01-01) and that every snapshot's
// content matches its hash; Import checks the rest (Bundle.ValidateImport).
func ReadJSON(r io.Reader) (Bundle, error) {
	var h jsonHeader
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&h); err != nil {
		if errors.Is(err, io.EOF) {
			return Bundle{}, fmt.Errorf("read runs JSON: the file is empty: %w", ErrInvalid)
		}
		return Bundle{}, fmt.Errorf("read runs JSON: %v: %w", err, ErrInvalid)
	}
	end := dec.InputOffset()
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return Bundle{}, fmt.Errorf("read runs JSON: trailing data after the document's closing brace at byte %d: %w", end, ErrInvalid)
	}
	if h.Format != JSONFormat {
		return Bundle{}, fmt.Errorf("read runs JSON: format %q, want %q (a file written by foilrun runs export --format json): %w", h.Format, JSONFormat, ErrInvalid)
	}
	if h.Version < 1 || h.Version > JSONVersion {
		return Bundle{}, fmt.Errorf("read runs JSON: version %d, this foilrun reads 1 to %d: %w", h.Version, JSONVersion, ErrInvalid)
	}
	var runs []RunRecord
	var given []givenTimes
	if len(h.Runs) > 0 {
		rd := json.NewDecoder(bytes.NewReader(h.Runs))
		rd.DisallowUnknownFields()
		if err := rd.Decode(&runs); err != nil {
			return Bundle{}, fmt.Errorf("read runs JSON: runs: %v: %w", err, ErrInvalid)
		}
		if err := json.Unmarshal(h.Runs, &given); err != nil {
			return Bundle{}, fmt.Errorf("read runs JSON: runs: %v: %w", err, ErrInvalid)
		}
	}
	for i, g := range given {
		if f := g.zeroTime(); f != "" {
			return Bundle{}, fmt.Errorf("read runs JSON: run %d (%s): %s: 0001-01-01T00:00:00Z is no date; give the real one or leave the field out: %w",
				i+1, runLabel(runs[i].Code), f, ErrInvalid)
		}
	}
	for _, s := range h.Snapshots {
		if err := s.Verify(); err != nil {
			return Bundle{}, fmt.Errorf("read runs JSON: %v: %w", err, ErrInvalid)
		}
	}
	return Bundle{Snapshots: h.Snapshots, Runs: runs}, nil
}

// runColumns are the CSV columns of a run, in order.
var runColumns = []string{"code", "status", "recipe_name", "recipe_sha256", "furnace", "operator", "lot", "started", "ended"}

// WriteCSV writes the runs that pass the filter as CSV, one row per run.
// It returns the number of runs written.
func WriteCSV(ctx context.Context, w io.Writer, log RunLog, f Filter) (int, error) {
	names, err := log.Names(ctx)
	if err != nil {
		return 0, err
	}
	var params []string
	var metrics []Name
	for _, nm := range names {
		if nm.Kind == NameParam {
			params = append(params, nm.Name)
		} else {
			metrics = append(metrics, nm)
		}
	}
	SortParams(params)
	sort.Slice(metrics, func(i, j int) bool { return metrics[i].Name < metrics[j].Name })
	header := append([]string(nil), runColumns...)
	header = append(header, params...)
	for _, m := range metrics {
		header = append(header, m.Name+" ["+m.Unit+"]")
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(header); err != nil {
		return 0, err
	}
	n := 0
	err = log.Export(ctx, f, func(rec RunRecord) error {
		row := []string{rec.Code, string(rec.Status), rec.RecipeName, rec.RecipeHash, rec.Furnace, rec.Operator, rec.Lot, csvTime(rec.Started), csvTime(rec.Ended)}
		for _, p := range params {
			v, ok := rec.Params[p]
			row = append(row, csvNum(v, ok))
		}
		for _, m := range metrics {
			v, ok := MeanOutcome(rec.Outcomes, m.Name)
			row = append(row, csvNum(v, ok))
		}
		n++
		return cw.Write(row)
	})
	cw.Flush()
	if err == nil {
		err = cw.Error()
	}
	return n, err
}

// MeanOutcome returns the mean of the run's values of a metric.
func MeanOutcome(os []Outcome, metric string) (float64, bool) {
	sum, n := 0.0, 0
	for _, o := range os {
		if o.Metric == metric {
			sum += o.Value
			n++
		}
	}
	if n == 0 {
		return 0, false
	}
	return sum / float64(n), true
}

func csvNum(v float64, ok bool) string {
	if !ok || math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func csvTime(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.UTC().Format(time.RFC3339Nano)
}

// SortParams sorts parameter names in recipe.ParameterNames order, unknown
// names after, alphabetically.
func SortParams(names []string) {
	order := map[string]int{}
	for i, p := range recipe.ParameterNames() {
		order[p.Name] = i
	}
	slices.SortStableFunc(names, func(a, b string) int {
		ia, oka := order[a]
		ib, okb := order[b]
		switch {
		case oka && okb:
			return ia - ib
		case oka:
			return -1
		case okb:
			return 1
		}
		return strings.Compare(a, b)
	})
}

// ReadCSV reads runs from CSV as WriteCSV writes them (see the format note
// above). Any run column may be left out: runs without a code get one when
// imported, runs without a status are done. Metric values are checked as
// ParseOutcome does. Errors name the line and column.
func ReadCSV(r io.Reader) (Bundle, error) {
	cr := csv.NewReader(r)
	cr.ReuseRecord = false
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return Bundle{}, fmt.Errorf("read runs CSV: the file is empty: %w", ErrInvalid)
	}
	if err != nil {
		return Bundle{}, fmt.Errorf("read runs CSV: %v: %w", err, ErrInvalid)
	}
	type col struct {
		run    string // run column name, or ""
		param  string
		metric string
		unit   string
	}
	cols := make([]col, len(header))
	seen := map[string]int{}
	for i, h := range header {
		h = strings.TrimSpace(strings.TrimPrefix(h, "\ufeff"))
		at := func(format string, args ...any) error {
			return fmt.Errorf("read runs CSV: line 1 col %d: %s: %w", i+1, fmt.Sprintf(format, args...), ErrInvalid)
		}
		key := h
		switch {
		case slices.Contains(runColumns, h):
			cols[i].run = h
		case strings.HasSuffix(h, "]") && strings.Contains(h, " ["):
			name, unit, _ := strings.Cut(strings.TrimSuffix(h, "]"), " [")
			if !validName(name) {
				return Bundle{}, at("metric %q must be lower case letters, digits and _", name)
			}
			if recipe.IsParameter(name) {
				return Bundle{}, at("%q is a recipe parameter; write it without a unit", name)
			}
			cols[i].metric, cols[i].unit, key = name, unit, name
		default:
			if !validName(h) {
				return Bundle{}, at("column %q is neither a run column (%s), a parameter name nor \"metric [unit]\"", h, strings.Join(runColumns, ", "))
			}
			cols[i].param = h
		}
		if j, dup := seen[key]; dup {
			return Bundle{}, at("column %q repeats column %d", h, j+1)
		}
		seen[key] = i
	}
	var b Bundle
	for {
		row, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return Bundle{}, fmt.Errorf("read runs CSV: %v: %w", err, ErrInvalid)
		}
		line, _ := cr.FieldPos(0)
		rec := RunRecord{Params: map[string]float64{}}
		for i, cell := range row {
			cell = strings.TrimSpace(cell)
			c := cols[i]
			at := func(format string, args ...any) error {
				return fmt.Errorf("read runs CSV: line %d col %d (%s): %s: %w", line, i+1, header[i], fmt.Sprintf(format, args...), ErrInvalid)
			}
			switch {
			case c.run != "":
				if err := setRunColumn(&rec.Run, c.run, cell); err != nil {
					return Bundle{}, at("%v", err)
				}
			case cell == "":
			case c.param != "":
				v, err := strconv.ParseFloat(cell, 64)
				if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
					return Bundle{}, at("%q is not a finite number", cell)
				}
				if err := CheckParam(c.param, v); err != nil {
					return Bundle{}, at("%v", err)
				}
				rec.Params[c.param] = v
			default:
				text := cell
				if c.unit != "" && c.unit != "1" {
					text += " " + c.unit
				}
				o, err := ParseOutcome(c.metric+"="+text, recipe.IsParameter)
				if err != nil {
					return Bundle{}, at("%s", strings.TrimSuffix(err.Error(), ": "+ErrInvalid.Error()))
				}
				o.Entered = cell
				rec.Outcomes = append(rec.Outcomes, o)
			}
		}
		if rec.Status == "" {
			rec.Status = Done
		}
		b.Runs = append(b.Runs, rec)
	}
	return b, nil
}

func setRunColumn(r *Run, col, cell string) error {
	switch col {
	case "code":
		r.Code = cell
	case "status":
		if cell != "" && !Status(cell).Valid() {
			return fmt.Errorf("status %q: want planned, running, done or aborted", cell)
		}
		r.Status = Status(cell)
	case "recipe_name":
		r.RecipeName = cell
	case "recipe_sha256":
		r.RecipeHash = cell
	case "furnace":
		r.Furnace = cell
	case "operator":
		r.Operator = cell
	case "lot":
		r.Lot = cell
	case "started", "ended":
		if cell == "" {
			return nil
		}
		t, err := time.Parse(time.RFC3339Nano, cell)
		if err != nil {
			return fmt.Errorf("%q is not a time such as 2026-03-01T09:30:00Z", cell)
		}
		if col == "started" {
			r.Started = t
		} else {
			r.Ended = t
		}
	}
	return nil
}
