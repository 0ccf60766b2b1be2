// Package lab rebuilds what foilrun needs to know about logged runs from
// what the run log stored: the recipe, furnace and plan of a run from its
// recipe and furnace snapshots (Rebuilder), the snapshots a new run stores
// (Snapshots), and the observations a calibration fit uses
// (Collect). It is shared by the commands that look back at logged runs
// (run finish, fit), so they resolve furnaces by one rule. It reads the
// run log and furnace files and never prints.
//
// All quantities are SI, as in recipe and kinetics.
package lab

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Errors callers can branch on (with errors.Is) to add a hint.
var (
	// ErrNoSnapshot: the run was logged without a recipe snapshot.
	ErrNoSnapshot = errors.New("logged without a recipe snapshot")
	// ErrNoFurnace: no furnace file for the run's recipe: none given, and
	// the recipe names none or the file it names is not there.
	ErrNoFurnace = errors.New("no furnace file")
)

// Rebuilt is a logged run's recipe, as its snapshot holds it, on the
// furnace the resolution rule chose, and the plan derived from the two.
type Rebuilt struct {
	Recipe  *recipe.Recipe
	Furnace *recipe.Furnace
	// FurnaceFrom says where the furnace came from: FromSnapshot,
	// FromOverride or FromPath.
	FurnaceFrom string
	// FurnacePath names the furnace for people: the file it was loaded
	// from (override, recorded path), or "snapshot 0123456789ab (file)".
	FurnacePath string
	Plan        *recipe.Plan
}

// Where a rebuilt run's furnace came from.
const (
	FromSnapshot = "snapshot" // the furnace file the run was logged with
	FromOverride = "override" // the file given with --furnace
	FromPath     = "path"     // the file the recipe names, as it is now (runs logged before furnace snapshots)
)

// Rebuilder rebuilds the plans of logged runs from their snapshots. It
// loads each furnace once and each snapshot once per hash, and counts the
// runs each furnace served.
//
// Furnace resolution, the one rule: the override file when one is given
// (--furnace), for every run; else the run's own furnace snapshot, the
// bytes of the furnace file it was logged with; else, for a run logged
// before the log kept furnace files, the path the recipe's "furnace:"
// field names, as written when absolute, else relative to the folder of
// the file the recipe snapshot was read from, as that file is now (Notes
// says so). When that file is not there, or the recipe names none, the
// error wraps ErrNoFurnace. The site file plays no part in a plan and is
// never read.
type Rebuilder struct {
	log      store.RunLog
	override string
	furnaces map[string]*recipe.Furnace // by key: "sha256:<hash>" or the path
	labels   map[string]string          // key → FurnacePath
	recipes  map[string]parsedRecipe    // by recipe hash
	plans    map[string]*Rebuilt        // by recipe hash and furnace key
	used     map[string]int             // furnace key → runs rebuilt on it
	oldRuns  map[string]int             // recorded path → runs logged before furnace snapshots
	oldOrder []string
}

