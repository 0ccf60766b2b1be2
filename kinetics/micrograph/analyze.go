package micrograph

import (
	"fmt"
	"image"
	"math"
)

// Phase names the outcome of an image whose histogram has one peak.
type Phase string

// Phases of a one-peaked image resolved by a bare reference.
const (
	PhaseMixed   Phase = ""        // two classes were found and measured
	PhaseBare    Phase = "bare"    // the whole field is bare copper
	PhaseCovered Phase = "covered" // the whole field is graphene
)

// Domain is one connected domain kept after speck removal.
type Domain struct {
	AreaPixels int     // pixels
	Area       float64 // m²
	Diameter   float64 // area-equivalent diameter 2·√(A/π), m
	CentroidX  float64 // pixels from the left edge of the measured field (Result.Region)
	CentroidY  float64 // pixels from the top edge of the measured field
	Edge       bool    // touches the image border, so its size is cut off
	Counted    bool    // counted by the counting-frame rule (see Result.Density)
}

// Result is what Analyze measured.
type Result struct {
	Width, Height int // pixels of the measured field (Region)
	// Region is the measured field in image coordinates: the crop, or
	// the whole image, less any info bar; Cuts says, a line each, what
	// was cut from the image to get it (none when nothing was).
	Region    image.Rectangle
	Cuts      []string
	BitDepth  int     // 8 or 16: the unit of the gray levels below
	PixelSize float64 // m
	Settings  Settings

	// Threshold is Otsu's threshold on the flattened, smoothed image, in
	// gray levels of BitDepth: the lower class is ≤ Threshold.
	Threshold      float64
	ValleyRatio    float64  // histogram valley / lower peak (see Settings.MaxValleyRatio)
	Polarity       Polarity // as used: DomainsDarker or DomainsBrighter
	PolarityReason string   // why that polarity, in words
	Phase          Phase    // PhaseMixed, or the phase of a one-peaked image

	Coverage float64 // fraction of the image area covered by kept domains, 0…1
	Count    int     // kept domains: Interior + Edge
	Interior int     // kept domains not touching the border
	Edge     int     // kept domains touching the border
	Specks   int     // components dropped for being smaller than MinAreaPixels
	// Counted is the number of domains touching neither the right nor the
	// bottom border (counting-frame rule), and Density = Counted / area
	// in domains per m². Each domain of a plane tiled with frames is
	// counted in exactly one frame, so the estimate is unbiased for
	// domains smaller than the frame.
	Counted int
	Density float64
	// Sizes summarises the area-equivalent diameters of Interior domains
	// (edge domains are cut off and would bias the sizes low).
	Sizes   SizeStats
	Domains []Domain

	// Notes are remarks a reader of the numbers should see.
	Notes []string

	runs     []run
	runLabel []int32 // per run: index into Domains, or −1
}

// DensityPerMM2 returns Density in domains per mm².
func (r *Result) DensityPerMM2() float64 { return r.Density * 1e-6 }

