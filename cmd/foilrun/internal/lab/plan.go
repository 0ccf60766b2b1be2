// Package lab rebuilds what foilrun needs to know about logged runs from
// what the run log stored: the recipe, furnace and plan of a run from its
// recipe snapshot (Rebuilder), and the observations a calibration fit uses
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
	Recipe      *recipe.Recipe
	Furnace     *recipe.Furnace
	FurnacePath string // the file the furnace was loaded from
	Plan        *recipe.Plan
}

// Rebuilder rebuilds the plans of logged runs from their recipe snapshots.
// It loads each furnace file once and each snapshot once per hash, and
// counts the runs each furnace served.
//
// Furnace resolution, the one rule: the override file when one is given
// (--furnace), for every run; else the path the recipe's "furnace:" field
// names, as written when absolute, else relative to the folder of the file
// the snapshot was read from (the recipe's folder when its content was
// first logged: snapshots are kept once per content hash).
// The log keeps recipe snapshots, not furnace files, so that file must
// still be there; when it is not, or the recipe names none, the error
// wraps ErrNoFurnace. The site file plays no part in a plan and is never
// read.
type Rebuilder struct {
	log      store.RunLog
	override string
	furnaces map[string]*recipe.Furnace
	plans    map[string]*Rebuilt // by recipe hash
	used     map[string]int      // furnace path → runs rebuilt on it
}

// NewRebuilder returns a Rebuilder reading snapshots from l. A non-empty
// furnace is the override file; it is loaded now, so a bad override is
// reported before any run is read.
func NewRebuilder(l store.RunLog, furnace string) (*Rebuilder, error) {
	b := &Rebuilder{log: l, override: furnace, furnaces: map[string]*recipe.Furnace{}, plans: map[string]*Rebuilt{}, used: map[string]int{}}
	if furnace != "" {
		if _, err := b.load(furnace); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// Rebuild returns the recipe, furnace and plan of a logged run. Runs with
// the same recipe snapshot share one Rebuilt; callers must not change it.
func (b *Rebuilder) Rebuild(ctx context.Context, rec store.RunRecord) (*Rebuilt, error) {
	if rec.RecipeHash == "" {
		return nil, fmt.Errorf("run %s: %w", rec.Code, ErrNoSnapshot)
	}
	if rb, ok := b.plans[rec.RecipeHash]; ok {
		b.used[rb.FurnacePath]++
		return rb, nil
	}
	snap, err := b.log.Snapshot(ctx, rec.RecipeHash)
	if err != nil {
		return nil, fmt.Errorf("run %s: %w", rec.Code, err)
	}
	name := snap.File
	if name == "" {
		name = snap.Name
	}
	r, err := recipe.ParseRecipe(name, snap.Content)
	if err != nil {
		return nil, fmt.Errorf("run %s: recipe snapshot: %w", rec.Code, err)
	}
	path, err := b.furnacePath(rec.Code, r, snap)
	if err != nil {
		return nil, err
	}
	f, err := b.load(path)
	if err != nil {
		return nil, fmt.Errorf("run %s: %w", rec.Code, err)
	}
	rb := &Rebuilt{Recipe: r, Furnace: f, FurnacePath: path, Plan: recipe.Derive(r, f)}
	b.plans[rec.RecipeHash] = rb
	b.used[path]++
	return rb, nil
}

// furnacePath applies the resolution rule (see Rebuilder).
func (b *Rebuilder) furnacePath(code string, r *recipe.Recipe, snap store.Snapshot) (string, error) {
	if b.override != "" {
		return b.override, nil
	}
	if r.Furnace == "" {
		return "", &FurnaceError{Run: code, Recipe: r.Name}
	}
	path := r.Furnace
	if !filepath.IsAbs(path) && snap.File != "" {
		path = filepath.Join(filepath.Dir(snap.File), path)
	}
	if _, err := os.Stat(path); err != nil {
		return "", &FurnaceError{Run: code, Recipe: r.Name, Named: r.Furnace, Path: path}
	}
	return path, nil
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
	return fmt.Sprintf("run %s: recipe %q names furnace %q, not found at %s (the log keeps recipe snapshots, not furnace files)", e.Run, e.Recipe, e.Named, e.Path)
}

// Unwrap returns ErrNoFurnace.
func (e *FurnaceError) Unwrap() error { return ErrNoFurnace }

func (b *Rebuilder) load(path string) (*recipe.Furnace, error) {
	if f, ok := b.furnaces[path]; ok {
		return f, nil
	}
	f, err := recipe.LoadFurnace(path)
	if err != nil {
		return nil, err
	}
	b.furnaces[path] = f
	return f, nil
}

// FurnaceUse is one furnace file and how many rebuilt runs used it.
type FurnaceUse struct {
	Path string
	Name string // the furnace's name from the file
	Runs int
}

// Used lists the furnace files the rebuilt runs used, by path.
func (b *Rebuilder) Used() []FurnaceUse {
	var out []FurnaceUse
	for path, n := range b.used {
		out = append(out, FurnaceUse{Path: path, Name: b.furnaces[path].Name, Runs: n})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Path < out[j].Path })
	return out
}
