package main

import (
	"fmt"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/imageoutcome"
	"slices"
	"strings"

	"github.com/foilrun/foilrun/kinetics/micrograph"
	"github.com/foilrun/foilrun/recipe"
)

// Polarity sources: where a micrograph measurement's polarity came from.
const (
	sourceGiven      = "given"      // --polarity, or a bare reference (--bare-gray, --bare-region) the user gave
	sourceInstrument = "instrument" // the --instrument preset of the site file
	sourcePrediction = "prediction" // the run's predicted coverage decides it (measurepredict.go)
	sourceGuess      = "guess"      // the smaller class was taken as the domains
)

// imageSettings are the analysis settings of one micrograph with where
// its polarity came from and how its island density is stored.
type imageSettings struct {
	set         micrograph.Settings
	source      string
	instrument  string  // preset name, "" for none
	islandLimit float64 // coverage below which islands are stored as nuclei_density
	refuseGuess bool    // a guessed polarity is an error (outcome measure stores nothing guessed)
	// predicted, with source prediction, says which class the run's
	// predicted coverage makes the domains; undecided says why a
	// prediction did not decide it.
	predicted *predictedSide
	undecided string
}

// imageSettings resolves the flags and the --instrument preset into the
// settings of each of n images: one --pixel for all, one per image, or the
// preset's; different pixel sizes need a preset.
func (mf *measureFlags) imageSettings(n int) ([]*imageSettings, error) {
	preset, err := mf.preset()
	if err != nil {
		return nil, err
	}
	sizes, err := mf.pixelSizes(n, preset)
	if err != nil {
		return nil, err
	}
	base, err := mf.settings(preset)
	if err != nil {
		return nil, err
	}
	limit, err := recipe.ParseFraction(mf.islandLimit)
	if err != nil || !(limit >= 0 && limit <= 1) {
		return nil, usagef("--island-limit %q: want a coverage between 0 and 100 %%, e.g. 30%%", mf.islandLimit)
	}
	src := sourceGuess
	switch {
	case base.Polarity != micrograph.PolarityAuto && mf.polarity != "" && !strings.EqualFold(mf.polarity, "auto"):
		src = sourceGiven
	case preset != nil:
		src = sourceInstrument
	case base.BareGray != nil || !base.BareRegion.Empty():
		src = sourceGiven
	}
	out := make([]*imageSettings, n)
	for i := range out {
		s := base
		s.PixelSize = sizes[i]
		out[i] = &imageSettings{set: s, source: src, islandLimit: limit}
		if preset != nil {
			out[i].instrument = preset.Name
		}
	}
	return out, nil
}

// preset loads the --instrument preset from the --site file, nil without
// --instrument.
func (mf *measureFlags) preset() (*recipe.ImagingPreset, error) {
	if mf.instrument == "" {
		return nil, nil
	}
	if mf.site == "" {
		return nil, withHint(usagef("--instrument %q needs the site file that lists it", mf.instrument), "give --site FILE with an imaging: list (see foilrun new site)")
	}
	site, err := recipe.LoadSite(mf.site)
	if err != nil {
		return nil, inputError(err)
	}
	if p := site.Instrument(mf.instrument); p != nil {
		return p, nil
	}
	var known []string
	for _, p := range site.Imaging {
		known = append(known, p.Name)
	}
	hint := "add it to the site file's imaging: list"
	if len(known) > 0 {
		hint = "known instruments: " + strings.Join(known, ", ")
	}
	return nil, withHint(usagef("--instrument %q: the site file %q has no such imaging preset", mf.instrument, mf.site), hint)
}

