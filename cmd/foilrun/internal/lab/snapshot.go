package lab

import (
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// Snapshots returns the snapshots a new run on the plan stores beside its
// recipe's: the furnace file's bytes as loaded, and the site file's when
// site is not nil (nil otherwise).
func Snapshots(plan *recipe.Plan, site *recipe.Site) (furnace, siteSnap *store.Snapshot) {
	f := store.NewFileSnapshot(store.SnapshotFurnace, plan.Furnace.Name, plan.Furnace.File, plan.Furnace.Content)
	furnace = &f
	if site != nil {
		s := store.NewFileSnapshot(store.SnapshotSite, site.Name, site.File, site.Content)
		siteSnap = &s
	}
	return furnace, siteSnap
}
