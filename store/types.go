package store

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"time"
)

// Status is where a run is in its life.
type Status string

// The run statuses.
const (
	Planned Status = "planned"
	Running Status = "running"
	Done    Status = "done"
	Aborted Status = "aborted"
)

// Valid reports whether s is one of the four statuses.
func (s Status) Valid() bool {
	switch s {
	case Planned, Running, Done, Aborted:
		return true
	}
	return false
}

// Finished reports whether the run has ended (done or aborted).
func (s Status) Finished() bool { return s == Done || s == Aborted }

// Snapshot is one of the user's files (a recipe, a furnace or a site file)
// kept byte for byte, keyed by the SHA-256 of its bytes, so a run always
// shows the exact recipe it ran, on the furnace it ran on.
type Snapshot struct {
	SHA256  string    `json:"sha256"`
	Kind    string    `json:"kind,omitempty"` // SnapshotRecipe ("" reads as one), SnapshotFurnace or SnapshotSite
	Name    string    `json:"name"`           // the recipe's, furnace's or site's name from the file
	File    string    `json:"file"`           // path it was read from, for people
	Content []byte    `json:"content"`
	Created time.Time `json:"created,omitzero"`
}

// Kinds of Snapshot.
const (
	SnapshotRecipe  = "recipe"
	SnapshotFurnace = "furnace"
	SnapshotSite    = "site"
)

// NewSnapshot returns the snapshot of a recipe file's bytes.
func NewSnapshot(name, file string, content []byte) Snapshot {
	return NewFileSnapshot(SnapshotRecipe, name, file, content)
}

// NewFileSnapshot returns the snapshot of a file of the kind
// (SnapshotRecipe, SnapshotFurnace or SnapshotSite).
func NewFileSnapshot(kind, name, file string, content []byte) Snapshot {
	return Snapshot{SHA256: HashOf(content), Kind: kind, Name: name, File: file, Content: content}
}

// KindOrRecipe returns the snapshot's kind, SnapshotRecipe when unset.
func (s Snapshot) KindOrRecipe() string {
	if s.Kind == "" {
		return SnapshotRecipe
	}
	return s.Kind
}

// HashOf returns the lowercase hex SHA-256 of data.
func HashOf(data []byte) string {
	h := sha256.Sum256(data)
	return hex.EncodeToString(h[:])
}

