package store

import (
	"fmt"
	"math"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/foilrun/foilrun/recipe"
)

// Validation of what is written to the log. Every write (run start/add,
// notes, outcomes, finish, imports and copies) passes through the same
// checks, so an import can store nothing that an entry could not:
//
//   - codes match the code pattern (ValidateCode), statuses are known,
//     recipe hashes and attachment hashes are 64 lowercase hex digits;
//   - text is valid UTF-8 without NUL bytes and at most a bounded length
//     (the Max… constants), so a 100,000-character name is refused;
//   - times lie between EarliestTime and FutureSlack after now, and a run
//     does not end before it starts;
//   - parameters are finite and within the physical range of their kind
//     (ParamRange): temperatures above 0 K, durations up to 7 days, flows
//     and pressures not negative;
//   - outcomes are metrics by name (lower snake case, not a recipe
//     parameter), a known metric in its canonical unit and range, a
//     free-form one finite and within ±MaxFreeValue;
//   - actuals are finite (or missing) and physical: temperature above 0 K,
//     pressure and flows not negative.
//
// Imported attachments must also name a file inside the attachments
// folder: a relative path without "..".

// Bounds on text fields, in bytes.
const (
	MaxNameLength = 200     // recipe name, furnace, operator, lot, labels, methods, units, kinds
	MaxNoteLength = 10000   // a note, a deviation's message
	MaxPathLength = 4096    // an attachment's path, a snapshot's file
	MaxRecipeSize = 1 << 20 // a recipe snapshot's content (the recipe reader's limit)
)

// EarliestTime is the earliest time a run, note or measurement may carry:
// graphene was first grown by CVD on copper foil in 2009, so anything
// before 1990 is a missing or mistyped date (the zero time, 0001-01-01,
// included).
var EarliestTime = time.Date(1990, 1, 1, 0, 0, 0, 0, time.UTC)

// FutureSlack is how far after now a stored time may lie: a planned run
// may be dated ahead and clocks of lab machines drift, but five years
// ahead is a typing error.
const FutureSlack = 5 * 365 * 24 * time.Hour

// maxDurationMin is the longest duration a parameter may hold: 7 days.
const maxDurationMin = 7 * 24 * 60

// Range is the closed (or, where Open, left-open) interval a value must
// lie in.
type Range struct {
	Min, Max float64
	Open     bool // Min itself is excluded (temperatures: above 0 K)
	What     string
}

func (r Range) contains(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) || v > r.Max {
		return false
	}
	if r.Open {
		return v > r.Min
	}
	return v >= r.Min
}

func (r Range) String() string {
	if r.Open {
		return fmt.Sprintf("above %g up to %g (%s)", r.Min, r.Max, r.What)
	}
	return fmt.Sprintf("%g to %g (%s)", r.Min, r.Max, r.What)
}

// ParamRange returns the physical range of a recipe parameter by the unit
// its name carries (recipe.ParameterNames); a name foilrun does not know
// gets ±MaxFreeValue.
func ParamRange(name string) Range {
	if unit, ok := paramUnits[name]; ok {
		switch unit {
		case "°C":
			return Range{Min: -273.15, Max: 3000, Open: true, What: "°C: above 0 K, below any tube furnace's limit"}
		case "min":
			return Range{Min: 0, Max: maxDurationMin, What: "min, up to 7 days"}
		case "s":
			return Range{Min: 0, Max: maxDurationMin * 60, What: "s, up to 7 days"}
		case "sccm":
			return Range{Min: 0, Max: 1e6, What: "sccm, a flow is not negative"}
		case "Torr":
			return Range{Min: 0, Max: 7600, What: "Torr, a pressure is not negative"}
		case "Pa":
			return Range{Min: 0, Max: 1e6, What: "Pa, a pressure is not negative"}
		case "°C/min":
			return Range{Min: 0, Max: 1e4, What: "°C/min, a rate's magnitude"}
		case "um":
			return Range{Min: 0, Max: 1e4, Open: true, What: "µm"}
		case "%":
			return Range{Min: 0, Max: 100, What: "%"}
		}
		return Range{Min: 0, Max: MaxFreeValue, What: "a ratio is not negative"}
	}
	return Range{Min: -MaxFreeValue, Max: MaxFreeValue, What: "a finite number"}
}

