package store

import (
	"fmt"
	"sort"
	"strings"
)

// Digest sums up a whole log so that two logs holding the same runs agree
// on it whatever their back end: row counts per table and a SHA-256 over
// the canonical JSON (encoding/json, map keys sorted) of every run in
// export order, then of every snapshot in hash order.
type Digest struct {
	Counts map[string]int // rows per table
	SHA256 string
}

// Runs is the number of runs.
func (d Digest) Runs() int { return d.Counts["runs"] }

// String is "N runs, M snapshots, sha256 0123456789ab".
func (d Digest) String() string {
	return fmt.Sprintf("%d runs, %d snapshots, sha256 %.12s", d.Counts["runs"], d.Counts["snapshots"], d.SHA256)
}

// Diff describes how d and e differ, table by table in name order, then
// the content hash ("" when equal).
func (d Digest) Diff(e Digest) string {
	tables := map[string]bool{}
	for t := range d.Counts {
		tables[t] = true
	}
	for t := range e.Counts {
		tables[t] = true
	}
	names := make([]string, 0, len(tables))
	for t := range tables {
		names = append(names, t)
	}
	sort.Strings(names)
	var out []string
	for _, t := range names {
		if d.Counts[t] != e.Counts[t] {
			out = append(out, fmt.Sprintf("%s %d against %d", t, d.Counts[t], e.Counts[t]))
		}
	}
	if d.SHA256 != e.SHA256 {
		out = append(out, fmt.Sprintf("content sha256 %.12s against %.12s", d.SHA256, e.SHA256))
	}
	return strings.Join(out, ", ")
}
