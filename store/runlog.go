package store

import (
	"context"
	"errors"
	"fmt"
	"io"
)

// RunLog is the run log. Every back end (store/sqlite, store/postgres)
// implements it; every method takes a context and every write that touches
// more than one row happens in one transaction, so it lands whole or not
// at all.
type RunLog interface {
	// CreateRun logs a new run with everything in rec (params, notes,
	// outcomes, actuals, …) and stores each snapshot that is not nil (once
	// per hash; the bytes are kept as given): the recipe's, and the
	// furnace's and site's when given, each setting the run's hash of its
	// kind. An empty rec.Code gets a fresh code (see NextCode); an empty
	// rec.Status becomes Running. It returns the run's code.
	CreateRun(ctx context.Context, rec RunRecord, snaps ...*Snapshot) (string, error)
	// AddNote adds a timestamped note to a run.
	AddNote(ctx context.Context, code string, n Note) error
	// FinishRun ends a planned or running run: status, end time, actuals
	// and deviations from the furnace log, a closing note and the files
	// that belong to the run (the furnace log itself), all in one
	// transaction.
	FinishRun(ctx context.Context, code string, f Finish) error
	// AddOutcomes adds measured outcomes to a run, all or none.
	AddOutcomes(ctx context.Context, code string, outcomes []Outcome) error
	// ReplaceOutcomes corrects a run's measurements: every logged value of
	// each outcome's metric is replaced by the outcome, and each replaced
	// value is kept as a Correction by who, at the log's clock, all in one
	// transaction. A metric the run has no value of, or one given twice,
	// is ErrInvalid.
	ReplaceOutcomes(ctx context.Context, code string, outcomes []Outcome, who string) error
	// AddAttachment records a file that belongs to a run.
	AddAttachment(ctx context.Context, code string, a Attachment) error

	// Record returns a run with everything logged about it; ErrNotFound
	// (wrapped) for an unknown code.
	Record(ctx context.Context, code string) (RunRecord, error)
	// Snapshot returns the snapshot (recipe, furnace or site) with the
	// given SHA-256.
	Snapshot(ctx context.Context, sha256 string) (Snapshot, error)
	// List returns the runs that pass the filter, oldest first (newest
	// first with Filter.Newest).
	List(ctx context.Context, f Filter) ([]Run, error)
	// Count returns how many runs pass the filter's Where and Codes (its
	// Limit and Offset do not count).
	Count(ctx context.Context, f Filter) (int, error)
	// Names lists the parameter and metric names the log holds.
	Names(ctx context.Context) ([]Name, error)
	// Samples returns, for every run that passes the filter and has the
	// metric, the metric (mean over the run's measurements) and the named
	// parameters (NaN where a run lacks one), with the run codes.
	Samples(ctx context.Context, f Filter, metric string, params []string) ([]Sample, error)
	// Columns returns the metric and parameters of every run that passes
	// the filter and has the metric, as Samples does, one column per value
	// and no codes: what BestColumns and RankColumns take.
	Columns(ctx context.Context, q ColumnQuery) (Columns, error)
	// Export calls each for every run that passes the filter, oldest
	// first, from one consistent read.
	Export(ctx context.Context, f Filter, each func(RunRecord) error) error
	// Import adds runs and snapshots in one transaction: all or none. Runs
	// keep their codes; a code already in the log is an error unless the
	// bundle renumbers (Bundle.Renumber). progress,
	// when not nil, is called with the number of runs written so far.
	Import(ctx context.Context, b Bundle, progress func(done int)) (int, error)

	// Renamed returns the codes of the runs an import renumbered from the
	// code old (see Bundle.Renumber), oldest first; none: empty.
	Renamed(ctx context.Context, old string) ([]string, error)

	// SchemaVersion returns the database's schema version.
	SchemaVersion(ctx context.Context) (int, error)
	// Backup writes a consistent copy of the whole log to a new file at
	// path while others may be writing.
	Backup(ctx context.Context, path string) error
	// Check runs the back end's integrity checks and returns the problems
	// found (none: an empty slice).
	Check(ctx context.Context) ([]string, error)
	// Repair rebuilds, in one transaction, every table the log derives
	// from the runs (the run summary that best, rank and --where read)
	// and says what it rebuilt, one line each.
	Repair(ctx context.Context) ([]string, error)

	Copier
	io.Closer
}

