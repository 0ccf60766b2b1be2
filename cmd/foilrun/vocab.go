package main

import (
	"errors"
	"fmt"

	"github.com/foilrun/foilrun/kinetics"
)

// oldSpellings maps the metric words foilrun used to accept on the command
// line to the one word it uses now: the metric's name as stored
// (coverage, nuclei_density, domain_size), and time_to_99 for
// window --show. Each old word is refused with an error naming the new one
// rather than quietly accepted.
var oldSpellings = map[string]string{
	"density":        "nuclei_density",
	"nuclei-density": "nuclei_density",
	"domain-size":    "domain_size",
	"size":           "domain_size",
	"time-to-99":     "time_to_99",
}

// oldSpelling returns a usage error naming the word to write when value,
// given to flag, is an old spelling; otherwise nil.
func oldSpelling(flag, value string) error {
	now, ok := oldSpellings[value]
	if !ok {
		return nil
	}
	return withHint(usagef("%s %q: foilrun now spells it %s", flag, value, now),
		"write "+flag+" "+now+" (the metrics are spelled as stored: coverage, nuclei_density, domain_size)")
}

// kineticsFlags names the flag that carries each kind of kinetics input on
// the command line; the library's messages name no flag.
var kineticsFlags = map[kinetics.InputKind]string{
	kinetics.KindTarget: "--target",
	kinetics.KindVary:   "--vary",
	kinetics.KindFix:    "--fix",
	kinetics.KindMetric: "--metric",
}

// onFlag puts the flag that carried a value in front of the library's
// error about it and marks it a usage error, keeping the library's hint:
// `--vary: vary "time": unknown parameter "time"; use "duration"`. An error
// that is no kinetics input error of those kinds is returned as it is.
func onFlag(err error) error {
	var ie *kinetics.InputError
	if !errors.As(err, &ie) {
		return err
	}
	flag, ok := kineticsFlags[ie.Kind]
	if !ok {
		return err
	}
	return asUsage(fmt.Errorf("%s: %w", flag, err))
}
