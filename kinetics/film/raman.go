package film

import (
	"errors"
	"fmt"
	"math"
)

// Raman thresholds. All are common practice (rules of thumb of the trade,
// not a standard); the D/G value is from memory.
const (
	// MonolayerMin2DG: I(2D)/I(G) at or above this is monolayer-like.
	MonolayerMin2DG = 2.0
	// MonolayerMax2DWidth: a monolayer's single 2D band is about
	// 25–35 cm⁻¹ wide (FWHM); wider means more layers or disorder.
	MonolayerMax2DWidth = 35.0 // cm⁻¹
	// DefectiveMinDG: I(D)/I(G) at or above this is defective.
	DefectiveMinDG = 0.3
	// weak2DG: below this 2D/G, a low D/G does not rule out heavy
	// disorder (see the package doc); triggers a note only.
	weak2DG = 0.5
)

// ErrRaman: a Raman ratio or width that is negative, not a number, or
// missing.
var ErrRaman = errors.New("invalid Raman data")

// RamanClass is the quality class of a Raman spectrum.
type RamanClass string

// The classes.
const (
	MonolayerLike RamanClass = "monolayer-like"
	FewLayer      RamanClass = "few-layer"
	Defective     RamanClass = "defective"
)

// Raman holds intensity ratios of a graphene Raman spectrum.
type Raman struct {
	TwoDG   float64 // I(2D)/I(G), ≥ 0
	DG      float64 // I(D)/I(G), ≥ 0
	Width2D float64 // FWHM of the 2D band in cm⁻¹; 0 when not measured
}

// Thresholds are the values a Classification was made with.
type Thresholds struct {
	MonolayerMin2DG     float64
	MonolayerMax2DWidth float64 // cm⁻¹
	DefectiveMinDG      float64
}

// DefaultThresholds returns the package's common-practice thresholds.
func DefaultThresholds() Thresholds {
	return Thresholds{MonolayerMin2DG, MonolayerMax2DWidth, DefectiveMinDG}
}

// Classification is the result of ClassifyRaman.
type Classification struct {
	Input      Raman
	Class      RamanClass
	Reason     string     // which thresholds decided, with the numbers
	Thresholds Thresholds // as used, for printing
	Notes      []string
}

// ClassifyRaman classifies r with the default thresholds:
//
//	D/G ≥ 0.3                         → defective
//	2D/G ≥ 2 and (no width or ≤ 35)   → monolayer-like
//	otherwise                         → few-layer
//
// Errors wrap ErrRaman.
func ClassifyRaman(r Raman) (Classification, error) {
	return ClassifyRamanWith(r, DefaultThresholds())
}

// ClassifyRamanWith is ClassifyRaman with other thresholds. It panics if a
// threshold is not positive (misuse).
func ClassifyRamanWith(r Raman, th Thresholds) (Classification, error) {
	if !(th.MonolayerMin2DG > 0 && th.MonolayerMax2DWidth > 0 && th.DefectiveMinDG > 0) {
		panic("film: Raman thresholds must be positive")
	}
	c := Classification{Input: r, Thresholds: th}
	if err := r.validate(); err != nil {
		return c, err
	}
	switch {
	case r.DG >= th.DefectiveMinDG:
		c.Class = Defective
		c.Reason = fmt.Sprintf("D/G %g ≥ %g", r.DG, th.DefectiveMinDG)
	case r.TwoDG >= th.MonolayerMin2DG && (r.Width2D == 0 || r.Width2D <= th.MonolayerMax2DWidth):
		c.Class = MonolayerLike
		c.Reason = fmt.Sprintf("2D/G %g ≥ %g and D/G %g < %g", r.TwoDG, th.MonolayerMin2DG, r.DG, th.DefectiveMinDG)
		if r.Width2D == 0 {
			c.Notes = append(c.Notes, "2D width not given: monolayer-like from 2D/G alone")
		} else {
			c.Reason += fmt.Sprintf(" and 2D FWHM %g ≤ %g cm⁻¹", r.Width2D, th.MonolayerMax2DWidth)
		}
	case r.TwoDG >= th.MonolayerMin2DG:
		c.Class = FewLayer
		c.Reason = fmt.Sprintf("2D/G %g ≥ %g but 2D FWHM %g > %g cm⁻¹ (a broad 2D band)", r.TwoDG, th.MonolayerMin2DG, r.Width2D, th.MonolayerMax2DWidth)
	default:
		c.Class = FewLayer
		c.Reason = fmt.Sprintf("2D/G %g < %g and D/G %g < %g", r.TwoDG, th.MonolayerMin2DG, r.DG, th.DefectiveMinDG)
	}
	if c.Class != Defective && (r.TwoDG < weak2DG || r.Width2D > 2*th.MonolayerMax2DWidth) {
		c.Notes = append(c.Notes, "D/G rises with defects only down to about 3 nm between defects and then falls "+
			"(Cançado et al., Nano Lett. 11, 3190, 2011): with a weak or broad 2D band a low D/G may also mean heavy disorder")
	}
	return c, nil
}

func (r Raman) validate() error {
	for _, f := range []struct {
		name string
		v    float64
	}{{"2d/g", r.TwoDG}, {"d/g", r.DG}, {"fwhm", r.Width2D}} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) || f.v < 0 {
			return fmt.Errorf("%w: %s = %g, want a finite value of 0 or more", ErrRaman, f.name, f.v)
		}
	}
	return nil
}
