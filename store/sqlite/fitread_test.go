package sqlite

import (
	"testing"

	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/storetest"
)

// TestFitRuns checks the narrow read a calibration fit uses.
func TestFitRuns(t *testing.T) {
	t.Parallel()
	storetest.FitRuns(t, func(t *testing.T) store.RunLog {
		db, _ := openTemp(t)
		return db
	})
}

// TestProfiles checks the stored kinetics profiles and their read by fit.
func TestProfiles(t *testing.T) {
	t.Parallel()
	storetest.Profiles(t, func(t *testing.T) store.RunLog {
		db, _ := openTemp(t)
		return db
	})
}
