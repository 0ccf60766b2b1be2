package film

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// FineStructure is the fine-structure constant α (CODATA 2018,
// 7.2973525693(11)e-3).
const FineStructure = 7.2973525693e-3

// ErrTransmittance: a transmittance outside (0, 1], or a film that
// transmits more than its bare-substrate reference.
var ErrTransmittance = errors.New("invalid transmittance")

// LayerEstimate is the layer count from a transmittance.
type LayerEstimate struct {
	Transmittance float64 // as measured, fraction
	Substrate     float64 // bare-substrate reference, fraction; 0 when none was given
	Film          float64 // the film's own transmittance: Transmittance/Substrate, or Transmittance
	Layers        float64 // fractional N = (2/πα)·(Film^(−1/2) − 1)
	Nearest       int     // Layers rounded to the nearest whole number
}

// TransmittanceOf returns the transmittance of a free-standing film of n
// layers, T = (1 + n·πα/2)^(−2). It panics if n is negative.
func TransmittanceOf(n float64) float64 {
	if n < 0 {
		panic("film: TransmittanceOf a negative layer count")
	}
	return math.Pow(1+n*math.Pi*FineStructure/2, -2)
}

// Layers estimates the number of graphene layers from the transmittance t
// at 550 nm (a fraction in (0, 1]). substrate is the transmittance of the
// bare substrate measured the same way, or 0 for a free-standing film or a
// spectrum already referenced to the substrate. Errors wrap
// ErrTransmittance.
func Layers(t, substrate float64) (LayerEstimate, error) {
	e := LayerEstimate{Transmittance: t, Substrate: substrate}
	if !(t > 0 && t <= 1) {
		return e, fmt.Errorf("%w: transmittance %g, want a fraction above 0 and at most 1 (such as 0.976 or \"97.6%%\")", ErrTransmittance, t)
	}
	e.Film = t
	if substrate != 0 {
		if !(substrate > 0 && substrate <= 1) {
			return e, fmt.Errorf("%w: substrate transmittance %g, want a fraction above 0 and at most 1", ErrTransmittance, substrate)
		}
		if t > substrate {
			return e, fmt.Errorf("%w: film on substrate transmits %g, more than the bare substrate's %g; check the reference", ErrTransmittance, t, substrate)
		}
		e.Film = t / substrate
	}
	e.Layers = 2 / (math.Pi * FineStructure) * (1/math.Sqrt(e.Film) - 1)
	e.Nearest = int(math.Round(e.Layers))
	return e, nil
}

// ParseTransmittance reads a transmittance written as a percentage
// ("97.6%", "97.6 %") or a fraction ("0.976"). It does not check the
// range; Layers does.
func ParseTransmittance(s string) (float64, error) {
	v := strings.TrimSpace(s)
	pct := strings.HasSuffix(v, "%")
	if pct {
		v = strings.TrimSpace(strings.TrimSuffix(v, "%"))
	}
	f, err := strconv.ParseFloat(v, 64)
	if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		return 0, fmt.Errorf("%w: %q is not a number, want a percentage such as \"97.6%%\" or a fraction such as 0.976", ErrTransmittance, s)
	}
	if pct {
		f /= 100
	}
	return f, nil
}