// Copier copies a whole run log into another, empty one, of the same back
// end or another (`db copy`, a PostgreSQL backup to a SQLite file), and
// sums a log up to check a copy.
type Copier interface {
	// CopyTo copies every snapshot, run and code counter into dst, which
	// must hold no runs and no snapshots (ErrConflict otherwise), in one
	// transaction on dst that commits only when the copy, read back
	// inside it, has the source's Digest. progress, when not nil, is
	// called with the runs copied so far. It returns the digest both
	// sides share. A dst of a back end that cannot take a copy is
	// ErrInvalid.
	CopyTo(ctx context.Context, dst RunLog, progress func(done, total int)) (Digest, error)
	// Digest sums up the whole log from one consistent read.
	Digest(ctx context.Context) (Digest, error)
}

// Filter selects runs. Where holds expressions of the --where language
// (store/query); a run passes when it passes all of them. Codes, when not
// empty, keeps only the runs with those codes. Limit > 0 keeps only the
// first Limit runs, after skipping the first Offset; Newest makes List
// give the newest run first (the other reads ignore it and Offset).
type Filter struct {
	Where  []string
	Codes  []string
	Limit  int
	Offset int
	Newest bool
}

// Sample is one run's metric and parameter values for Best and Rank.
type Sample struct {
	Code   string
	Metric float64
	Params []float64 // in the order asked for; NaN where missing
}

// Bundle is a set of runs with the snapshots they refer to, as exported and
// imported.
type Bundle struct {
	Snapshots []Snapshot
	Runs      []RunRecord
	// Renumber gives a run whose code is already in the log a new code
	// (of its prefix, and the year it started) and keeps the old code
	// among its Aliases; false: such a run is an error.
	Renumber bool
}

// Errors callers can branch on (with errors.Is).
var (
	// ErrNotFound: no run with that code, no snapshot with that hash.
	ErrNotFound = errors.New("not found")
	// ErrInvalid: the caller's data or expression is wrong; the log is
	// unchanged.
	ErrInvalid = errors.New("invalid input")
	// ErrSchemaTooNew: the database was written by a newer foilrun.
	ErrSchemaTooNew = errors.New("database schema is newer than this foilrun")
	// ErrConflict: the write clashes with what is logged (a code already
	// used, a run already finished).
	ErrConflict = errors.New("conflict")
	// ErrSchemaBehind: the database's schema is older than this foilrun's
	// and the log was opened for reading, which never migrates.
	ErrSchemaBehind = errors.New("database schema is older than this foilrun")
	// ErrReadOnly: the log was opened for reading only, or the database
	// refused a write for lack of rights (then as a *PermissionError).
	ErrReadOnly = errors.New("the run log is read-only")
)

// PermissionError is a write the database refused for lack of rights: a
// read-only file, a role without the privilege, a read-only server. It
// matches ErrReadOnly (errors.Is) and its Hint names what is needed.
type PermissionError struct {
	Op   string // what was refused, e.g. "log the run"
	Need string // the privilege or permission that is missing
	Err  error  // the database's own error
}

func (e *PermissionError) Error() string {
	return fmt.Sprintf("%s: the database refused the write: %v", e.Op, e.Err)
}

// Unwrap returns the database's error and ErrReadOnly.
func (e *PermissionError) Unwrap() []error { return []error{e.Err, ErrReadOnly} }

// Hint names the privilege or permission that is missing.
func (e *PermissionError) Hint() string { return "this needs " + e.Need }
