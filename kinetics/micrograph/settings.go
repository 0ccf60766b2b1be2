package micrograph

import (
	"fmt"
	"image"
	"math"
	"strings"
)

// Polarity says whether graphene domains look darker or brighter than bare
// copper.
type Polarity int

const (
	// PolarityAuto chooses from a bare reference when one is given, and
	// otherwise takes the smaller of the two gray-level classes as the
	// domains (right below 50 % coverage, wrong above it). The Result says
	// what was chosen and why.
	PolarityAuto Polarity = iota
	// DomainsDarker: domains are the class at or below the threshold.
	DomainsDarker
	// DomainsBrighter: domains are the class above the threshold.
	DomainsBrighter
)

// String returns "auto", "darker" or "brighter".
func (p Polarity) String() string {
	switch p {
	case PolarityAuto:
		return "auto"
	case DomainsDarker:
		return "darker"
	case DomainsBrighter:
		return "brighter"
	}
	return fmt.Sprintf("Polarity(%d)", int(p))
}

// ParsePolarity reads "auto", "darker" or "brighter" (any case).
func ParsePolarity(s string) (Polarity, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "auto":
		return PolarityAuto, nil
	case "darker", "dark":
		return DomainsDarker, nil
	case "brighter", "bright":
		return DomainsBrighter, nil
	}
	return 0, fmt.Errorf("%w: polarity %q, want auto, darker or brighter", ErrSettings, s)
}

// Defaults and bounds of Settings.
const (
	MinSide               = 16 // smallest width or height accepted, pixels
	DefaultDegree         = 2  // background surface degree
	MaxDegree             = 4  // largest background surface degree
	DefaultSmoothRadius   = 2  // binomial taps 1 4 6 4 1 (σ = 1 px)
	MaxSmoothRadius       = maxSmoothRadius
	DefaultMinAreaPixels  = 16  // specks smaller than this are dropped
	DefaultMaxValleyRatio = 0.5 // see Settings.MaxValleyRatio
)

// Settings controls Analyze. The zero value of every field except
// PixelSize selects its default.
type Settings struct {
	// PixelSize is the side of one pixel on the sample, in metres
	// (0.25 µm = 0.25e-6). Required: must be finite and > 0.
	PixelSize float64
	// Polarity of the domains; default PolarityAuto.
	Polarity Polarity
	// BackgroundDegree is the total degree (1…MaxDegree) of the
	// illumination surface removed before thresholding; 0 means
	// DefaultDegree, a negative value turns flattening off.
	BackgroundDegree int
	// SmoothRadius r (1…MaxSmoothRadius) of the binomial smoothing kernel
	// (2r+1 taps, σ = √(r/2) px); 0 means DefaultSmoothRadius, a negative
	// value turns smoothing off.
	SmoothRadius int
	// MinAreaPixels: domains of fewer pixels are dropped as specks and
	// count as bare. 0 means DefaultMinAreaPixels; 1 keeps everything.
	MinAreaPixels int
	// MaxValleyRatio in (0, 1): the histogram counts as two-peaked only
	// when its smoothed valley is below this fraction of the lower peak.
	// 0 means DefaultMaxValleyRatio.
	MaxValleyRatio float64
	// BareGray, when not nil, is the gray level of bare copper in the
	// image's own units (0–255 for 8-bit, 0–65535 for 16-bit images).
	BareGray *float64
	// BareRegion, when not empty, is a rectangle (in image coordinates)
	// known to be bare copper. It takes precedence over BareGray.
	BareRegion image.Rectangle
	// Crop, when not the zero rectangle, is the part of the image to
	// measure (image coordinates, Max exclusive). It must lie inside the
	// image and have an area; Result.Cuts says what was cut.
	Crop image.Rectangle
	// KeepInfoBar turns off the search for an instrument's info bar
	// (FindInfoBars) along the top and bottom of the measured field; by
	// default a bar found is cut away and Result.Cuts says so.
	KeepInfoBar bool
}

func (s Settings) resolve() (Settings, error) {
	if !(s.PixelSize > 0) || math.IsInf(s.PixelSize, 0) {
		return s, fmt.Errorf("%w: pixel size %g m, want a finite size above zero such as 0.25e-6 (0.25 µm)", ErrSettings, s.PixelSize)
	}
	if s.Polarity < PolarityAuto || s.Polarity > DomainsBrighter {
		return s, fmt.Errorf("%w: polarity %d, want auto, darker or brighter", ErrSettings, int(s.Polarity))
	}
	if s.BackgroundDegree == 0 {
		s.BackgroundDegree = DefaultDegree
	}
	if s.BackgroundDegree > MaxDegree {
		return s, fmt.Errorf("%w: background degree %d, want 1 to %d", ErrSettings, s.BackgroundDegree, MaxDegree)
	}
	if s.SmoothRadius == 0 {
		s.SmoothRadius = DefaultSmoothRadius
	}
	if s.SmoothRadius > MaxSmoothRadius {
		return s, fmt.Errorf("%w: smoothing radius %d, want 1 to %d", ErrSettings, s.SmoothRadius, MaxSmoothRadius)
	}
	if s.MinAreaPixels == 0 {
		s.MinAreaPixels = DefaultMinAreaPixels
	}
	if s.MinAreaPixels < 0 {
		return s, fmt.Errorf("%w: minimum area %d pixels, want 1 or more", ErrSettings, s.MinAreaPixels)
	}
	if s.MaxValleyRatio == 0 {
		s.MaxValleyRatio = DefaultMaxValleyRatio
	}
	if !(s.MaxValleyRatio > 0 && s.MaxValleyRatio < 1) {
		return s, fmt.Errorf("%w: valley ratio %g, want between 0 and 1", ErrSettings, s.MaxValleyRatio)
	}
	if s.BareGray != nil && (math.IsNaN(*s.BareGray) || *s.BareGray < 0) {
		return s, fmt.Errorf("%w: bare gray level %g, want 0 or more", ErrSettings, *s.BareGray)
	}
	return s, nil
}