// Analyze measures graphene domains in a micrograph: luma of the image,
// illumination flattened (see the package doc), binomial smoothing, Otsu's
// threshold, polarity, 8-connected domains, specks dropped, then coverage,
// counts, density and sizes. Bad settings return an error wrapping
// ErrSettings; an image under MinSide pixels a side ErrTooSmall; a uniform
// image ErrUniform; a one-peaked histogram without a bare reference a
// *OnePeakError. Analyze panics if img is nil.
func Analyze(img image.Image, s Settings) (*Result, error) {
	s, err := s.resolve()
	if err != nil {
		return nil, fmt.Errorf("analyze micrograph: %w", err)
	}
	img, region, cuts, err := field(img, s)
	if err != nil {
		return nil, fmt.Errorf("analyze micrograph: %w", err)
	}
	b := img.Bounds()
	if b.Dx() < MinSide || b.Dy() < MinSide {
		return nil, fmt.Errorf("analyze micrograph: %w: %d×%d pixels, want at least %d×%d",
			ErrTooSmall, b.Dx(), b.Dy(), MinSide, MinSide)
	}
	res := &Result{Width: b.Dx(), Height: b.Dy(), BitDepth: bitDepth(img), PixelSize: s.PixelSize, Settings: s, Region: region, Cuts: cuts}
	unit := 1.0 // 16-bit levels per native level
	if res.BitDepth == 8 {
		unit = 257
	}
	p, hist, err := flattenSmoothed(img, s, res, unit)
	if err != nil {
		return nil, fmt.Errorf("analyze micrograph: %w", err)
	}
	t, ok := Otsu(hist)
	if !ok {
		return nil, fmt.Errorf("analyze micrograph: %w: one gray level left after flattening and smoothing", ErrUniform)
	}
	pk := shape(hist, t)
	res.Threshold = float64(t) / unit
	res.ValleyRatio = pk.valleyRatio

	bare, haveBare, bareWhat, err := bareLevel(p, s, b, unit)
	if err != nil {
		return nil, fmt.Errorf("analyze micrograph: %w", err)
	}
	if pk.valleyRatio >= s.MaxValleyRatio {
		if !haveBare {
			return nil, fmt.Errorf("analyze micrograph: %w", &OnePeakError{
				Peak: float64(pk.peak) / unit, Spread: pk.spread / unit, ValleyRatio: pk.valleyRatio,
				MaxValley: s.MaxValleyRatio, MaxGray: 65535 / unit})
		}
		onePhase(res, pk, bare, bareWhat, unit)
		return res, nil
	}

	brighter, reason := choosePolarity(s.Polarity, hist, t, bare, haveBare, bareWhat, unit)
	res.Polarity, res.PolarityReason = DomainsDarker, reason
	if brighter {
		res.Polarity = DomainsBrighter
	}
	runs, rowStart := runsOf(p, uint16(t), brighter)
	p = nil // the plane is no longer needed; let it go before the measurements
	label, n := labelRuns(runs, rowStart, res.Height)
	measure(res, runs, label, n, s.MinAreaPixels)
	if s.Polarity == PolarityAuto && !haveBare {
		res.Notes = append(res.Notes, fmt.Sprintf(
			"polarity was chosen as the smaller class; if the true coverage is above one half the domains are the other class (coverage %.1f %%): check the overlay, or give the polarity or a bare region",
			100*(1-res.Coverage)))
	}
	return res, nil
}

// flattenSmoothed returns the 16-bit plane of img divided by its fitted
// illumination (when s.BackgroundDegree > 0; a note on res when the fit
// fails) and smoothed with radius s.SmoothRadius, and its histogram, made
// in one pass (prepare) on all cores. unit is 16-bit levels per native
// level. A uniform image returns an error wrapping ErrUniform.
func flattenSmoothed(img image.Image, s Settings, res *Result, unit float64) (*plane, []uint64, error) {
	var bg *background
	if s.BackgroundDegree > 0 {
		if bg = fitBackground(img, s.BackgroundDegree); bg == nil {
			res.Notes = append(res.Notes, "illumination surface could not be fitted; image left unflattened")
		}
	}
	if level, ok := uniform(img); ok {
		return nil, nil, fmt.Errorf("%w: every pixel is gray %g of %g; a blank, black or saturated frame has nothing to measure",
			ErrUniform, float64(level)/unit, 65535/unit)
	}
	p, hist := prepare(img, bg, s.SmoothRadius, numWorkers(img.Bounds().Dy()))
	return p, hist, nil
}

// bareLevel returns the bare-copper level in 16-bit units from the bare
// region (mean of the processed image inside it) or the bare gray level.
func bareLevel(p *plane, s Settings, b image.Rectangle, unit float64) (level float64, ok bool, what string, err error) {
	if !s.BareRegion.Empty() {
		r := s.BareRegion.Intersect(b)
		if r.Empty() {
			return 0, false, "", fmt.Errorf("%w: bare region %v lies outside the image %v", ErrSettings, s.BareRegion, b)
		}
		sum := 0.0
		for y := r.Min.Y; y < r.Max.Y; y++ {
			row := p.row(y - b.Min.Y)
			for x := r.Min.X; x < r.Max.X; x++ {
				sum += float64(row[x-b.Min.X])
			}
		}
		level = sum / float64(r.Dx()*r.Dy())
		return level, true, fmt.Sprintf("bare region %v (mean gray %.4g)", r, level/unit), nil
	}
	if s.BareGray != nil {
		return *s.BareGray * unit, true, fmt.Sprintf("bare gray level %.4g", *s.BareGray), nil
	}
	return 0, false, "", nil
}