// Verify checks that the content hashes to SHA256.
func (s Snapshot) Verify() error {
	if got := HashOf(s.Content); got != s.SHA256 {
		return fmt.Errorf("%s snapshot %q: content hashes to %s, want %s", s.KindOrRecipe(), s.Name, short(got), short(s.SHA256))
	}
	return nil
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// Run is one furnace run.
type Run struct {
	Code       string `json:"code"`
	Status     Status `json:"status"`
	RecipeName string `json:"recipe_name"`
	RecipeHash string `json:"recipe_sha256,omitempty"` // "" when logged without a recipe file (CSV import)
	Furnace    string `json:"furnace"`
	// FurnaceHash and SiteHash name the snapshots of the furnace and site
	// files the run was logged with; "" for runs logged before the log
	// kept them (their furnace is found through the recipe's path).
	FurnaceHash string `json:"furnace_sha256,omitempty"`
	SiteHash    string `json:"site_sha256,omitempty"`
	// Source is where a run imported from a lab's history sheet came
	// from ("runs.xlsx, sheet 2025, row 17"); "" for a run logged here.
	Source   string    `json:"source,omitempty"`
	Operator string    `json:"operator"`
	Lot      string    `json:"lot"` // foil lot
	Started  time.Time `json:"started,omitzero"`
	Ended    time.Time `json:"ended,omitzero"`
	Created  time.Time `json:"created,omitzero"`
	// CodePrefix is the prefix of the code a run logged without one is
	// given (the site file's run_codes; "" for DefaultCodePrefix). It is
	// not stored: the code carries it.
	CodePrefix string `json:"-"`
}

// Note is a timestamped remark on a run.
type Note struct {
	At   time.Time `json:"at"`
	Text string    `json:"text"`
}

// Outcome is one measured result of a run. Value is in Unit, the metric's
// canonical unit (see Metrics); Entered keeps what the user typed.
type Outcome struct {
	Metric   string    `json:"metric"`
	Value    float64   `json:"value"`
	Unit     string    `json:"unit"`
	Entered  string    `json:"entered,omitempty"`
	Method   string    `json:"method,omitempty"`
	Measured time.Time `json:"measured,omitzero"`
}

// Actual is one quantity of one step as the furnace log saw it: mean,
// minimum and maximum over the step's samples, in SI Unit, beside the
// planned value (NaN when the plan has none). Quantities: "temperature"
// (K), "pressure" (Pa), "flow:<gas>" (mol/s), "duration" and "start" (s;
// Mean = Min = Max).
type Actual struct {
	Step     int      `json:"step"` // 1-based
	Label    string   `json:"label"`
	Quantity string   `json:"quantity"`
	Unit     string   `json:"unit"`
	Planned  Optional `json:"planned"`
	Mean     float64  `json:"mean"`
	Min      float64  `json:"min"`
	Max      float64  `json:"max"`
	Samples  int      `json:"samples"`
}

// Deviation is an actual value outside its tolerance around the plan.
type Deviation struct {
	Step      int     `json:"step"`
	Label     string  `json:"label"`
	Quantity  string  `json:"quantity"`
	Unit      string  `json:"unit"`
	Planned   float64 `json:"planned"`
	Actual    float64 `json:"actual"`
	Tolerance float64 `json:"tolerance"`
	Message   string  `json:"message"`
}

// Attachment is a file that belongs to a run, such as a micrograph, by path
// and content hash.
type Attachment struct {
	Path   string    `json:"path"`
	SHA256 string    `json:"sha256"`
	Kind   string    `json:"kind"` // e.g. "micrograph", "furnace-log", "raman"
	Added  time.Time `json:"added,omitzero"`
}

// RunRecord is a run with everything logged about it.
type RunRecord struct {
	Run
	Params      map[string]float64 `json:"params"`
	Notes       []Note             `json:"notes,omitempty"`
	Outcomes    []Outcome          `json:"outcomes,omitempty"`
	Actuals     []Actual           `json:"actuals,omitempty"`
	Deviations  []Deviation        `json:"deviations,omitempty"`
	Attachments []Attachment       `json:"attachments,omitempty"`
	Override    *Override          `json:"override,omitempty"` // nil: the recipe passed check and safety when logged
	Corrections []Correction       `json:"corrections,omitempty"`
	// Aliases are the codes the run had in other logs before an import
	// with renumbering gave it a new one; run show finds it by them.
	Aliases []string `json:"aliases,omitempty"`
}

// Correction is a measurement replaced with `outcome add --replace`: the
// value it had and the one that replaced it (both in Unit, the metric's
// stored unit, and as typed), who replaced it and when.
type Correction struct {
	Metric     string    `json:"metric"`
	Unit       string    `json:"unit"`
	OldValue   float64   `json:"old_value"`
	OldEntered string    `json:"old_entered"`
	NewValue   float64   `json:"new_value"`
	NewEntered string    `json:"new_entered"`
	Who        string    `json:"who"`
	At         time.Time `json:"at"`
}

// Finish is what `run finish` adds to a running run.
type Finish struct {
	Status      Status // Done or Aborted
	Ended       time.Time
	Actuals     []Actual
	Deviations  []Deviation
	Note        string             // optional closing note
	Params      map[string]float64 // derived parameters to add, such as those of the logged conditions; none may be logged already
	Attachments []Attachment       // files of the run, such as the furnace log the actuals came from
}

// Name is a parameter or metric name known to the log, with its unit.
type Name struct {
	Name string
	Kind string // NameParam or NameMetric
	Unit string
}

// Kinds of Name.
const (
	NameParam  = "param"
	NameMetric = "metric"
)

// Optional is a number that may be missing: NaN in Go, null in JSON, NULL
// in SQL.
type Optional float64

// None is the missing Optional.
func None() Optional { return Optional(math.NaN()) }

// Valid reports whether the number is present.
func (o Optional) Valid() bool { return !math.IsNaN(float64(o)) }

// MarshalJSON writes null for a missing number.
func (o Optional) MarshalJSON() ([]byte, error) {
	if !o.Valid() || math.IsInf(float64(o), 0) {
		return []byte("null"), nil
	}
	return json.Marshal(float64(o))
}

// UnmarshalJSON reads null as missing.
func (o *Optional) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*o = None()
		return nil
	}
	var v float64
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	*o = Optional(v)
	return nil
}
