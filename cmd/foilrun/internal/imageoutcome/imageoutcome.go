// Package imageoutcome turns a measured micrograph into the outcomes a
// run logs: coverage, the island density (stored as nuclei_density only
// below the island limit, where islands rarely merge) and the mean
// interior domain size, each with the method that produced it. `measure
// image`, `outcome measure` and the upload of `foilrun serve` all use it,
// so a micrograph gives the same outcomes whichever way it comes in.
package imageoutcome

import (
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/kinetics/micrograph"
	"github.com/foilrun/foilrun/recipe"
)

// Measurement is one measured outcome, as shown and as stored.
type Measurement struct {
	Metric string  `json:"metric"`
	Value  float64 `json:"value"`
	Unit   string  `json:"unit"`
	Method string  `json:"method"`
	Text   string  `json:"text"` // as shown to people
	// PolaritySource says where the polarity of a micrograph measurement
	// came from: given, instrument, prediction or guess.
	PolaritySource string `json:"polarity_source,omitempty"`
}

// Settings are what the outcomes of one micrograph depend on besides the
// analysis itself.
type Settings struct {
	Source     string // where the polarity came from (Measurement.PolaritySource)
	Instrument string // the instrument preset's name, "" for none
	// IslandLimit is the coverage (fraction) at and above which the
	// island density is stored as island_density, not nuclei_density.
	IslandLimit float64
	// Suffix, when set, ends the method text ("uploaded in the browser").
	Suffix string
}

// DefaultIslandLimit is the island limit of `--island-limit` and of the
// web upload: 30 % coverage (common practice: below about a third of the
// surface covered, islands rarely merge).
const DefaultIslandLimit = 0.30

// PhaseName names a one-phase micrograph's phase; "" for a two-phase one.
func PhaseName(p micrograph.Phase) string {
	switch p {
	case micrograph.PhaseCovered:
		return "continuous film"
	case micrograph.PhaseBare:
		return "bare copper"
	}
	return ""
}

// Method describes how res was measured.
func Method(res *micrograph.Result, s Settings) string {
	m := "micrograph: otsu threshold after polynomial flattening"
	if p := PhaseName(res.Phase); p != "" {
		m = "micrograph: " + p + " (one-peaked histogram against the bare-copper gray)"
	}
	m += fmt.Sprintf("; domains %s, polarity_source %s", res.Polarity, s.Source)
	if s.Instrument != "" {
		m += "; instrument " + s.Instrument
	}
	r := res.Region
	if len(res.Cuts) > 0 {
		m += fmt.Sprintf("; measured x %d–%d, y %d–%d", r.Min.X, r.Max.X, r.Min.Y, r.Max.Y)
	}
	if s.Suffix != "" {
		m += "; " + s.Suffix
	}
	return m
}

// Measurements are the outcomes of one micrograph, with a note when the
// island density is stored as island_density.
func Measurements(res *micrograph.Result, s Settings) ([]Measurement, []string) {
	method := Method(res, s)
	var notes []string
	ms := []Measurement{{Metric: "coverage", Value: res.Coverage, Unit: "1", Method: method, Text: fmt.Sprintf("%.1f %%", res.Coverage*100)}}
	if res.Counted > 0 {
		metric := "nuclei_density"
		if res.Coverage >= s.IslandLimit {
			metric = "island_density"
			notes = append(notes, fmt.Sprintf("coverage %.1f %% is at or above the island limit %.0f %%: merged islands count once, so the island density is stored as island_density, not as nuclei_density",
				100*res.Coverage, 100*s.IslandLimit))
		}
		ms = append(ms, Measurement{Metric: metric, Value: res.DensityPerMM2(), Unit: "1/mm2", Method: method + "; separate islands, counting frame", Text: sig(res.DensityPerMM2(), 4) + " /mm²"})
	}
	if res.Sizes.N > 0 {
		if um, err := recipe.In(res.Sizes.Mean, "um"); err == nil {
			ms = append(ms, Measurement{Metric: "domain_size", Value: um, Unit: "um", Method: method + "; mean area-equivalent diameter, interior domains", Text: sig(um, 4) + " um"})
		}
	}
	for i := range ms {
		ms[i].PolaritySource = s.Source
	}
	return ms, notes
}

// sig writes v with p significant digits.
func sig(v float64, p int) string {
	return strings.TrimSpace(fmt.Sprintf("%.*g", p, v))
}