// NewRebuilder returns a Rebuilder reading snapshots from l. A non-empty
// furnace is the override file; it is loaded now, so a bad override is
// reported before any run is read.
func NewRebuilder(l store.RunLog, furnace string) (*Rebuilder, error) {
	b := &Rebuilder{log: l, override: furnace, furnaces: map[string]*recipe.Furnace{}, labels: map[string]string{},
		recipes: map[string]parsedRecipe{}, plans: map[string]*Rebuilt{}, used: map[string]int{}, oldRuns: map[string]int{}}
	if furnace != "" {
		if _, err := b.loadPath(furnace); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// Rebuild returns the recipe, furnace and plan of a logged run. Runs with
// the same recipe and furnace share one Rebuilt; callers must not change
// it.
func (b *Rebuilder) Rebuild(ctx context.Context, rec store.RunRecord) (*Rebuilt, error) {
	if rec.RecipeHash == "" {
		return nil, fmt.Errorf("run %s: %w", rec.Code, ErrNoSnapshot)
	}
	r, snap, err := b.recipe(ctx, rec)
	if err != nil {
		return nil, err
	}
	key, from, err := b.furnace(ctx, rec, r, snap)
	if err != nil {
		return nil, err
	}
	pk := rec.RecipeHash + "|" + key
	if rb, ok := b.plans[pk]; ok {
		b.used[key]++
		return rb, nil
	}
	f := b.furnaces[key]
	rb := &Rebuilt{Recipe: r, Furnace: f, FurnaceFrom: from, FurnacePath: b.labels[key], Plan: recipe.Derive(r, f)}
	b.plans[pk] = rb
	b.used[key]++
	return rb, nil
}

// countStored counts a run whose stored profile stands in for its plan
// against the furnace the rule gives it (the override, else its furnace
// snapshot, loaded once), as Rebuild would.
func (b *Rebuilder) countStored(ctx context.Context, rec store.RunRecord) error {
	key := b.override
	if key == "" {
		var err error
		if key, err = b.loadSnapshot(ctx, rec.FurnaceHash); err != nil {
			return fmt.Errorf("run %s: %w", rec.Code, err)
		}
	}
	b.used[key]++
	return nil
}

// parsedRecipe is a recipe snapshot, parsed, and the file it was read
// from.
type parsedRecipe struct {
	r    *recipe.Recipe
	file string
}

// recipe returns the run's recipe from its snapshot, and the snapshot
// (without its content once parsed).
func (b *Rebuilder) recipe(ctx context.Context, rec store.RunRecord) (*recipe.Recipe, store.Snapshot, error) {
	if p, ok := b.recipes[rec.RecipeHash]; ok {
		return p.r, store.Snapshot{File: p.file}, nil
	}
	snap, err := b.log.Snapshot(ctx, rec.RecipeHash)
	if err != nil {
		return nil, snap, fmt.Errorf("run %s: %w", rec.Code, err)
	}
	name := snap.File
	if name == "" {
		name = snap.Name
	}
	r, err := recipe.ParseRecipe(name, snap.Content)
	if err != nil {
		return nil, snap, fmt.Errorf("run %s: recipe snapshot: %w", rec.Code, err)
	}
	b.recipes[rec.RecipeHash] = parsedRecipe{r, snap.File}
	return r, snap, nil
}

// furnace applies the resolution rule (see Rebuilder) and returns the
// chosen furnace's key, loaded into b.furnaces, and where it came from.
func (b *Rebuilder) furnace(ctx context.Context, rec store.RunRecord, r *recipe.Recipe, snap store.Snapshot) (string, string, error) {
	if b.override != "" {
		return b.override, FromOverride, nil
	}
	if rec.FurnaceHash != "" {
		key, err := b.loadSnapshot(ctx, rec.FurnaceHash)
		if err != nil {
			return "", "", fmt.Errorf("run %s: %w", rec.Code, err)
		}
		return key, FromSnapshot, nil
	}
	if r.Furnace == "" {
		return "", "", &FurnaceError{Run: rec.Code, Recipe: r.Name}
	}
	path := r.Furnace
	if !filepath.IsAbs(path) && snap.File != "" {
		path = filepath.Join(filepath.Dir(snap.File), path)
	}
	if _, err := os.Stat(path); err != nil {
		return "", "", &FurnaceError{Run: rec.Code, Recipe: r.Name, Named: r.Furnace, Path: path}
	}
	if _, err := b.loadPath(path); err != nil {
		return "", "", fmt.Errorf("run %s: %w", rec.Code, err)
	}
	if b.oldRuns[path] == 0 {
		b.oldOrder = append(b.oldOrder, path)
	}
	b.oldRuns[path]++
	return path, FromPath, nil
}

// FurnaceError says why a logged run has no furnace file; it matches
// ErrNoFurnace.
type FurnaceError struct {
	Run    string // run code
	Recipe string // recipe name
	Named  string // the furnace path the recipe names; "" when none
	Path   string // where that path was looked for
}

func (e *FurnaceError) Error() string {
	if e.Named == "" {
		return fmt.Sprintf("run %s: recipe %q names no furnace", e.Run, e.Recipe)
	}
	return fmt.Sprintf("run %s: recipe %q names furnace %q, not found at %s (the run was logged before the log kept furnace files)", e.Run, e.Recipe, e.Named, e.Path)
}

// Unwrap returns ErrNoFurnace.
func (e *FurnaceError) Unwrap() error { return ErrNoFurnace }

func (b *Rebuilder) loadPath(path string) (*recipe.Furnace, error) {
	if f, ok := b.furnaces[path]; ok {
		return f, nil
	}
	f, err := recipe.LoadFurnace(path)
	if err != nil {
		return nil, err
	}
	b.furnaces[path], b.labels[path] = f, path
	return f, nil
}

// loadSnapshot loads a furnace snapshot by hash and returns its key.
func (b *Rebuilder) loadSnapshot(ctx context.Context, hash string) (string, error) {
	key := "sha256:" + hash
	if _, ok := b.furnaces[key]; ok {
		return key, nil
	}
	snap, err := b.log.Snapshot(ctx, hash)
	if err != nil {
		return "", fmt.Errorf("furnace %w", err)
	}
	label := fmt.Sprintf("snapshot %.12s", hash)
	if snap.File != "" {
		label += " (" + snap.File + ")"
	}
	f, err := recipe.ParseFurnace(label, snap.Content)
	if err != nil {
		return "", fmt.Errorf("furnace snapshot: %w", err)
	}
	b.furnaces[key], b.labels[key] = f, label
	return key, nil
}

// Notes are what the caller should tell people about how the runs rebuilt
// so far found their furnaces: one line per furnace file that runs logged
// before the log kept furnace files were rebuilt on, as the file is now.
func (b *Rebuilder) Notes() []string {
	var out []string
	for _, path := range b.oldOrder {
		out = append(out, fmt.Sprintf("%d %s logged before the log kept furnace files: furnace read from %s as that file is now", b.oldRuns[path], plural(b.oldRuns[path], "run", "runs"), path))
	}
	return out
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// FurnaceUse is one furnace (a file or a snapshot) and how many rebuilt
// runs used it.
type FurnaceUse struct {
	Path string // the file, or "snapshot 0123456789ab (file)"
	Name string // the furnace's name from the file
	Runs int
}

// Used lists the furnaces the rebuilt runs used, by Path.
func (b *Rebuilder) Used() []FurnaceUse {
	var out []FurnaceUse
	for key, n := range b.used {
		out = append(out, FurnaceUse{Path: b.labels[key], Name: b.furnaces[key].Name, Runs: n})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Path < out[j].Path })
	return out
}