// paramUnits maps each known parameter to its unit.
var paramUnits = func() map[string]string {
	m := map[string]string{}
	for _, p := range recipe.ParameterNames() {
		m[p.Name] = p.Unit
	}
	return m
}()

// fieldError is a problem with one field of a run.
func fieldError(run, field, format string, args ...any) error {
	return fmt.Errorf("run %s: %s: %s: %w", run, field, fmt.Sprintf(format, args...), ErrInvalid)
}

// runLabel names a run in messages: its code, or "(new)" before it has one.
func runLabel(code string) string {
	if code == "" {
		return "(new)"
	}
	return quoteShort(code)
}

// checkText checks a text field: valid UTF-8, no NUL byte, at most max bytes.
func checkText(s string, max int) error {
	switch {
	case len(s) > max:
		return fmt.Errorf("%d bytes, at most %d (%s)", len(s), max, quoteShort(s))
	case !utf8.ValidString(s):
		return fmt.Errorf("%s is not valid UTF-8", quoteShort(s))
	case strings.IndexByte(s, 0) >= 0:
		return fmt.Errorf("%s holds a NUL byte", quoteShort(s))
	}
	return nil
}

// checkTime checks a stored time (the zero time means "not given" and
// passes when optional).
func checkTime(t, now time.Time, optional bool) error {
	if t.IsZero() && optional {
		return nil
	}
	if t.Before(EarliestTime) {
		return fmt.Errorf("%s is before %s; give the real date", t.UTC().Format(time.RFC3339), EarliestTime.Format("2006-01-02"))
	}
	if !now.IsZero() && t.After(now.Add(FutureSlack)) {
		return fmt.Errorf("%s is more than 5 years in the future", t.UTC().Format(time.RFC3339))
	}
	return nil
}

// checkHash checks a SHA-256 in lowercase hex.
func checkHash(h string) error {
	if len(h) != 64 {
		return fmt.Errorf("%s is %d characters, want the 64 hex digits of a SHA-256", quoteShort(h), len(h))
	}
	for i := 0; i < len(h); i++ {
		if c := h[i]; !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return fmt.Errorf("%s: character %d %q is not a lowercase hex digit", quoteShort(h), i+1, rune(c))
		}
	}
	return nil
}

// Validate checks a run record as it is about to be written (see the
// package's validation rules); now is the log's clock. Errors name the
// run and the field and wrap ErrInvalid.
func (rec RunRecord) Validate(now time.Time) error {
	run := runLabel(rec.Code)
	if rec.Code != "" {
		if err := ValidateCode(rec.Code); err != nil {
			return err // names the run by its code
		}
	}
	for i, a := range rec.Aliases {
		if err := ValidateCode(a); err != nil {
			return fieldError(run, fmt.Sprintf("aliases[%d]", i), "%s", strings.TrimSuffix(err.Error(), ": "+ErrInvalid.Error()))
		}
	}
	if rec.Status != "" && !rec.Status.Valid() {
		return fieldError(run, "status", "%s: want planned, running, done or aborted", quoteShort(string(rec.Status)))
	}
	for _, h := range []struct{ name, v string }{{"recipe_sha256", rec.RecipeHash}, {"furnace_sha256", rec.FurnaceHash}, {"site_sha256", rec.SiteHash}} {
		if h.v == "" {
			continue
		}
		if err := checkHash(h.v); err != nil {
			return fieldError(run, h.name, "%v", err)
		}
	}
	if err := checkText(rec.Source, MaxPathLength); err != nil {
		return fieldError(run, "source", "%v", err)
	}
	for _, f := range []struct{ name, v string }{{"recipe_name", rec.RecipeName}, {"furnace", rec.Furnace}, {"operator", rec.Operator}, {"lot", rec.Lot}} {
		if err := checkText(f.v, MaxNameLength); err != nil {
			return fieldError(run, f.name, "%v", err)
		}
	}
	for _, f := range []struct {
		name string
		t    time.Time
	}{{"started", rec.Started}, {"ended", rec.Ended}, {"created", rec.Created}} {
		if err := checkTime(f.t, now, true); err != nil {
			return fieldError(run, f.name, "%v", err)
		}
	}
	if !rec.Started.IsZero() && !rec.Ended.IsZero() && rec.Ended.Before(rec.Started) {
		return fieldError(run, "ended", "%s is before the start %s", rec.Ended.UTC().Format(time.RFC3339), rec.Started.UTC().Format(time.RFC3339))
	}
	for name, v := range rec.Params {
		if err := CheckParam(name, v); err != nil {
			return fieldError(run, "params."+name, "%v", err)
		}
	}
	for i, n := range rec.Notes {
		if err := n.Validate(now); err != nil {
			return fieldError(run, fmt.Sprintf("notes[%d]", i), "%v", err)
		}
	}
	for i, o := range rec.Outcomes {
		if err := o.Validate(now); err != nil {
			return fieldError(run, fmt.Sprintf("outcomes[%d]", i), "%v", err)
		}
	}
	if rec.Override != nil {
		if err := rec.Override.Validate(now); err != nil {
			return fieldError(run, "override", "%v", err)
		}
	}
	return checkFinishRows(run, rec.Actuals, rec.Deviations, rec.Attachments, now)
}

