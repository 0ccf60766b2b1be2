package store

import "context"

// FitReader is implemented by the back ends that can read the runs a
// calibration fit uses without the rest of each record. Callers
// type-assert a RunLog to it and fall back to Export when it is absent.
type FitReader interface {
	// FitRuns calls each, oldest first and from one consistent read, for
	// every run that passes the filter and has at least one outcome of
	// the given metrics, with a record holding only the run's code,
	// recipe and furnace snapshot hashes, its outcomes of those metrics
	// (metric, value, unit) and its actuals; everything else is left zero.
	// With pk.Version > 0 it also passes the run's stored profile of that
	// version (see ProfileKey), nil when none is stored.
	FitRuns(ctx context.Context, f Filter, metrics []string, pk ProfileKey, each func(rec RunRecord, profile []byte) error) error
}

// ProfileKey says which stored profile FitRuns passes with each run: the
// one of derivation version Version (0: none) for the run's recipe
// snapshot on the furnace whose file hashes to Furnace, or, with Furnace
// "", on the run's own furnace snapshot (a run without one then has none).
type ProfileKey struct {
	Version int
	Furnace string
}

// Profile is what the kinetics model needs of a recipe on a furnace,
// derived from their files by the caller (cmd/foilrun/internal/lab, which
// knows the model) and kept so that a fit reads it instead of parsing the
// recipe again. The store keeps Data as given and never reads it. A
// profile is derived data: it is not part of the Digest, a copy does not
// carry it, and it can be rebuilt from the snapshots at any time.
type Profile struct {
	Recipe  string // SHA-256 of the recipe snapshot
	Furnace string // SHA-256 of the furnace file's bytes the plan was derived on
	Version int    // the derivation version of Data (> 0)
	Data    []byte // the encoding, opaque to the store
}

// SnapshotPair is a recipe snapshot and a furnace snapshot that runs of
// the log were logged with.
type SnapshotPair struct {
	Recipe, Furnace string // SHA-256 of each
	// Stored reports whether a profile of the version asked for is stored
	// for the pair.
	Stored bool
}

// ProfileStore is implemented by the back ends that keep derived
// profiles (every SQL back end). Callers type-assert a RunLog to it; a
// log without it makes every fit derive its profiles.
type ProfileStore interface {
	// PutProfiles stores profiles in one transaction, each replacing any
	// stored for the same recipe, furnace and version.
	PutProfiles(ctx context.Context, ps []Profile) error
	// ReplaceProfiles removes every stored profile and stores ps, in one
	// transaction (a repair that rebuilds them all).
	ReplaceProfiles(ctx context.Context, ps []Profile) error
	// ProfilePairs lists the distinct recipe and furnace snapshot pairs of
	// the log's runs (runs without both have none), ordered by recipe and
	// furnace hash, each saying whether a profile of version is stored.
	ProfilePairs(ctx context.Context, version int) ([]SnapshotPair, error)
}