// onePhase fills res for a one-peaked image with a bare reference: the
// field is bare when its median lies within 3 robust standard deviations
// (at least 1 % of full scale) of the bare level, else covered.
func onePhase(res *Result, pk peaks, bare float64, bareWhat string, unit float64) {
	tol := max(3*pk.spread, 0.01*65535)
	d := pk.median - bare
	if math.Abs(d) <= tol {
		res.Phase, res.Coverage = PhaseBare, 0
		res.Polarity = DomainsDarker
		res.PolarityReason = fmt.Sprintf("one-peaked histogram at gray %.4g, within %.2g of the %s: all bare copper",
			pk.median/unit, tol/unit, bareWhat)
		return
	}
	res.Phase, res.Coverage = PhaseCovered, 1
	res.Polarity = DomainsBrighter
	side := "brighter"
	if d < 0 {
		res.Polarity, side = DomainsDarker, "darker"
	}
	res.PolarityReason = fmt.Sprintf("one-peaked histogram at gray %.4g, %s than the %s by more than %.2g: all graphene",
		pk.median/unit, side, bareWhat, tol/unit)
	res.Notes = append(res.Notes, "the field is fully covered: domains have merged and cannot be counted")
}

// choosePolarity returns whether domains are the upper class, and why.
func choosePolarity(pol Polarity, hist []uint64, t int, bare float64, haveBare bool, bareWhat string, unit float64) (bool, string) {
	switch pol {
	case DomainsBrighter:
		return true, "domains brighter than copper, as given"
	case DomainsDarker:
		return false, "domains darker than copper, as given"
	}
	if haveBare {
		if bare <= float64(t) {
			return true, fmt.Sprintf("auto: the %s is at or below the threshold %.4g, so copper is the darker class and domains the brighter", bareWhat, float64(t)/unit)
		}
		return false, fmt.Sprintf("auto: the %s is above the threshold %.4g, so copper is the brighter class and domains the darker", bareWhat, float64(t)/unit)
	}
	var below, total uint64
	for i, c := range hist {
		total += c
		if i <= t {
			below += c
		}
	}
	fb := float64(below) / float64(total)
	if fb < 0.5 {
		return false, fmt.Sprintf("auto: the darker class is the smaller (%.1f %% of pixels), taken as domains", 100*fb)
	}
	return true, fmt.Sprintf("auto: the brighter class is the smaller (%.1f %% of pixels), taken as domains", 100*(1-fb))
}

// measure turns labelled runs into the counts, coverage and sizes of res.
func measure(res *Result, runs []run, label []int32, n int, minArea int) {
	type comp struct {
		area       int64
		sx, sy     float64
		left, top  bool
		right, bot bool
	}
	comps := make([]comp, n)
	w, h := int32(res.Width), int32(res.Height)
	for i, r := range runs {
		c := &comps[label[i]]
		l := int64(r.x1 - r.x0)
		c.area += l
		c.sx += float64(l) * (float64(r.x0+r.x1-1) / 2)
		c.sy += float64(l) * float64(r.y)
		c.left = c.left || r.x0 == 0
		c.right = c.right || r.x1 == w
		c.top = c.top || r.y == 0
		c.bot = c.bot || r.y == h-1
	}
	idx := make([]int32, n)
	var covered int64
	var diam []float64
	px2 := res.PixelSize * res.PixelSize
	for i, c := range comps {
		if c.area < int64(minArea) {
			idx[i] = -1
			res.Specks++
			continue
		}
		idx[i] = int32(len(res.Domains))
		a := float64(c.area) * px2
		d := Domain{
			AreaPixels: int(c.area), Area: a, Diameter: 2 * math.Sqrt(a/math.Pi),
			CentroidX: c.sx/float64(c.area) + 0.5, CentroidY: c.sy/float64(c.area) + 0.5,
			Edge: c.left || c.right || c.top || c.bot, Counted: !c.right && !c.bot,
		}
		res.Domains = append(res.Domains, d)
		covered += c.area
		if d.Edge {
			res.Edge++
		} else {
			res.Interior++
			diam = append(diam, d.Diameter)
		}
		if d.Counted {
			res.Counted++
		}
	}
	res.Count = len(res.Domains)
	total := float64(res.Width) * float64(res.Height)
	res.Coverage = float64(covered) / total
	res.Density = float64(res.Counted) / (total * px2)
	res.Sizes = summarise(diam)
	res.runs = runs
	res.runLabel = label
	for i := range label {
		label[i] = idx[label[i]]
	}
}