// Validate checks a Finish as FinishRun is about to write it.
func (f Finish) Validate(code string, now time.Time) error {
	run := runLabel(code)
	if err := checkTime(f.Ended, now, true); err != nil {
		return fieldError(run, "ended", "%v", err)
	}
	if err := checkText(f.Note, MaxNoteLength); err != nil {
		return fieldError(run, "note", "%v", err)
	}
	for name, v := range f.Params {
		if err := CheckParam(name, v); err != nil {
			return fieldError(run, "params."+name, "%v", err)
		}
	}
	return checkFinishRows(run, f.Actuals, f.Deviations, f.Attachments, now)
}

func checkFinishRows(run string, as []Actual, ds []Deviation, atts []Attachment, now time.Time) error {
	for i, a := range as {
		if err := a.validate(); err != nil {
			return fieldError(run, fmt.Sprintf("actuals[%d]", i), "%v", err)
		}
	}
	for i, d := range ds {
		if err := d.validate(); err != nil {
			return fieldError(run, fmt.Sprintf("deviations[%d]", i), "%v", err)
		}
	}
	for i, a := range atts {
		if err := a.Validate(now); err != nil {
			return fieldError(run, fmt.Sprintf("attachments[%d]", i), "%v", err)
		}
	}
	return nil
}

// CheckParam checks one recipe parameter's value: finite and inside
// ParamRange(name); the name lower snake case.
func CheckParam(name string, v float64) error {
	if !validName(name) || len(name) > MaxNameLength {
		return fmt.Errorf("parameter name %s must be lower case letters, digits and _", quoteShort(name))
	}
	if r := ParamRange(name); !r.contains(v) {
		return fmt.Errorf("%g is out of range: want %s", v, r)
	}
	return nil
}

// Validate checks a note.
func (n Note) Validate(now time.Time) error {
	if err := checkTime(n.At, now, true); err != nil {
		return fmt.Errorf("at: %v", err)
	}
	if err := checkText(n.Text, MaxNoteLength); err != nil {
		return fmt.Errorf("text: %v", err)
	}
	return nil
}