// pixelSizes returns the pixel size of each of n images in metres.
func (mf *measureFlags) pixelSizes(n int, preset *recipe.ImagingPreset) ([]float64, error) {
	if len(mf.pixels) == 0 {
		if preset == nil || preset.Pixel.IsZero() {
			return nil, usagef("--pixel is required with an image, e.g. --pixel 0.25um")
		}
		return slices.Repeat([]float64{preset.Pixel.SI}, n), nil
	}
	if len(mf.pixels) != 1 && len(mf.pixels) != n {
		return nil, usagef("%d --pixel values for %d images: give one for all or one per image, in order", len(mf.pixels), n)
	}
	sizes := make([]float64, n)
	for i := range sizes {
		text := mf.pixels[min(i, len(mf.pixels)-1)]
		px, err := recipe.Parse(text, recipe.Length)
		if err != nil {
			return nil, usagef("--pixel: %v", err)
		}
		if !(px.SI >= minPixel && px.SI <= maxPixel) {
			return nil, usagef("--pixel %q: want a pixel size between 0.1 nm and 1 mm", text)
		}
		sizes[i] = px.SI
	}
	for i := range sizes {
		if sizes[i] != sizes[0] && preset == nil {
			return nil, withHint(usagef("--image %q has pixel %q and --image %q has pixel %q: fields of view at different pixel sizes need an --instrument preset",
				mf.images[0], mf.pixels[0], mf.images[i], mf.pixels[i]),
				"measure them separately, or name the instrument they were taken with (--instrument NAME --site FILE)")
		}
	}
	return sizes, nil
}

// settings reads --polarity (else the preset's), --min-area, --bare-gray
// (else the preset's), --bare-region, --crop and --keep-info-bar.
func (mf *measureFlags) settings(preset *recipe.ImagingPreset) (micrograph.Settings, error) {
	pol, err := micrograph.ParsePolarity(mf.polarity)
	if err != nil {
		return micrograph.Settings{}, usagef("--polarity: %v", err)
	}
	if pol == micrograph.PolarityAuto && preset != nil {
		pol, _ = micrograph.ParsePolarity(preset.Polarity) // validated at load
	}
	set := micrograph.Settings{Polarity: pol, MinAreaPixels: mf.minArea, KeepInfoBar: mf.keepBar}
	switch {
	case mf.bareGraySet:
		g := mf.bareGray
		set.BareGray = &g
	case preset != nil && preset.BareGray != nil:
		g := *preset.BareGray
		set.BareGray = &g
	}
	if mf.bareRegion != "" {
		if set.BareRegion, err = parseRect(mf.bareRegion); err != nil {
			return set, usagef("--bare-region: %v", err)
		}
	}
	if mf.crop != "" {
		if set.Crop, err = parseRect(mf.crop); err != nil {
			return set, withHint(usagef("--crop: %v", err), "give the corners x0,y0,x1,y1 with x0 < x1 and y0 < y1")
		}
	}
	return set, nil
}

// measurements are the outcomes of one micrograph (imageoutcome), with
// the island-limit note added to out.
func (is *imageSettings) measurements(res *micrograph.Result, out *imageResult) []measurement {
	ms, notes := imageoutcome.Measurements(res, imageoutcome.Settings{Source: is.source, Instrument: is.instrument, IslandLimit: is.islandLimit})
	out.Notes = append(out.Notes, notes...)
	return ms
}

// fieldMeans labels each field's measurements with its place among n
// fields and appends, per metric, the mean over the fields that have it.
func fieldMeans(fields [][]measurement, files []string) []measurement {
	if len(fields) == 1 {
		return fields[0]
	}
	var out []measurement
	type acc struct {
		sum  float64
		n    int
		m    measurement
		srcs []string
	}
	var order []string
	sums := map[string]*acc{}
	for i, ms := range fields {
		for _, m := range ms {
			a := sums[m.Metric]
			if a == nil {
				a = &acc{m: m}
				sums[m.Metric] = a
				order = append(order, m.Metric)
			}
			a.sum += m.Value
			a.n++
			if !slices.Contains(a.srcs, m.PolaritySource) {
				a.srcs = append(a.srcs, m.PolaritySource)
			}
			m.Method += fmt.Sprintf("; field %d of %d (%s)", i+1, len(fields), files[i])
			out = append(out, m)
		}
	}
	for _, k := range order {
		a := sums[k]
		mean := a.sum / float64(a.n)
		m := measurement{Metric: k, Value: mean, Unit: a.m.Unit, PolaritySource: strings.Join(a.srcs, ","),
			Method: fmt.Sprintf("mean of %d fields of view (%s)", a.n, a.m.Method)}
		m.Text = num(mean, 4) + " " + a.m.Unit
		if k == "coverage" {
			m.Text = fixed(mean*100, 1) + " %"
		}
		out = append(out, m)
	}
	return out
}
