package main

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
