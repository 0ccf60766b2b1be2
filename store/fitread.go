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
	FitRuns(ctx context.Context, f Filter, metrics []string, each func(RunRecord) error) error
}
