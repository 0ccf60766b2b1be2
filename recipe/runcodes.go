package recipe

import (
	"fmt"
	"maps"
	"slices"
	"strconv"
)

// RunCodes is the site file's run_codes: the prefix of the run codes the
// log gives (the two digits of the run's year, a dash and a sequence
// number follow it: T226-0001), for the whole site and, under furnaces,
// for single furnaces by name:
//
//	run_codes:
//	  prefix: T
//	  furnaces:
//	    tube-2: T2
//
// A site that sets nothing keeps the log's default prefix, G.
type RunCodes struct {
	Prefix   string            `yaml:"prefix"`
	Furnaces map[string]string `yaml:"furnaces"` // furnace name → prefix
	Pos      Pos               `yaml:"-"`
}

// MaxCodePrefix is the longest run-code prefix.
const MaxCodePrefix = 8

// CodePrefixProblem says what is wrong with a run-code prefix ("" when
// nothing is): one to MaxCodePrefix capital letters or digits, starting
// with a letter (G, T2, LABA). The two digits of the year follow it
// directly, so a code reads back unambiguously: the prefix is all before
// the last two digits ahead of the dash.
func CodePrefixProblem(prefix string) string {
	if prefix == "" || len(prefix) > MaxCodePrefix {
		q := prefix
		if len(q) > 40 {
			q = q[:40] + "…"
		}
		return fmt.Sprintf("run-code prefix %s: want 1 to %d characters", strconv.QuoteToASCII(q), MaxCodePrefix)
	}
	for i := 0; i < len(prefix); i++ {
		c := prefix[i]
		if !(c >= 'A' && c <= 'Z' || i > 0 && c >= '0' && c <= '9') {
			return fmt.Sprintf("run-code prefix %s: want capital letters A-Z and digits, starting with a letter (e.g. T2)", strconv.QuoteToASCII(prefix))
		}
	}
	return ""
}

// CodePrefix returns the run-code prefix the site sets for runs in the
// named furnace: the furnace's own, else the site's, else "" (the log's
// default). A nil site sets nothing.
func (s *Site) CodePrefix(furnace string) string {
	if s == nil || s.RunCodes == nil {
		return ""
	}
	if p, ok := s.RunCodes.Furnaces[furnace]; ok {
		return p
	}
	return s.RunCodes.Prefix
}

// runCodes checks the site's run-code prefixes.
func (ps *problems) runCodes(rc *RunCodes) {
	if rc == nil {
		return
	}
	const hint = "a prefix is 1 to 8 capital letters and digits starting with a letter, e.g. \"T2\"; codes read T226-0001"
	if rc.Prefix != "" {
		if msg := CodePrefixProblem(rc.Prefix); msg != "" {
			ps.at(rc.Pos, "prefix", msg, hint)
		}
	}
	for _, name := range slices.Sorted(maps.Keys(rc.Furnaces)) {
		if msg := CodePrefixProblem(rc.Furnaces[name]); msg != "" {
			ps.at(rc.Pos, "furnaces", fmt.Sprintf("furnace %q: %s", name, msg), hint)
		}
	}
}