// Validate checks an outcome: a metric name in lower snake case that is
// not a recipe parameter; a known metric in its canonical unit and inside
// its range; a free-form one finite, within ±MaxFreeValue, with a unit.
func (o Outcome) Validate(now time.Time) error {
	if !validName(o.Metric) || len(o.Metric) > MaxNameLength {
		return fmt.Errorf("metric %s must be lower case letters, digits and _ (e.g. coverage)", quoteShort(o.Metric))
	}
	if recipe.IsParameter(o.Metric) {
		return fmt.Errorf("metric %q is a recipe parameter, not a measured outcome", o.Metric)
	}
	for _, f := range []struct{ name, v string }{{"unit", o.Unit}, {"entered", o.Entered}, {"method", o.Method}} {
		if err := checkText(f.v, MaxNameLength); err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	if err := checkTime(o.Measured, now, true); err != nil {
		return fmt.Errorf("measured: %v", err)
	}
	m, known := MetricByName(o.Metric)
	if !known {
		return checkFreeOutcome(o)
	}
	if o.Unit != m.Unit {
		return fmt.Errorf("%s is in %s, not %q", o.Metric, m.Unit, o.Unit)
	}
	if math.IsNaN(o.Value) || math.IsInf(o.Value, 0) || o.Value < m.Min || o.Value > m.Max {
		unit := " " + m.Unit
		if m.Unit == "1" {
			unit = ""
		}
		return fmt.Errorf("%s %g is outside %g to %g%s", o.Metric, o.Value, m.Min, m.Max, unit)
	}
	return nil
}

// checkFreeOutcome checks the value and unit of a metric foilrun does not
// know.
func checkFreeOutcome(o Outcome) error {
	if math.IsNaN(o.Value) || math.IsInf(o.Value, 0) || math.Abs(o.Value) > MaxFreeValue {
		return fmt.Errorf("%s %g is not a finite number within ±%g", o.Metric, o.Value, MaxFreeValue)
	}
	if o.Unit == "" || strings.ContainsFunc(o.Unit, func(r rune) bool { return r < ' ' || r == 0x7f }) {
		return fmt.Errorf("%s: unit %s: want a unit such as \"1\", \"nm\" or \"cm-1\"", o.Metric, quoteShort(o.Unit))
	}
	return nil
}

// actualRange is the physical range of an actual by its quantity (SI).
func actualRange(quantity string) Range {
	switch {
	case quantity == "temperature":
		return Range{Min: 0, Max: 1e4, Open: true, What: "K, above 0 K"}
	case quantity == "pressure":
		return Range{Min: 0, Max: 1e7, What: "Pa, not negative"}
	case strings.HasPrefix(quantity, "flow"):
		return Range{Min: 0, Max: 1, What: "mol/s, not negative"}
	case quantity == "duration":
		return Range{Min: 0, Max: maxDurationMin * 60, What: "s, up to 7 days"}
	}
	return Range{Min: -MaxFreeValue, Max: MaxFreeValue, What: "a finite number"}
}

func (a Actual) validate() error {
	if a.Step < 1 || a.Step > 10000 {
		return fmt.Errorf("step %d: want 1 to 10000", a.Step)
	}
	if a.Samples < 0 {
		return fmt.Errorf("samples %d is negative", a.Samples)
	}
	for _, f := range []struct{ name, v string }{{"label", a.Label}, {"quantity", a.Quantity}, {"unit", a.Unit}} {
		if err := checkText(f.v, MaxNameLength); err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	r := actualRange(a.Quantity)
	for _, f := range []struct {
		name string
		v    float64
	}{{"planned", float64(a.Planned)}, {"mean", a.Mean}, {"min", a.Min}, {"max", a.Max}} {
		if !math.IsNaN(f.v) && !r.contains(f.v) {
			return fmt.Errorf("%s %s %g is out of range: want %s", a.Quantity, f.name, f.v, r)
		}
	}
	return nil
}

func (d Deviation) validate() error {
	if d.Step < 1 || d.Step > 10000 {
		return fmt.Errorf("step %d: want 1 to 10000", d.Step)
	}
	for _, f := range []struct {
		name, v string
		max     int
	}{{"label", d.Label, MaxNameLength}, {"quantity", d.Quantity, MaxNameLength}, {"unit", d.Unit, MaxNameLength}, {"message", d.Message, MaxNoteLength}} {
		if err := checkText(f.v, f.max); err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"planned", d.Planned}, {"actual", d.Actual}, {"tolerance", d.Tolerance}} {
		if math.IsInf(f.v, 0) || math.Abs(f.v) > MaxFreeValue {
			return fmt.Errorf("%s %g is not a finite number", f.name, f.v)
		}
	}
	return nil
}

// Validate checks an attachment: a path, a SHA-256 of 64 hex digits, a
// kind and a time in range.
func (a Attachment) Validate(now time.Time) error {
	if strings.TrimSpace(a.Path) == "" {
		return fmt.Errorf("attachment of kind %q has no path: give the file's path", a.Kind)
	}
	if err := checkText(a.Path, MaxPathLength); err != nil {
		return fmt.Errorf("path: %v", err)
	}
	if err := checkHash(a.SHA256); err != nil {
		return fmt.Errorf("sha256: %v", err)
	}
	if err := checkText(a.Kind, MaxNameLength); err != nil {
		return fmt.Errorf("kind: %v", err)
	}
	if err := checkTime(a.Added, now, true); err != nil {
		return fmt.Errorf("added: %v", err)
	}
	return nil
}

// CheckAttachmentPath checks the path of an imported attachment: it must
// name a file inside the attachments folder, so a relative path with no
// ".." element, no drive letter and no control characters.
func CheckAttachmentPath(p string) error {
	switch {
	case strings.HasPrefix(p, "/") || strings.HasPrefix(p, `\`) || len(p) >= 2 && p[1] == ':':
		return fmt.Errorf("%s is absolute; an imported attachment names a file inside the attachments folder, such as micrographs/G26-0001.png", quoteShort(p))
	case strings.ContainsFunc(p, func(r rune) bool { return r < ' ' || r == 0x7f }):
		return fmt.Errorf("%s holds a control character", quoteShort(p))
	}
	for _, el := range strings.FieldsFunc(p, func(r rune) bool { return r == '/' || r == '\\' }) {
		if el == ".." {
			return fmt.Errorf("%s leaves the attachments folder (\"..\"); give a path inside it", quoteShort(p))
		}
	}
	return nil
}

// ValidateImport checks a bundle before it is imported: every snapshot
// (hash, name, file, size) and every run (Validate, and attachment paths
// inside the attachments folder). Errors name the run by its place in the
// bundle and its code, and the field.
func (b Bundle) ValidateImport(now time.Time) error {
	for i, s := range b.Snapshots {
		if err := s.validate(); err != nil {
			return fmt.Errorf("snapshot %d of %d: %v: %w", i+1, len(b.Snapshots), err, ErrInvalid)
		}
	}
	for i, rec := range b.Runs {
		err := rec.Validate(now)
		for j, a := range rec.Attachments {
			if err != nil {
				break
			}
			if perr := CheckAttachmentPath(a.Path); perr != nil {
				err = fieldError(runLabel(rec.Code), fmt.Sprintf("attachments[%d].path", j), "%v", perr)
			}
		}
		if err != nil {
			return fmt.Errorf("import run %d of %d: %w", i+1, len(b.Runs), err)
		}
	}
	return nil
}

func (s Snapshot) validate() error {
	if err := checkHash(s.SHA256); err != nil {
		return fmt.Errorf("sha256: %v", err)
	}
	kind := s.KindOrRecipe()
	switch kind {
	case SnapshotRecipe, SnapshotFurnace, SnapshotSite:
	default:
		return fmt.Errorf("snapshot %.12s: kind %s: want recipe, furnace or site", s.SHA256, quoteShort(kind))
	}
	if len(s.Content) > MaxRecipeSize {
		return fmt.Errorf("%s snapshot %.12s: %d bytes, a %s file is at most %d", kind, s.SHA256, len(s.Content), kind, MaxRecipeSize)
	}
	if err := checkText(s.Name, MaxNameLength); err != nil {
		return fmt.Errorf("%s snapshot %.12s: name: %v", kind, s.SHA256, err)
	}
	if err := checkText(s.File, MaxPathLength); err != nil {
		return fmt.Errorf("%s snapshot %.12s: file: %v", kind, s.SHA256, err)
	}
	return s.Verify()
}

// Validate checks a correction's text (UTF-8, no NUL, lengths) and that
// both values are finite.
func (c Correction) Validate() error {
	for _, f := range []struct{ name, v string }{{"metric", c.Metric}, {"unit", c.Unit}, {"old_entered", c.OldEntered}, {"new_entered", c.NewEntered}, {"who", c.Who}} {
		if err := checkText(f.v, MaxNameLength); err != nil {
			return fmt.Errorf("%s: %v", f.name, err)
		}
	}
	if math.IsNaN(c.OldValue) || math.IsInf(c.OldValue, 0) || math.IsNaN(c.NewValue) || math.IsInf(c.NewValue, 0) {
		return fmt.Errorf("values %g and %g: want finite numbers", c.OldValue, c.NewValue)
	}
	return nil
}
