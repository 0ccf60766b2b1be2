package lab

import (
	"context"
	"fmt"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/store"
)

// profiles finds the profiles Collect prepares: stored ones decoded once
// per recipe and furnace, the rest derived from plans rebuilt with the
// Rebuilder.
type profiles struct {
	b        *Rebuilder
	override string                   // the hash of the --furnace file, "" without one
	decoded  map[string]StoredProfile // by recipe|furnace hash
	derived  []store.Profile          // derived for want of a stored one, to store
}

func newProfiles(b *Rebuilder) *profiles {
	c := &profiles{b: b, decoded: map[string]StoredProfile{}}
	if b.override != "" {
		c.override = store.HashOf(b.furnaces[b.override].Content)
	}
	return c
}

// key is the ProfileKey the log's read passes profiles of: the override
// file's when one is given, else each run's furnace snapshot's.
func (c *profiles) key() store.ProfileKey {
	return store.ProfileKey{Version: ProfileVersion, Furnace: c.override}
}

// furnaceHash is the hash of the furnace file the rule gives the run: the
// override's, else the run's furnace snapshot ("" for runs logged before
// furnace snapshots, whose profiles are never stored: their furnace is a
// file as it is now).
func (c *profiles) furnaceHash(rec store.RunRecord) string {
	if c.override != "" {
		return c.override
	}
	return rec.FurnaceHash
}

// profile returns the run's profile, the key of the plan profile (shared
// by the runs of one recipe and furnace), and whether it is the run's
// logged conditions instead (src Logged, actuals that give conditions).
// data is the stored profile, nil when none is.
func (c *profiles) profile(ctx context.Context, rec store.RunRecord, data []byte, src Source) (string, kinetics.Profile, bool, error) {
	fh := c.furnaceHash(rec)
	key := rec.RecipeHash + "|" + fh
	sp, ok := c.decoded[key]
	if !ok && data != nil && fh != "" {
		var err error
		if sp, err = DecodeProfile(data); err == nil {
			ok = true
			c.decoded[key] = sp
		}
		// A profile that does not decode is derived again below and
		// replaced.
	}
	if ok && (src == Planned || len(StepConditions(rec.Actuals, sp.Steps)) == 0) {
		if err := c.b.countStored(ctx, rec); err != nil {
			return "", kinetics.Profile{}, false, err
		}
		return key, sp.Profile, false, nil
	}
	rb, err := c.b.Rebuild(ctx, rec)
	if err != nil {
		return "", kinetics.Profile{}, false, err
	}
	if plan, logged := LoggedPlan(rb.Plan, rec.Actuals, src); logged {
		return "", kinetics.NewProfile(plan), true, nil
	}
	if rb.FurnaceFrom == FromPath {
		key = rec.RecipeHash + "|path:" + rb.FurnacePath
	}
	if sp, ok = c.decoded[key]; !ok {
		sp = CarbonProfile(rb.Plan)
		c.decoded[key] = sp
		if rb.FurnaceFrom != FromPath {
			c.derived = append(c.derived, store.Profile{Recipe: rec.RecipeHash, Furnace: fh, Version: ProfileVersion, Data: sp.Encode()})
		}
	}
	return key, sp.Profile, false, nil
}

// store stores the derived profiles when the log keeps profiles.
func (c *profiles) store(ctx context.Context) error {
	ps, ok := c.b.log.(store.ProfileStore)
	if !ok || len(c.derived) == 0 {
		return nil
	}
	if err := ps.PutProfiles(ctx, c.derived); err != nil {
		return fmt.Errorf("store derived profiles: %w", err)
	}
	return nil
}
