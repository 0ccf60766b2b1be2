// Command foilrun plans, checks, predicts, logs and learns from graphene
// CVD growth runs on copper foil. See README.md.
package main

import (
	"os"
	"runtime/debug"
)

func main() {
	setGCPercent(shortGCPercent)
	os.Exit(run(os.Args[1:], newStreams()))
}

// shortGCPercent is the garbage collector's GOGC for foilrun's commands,
// which run for a fraction of a second to minutes and exit: the heap may
// grow to five times what is live before a collection, where Go's
// default (100) collects at twice. `runs list` of 7,000 runs took about a
// tenth less CPU so, for 4 MB more memory. serve, which runs for weeks,
// goes back to the default (see serveRun).
const shortGCPercent = 400

// setGCPercent sets the garbage collector's GOGC unless the user set
// GOGC or GOMEMLIMIT, which then rule as usual.
func setGCPercent(percent int) {
	if os.Getenv("GOGC") == "" && os.Getenv("GOMEMLIMIT") == "" {
		debug.SetGCPercent(percent)
	}
}
