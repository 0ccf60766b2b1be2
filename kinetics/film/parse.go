package film

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ParseRaman reads Raman data written as comma-separated key=value pairs,
// for example "2d/g=2.3,d/g=0.05,fwhm=30". Keys (any case, spaces
// allowed around keys, values and commas): "2d/g" and "d/g" are required,
// "fwhm" (the 2D band FWHM in cm⁻¹, optionally followed by "cm-1" or
// "cm^-1") is optional. Errors wrap ErrRaman and quote the bad part.
func ParseRaman(s string) (Raman, error) {
	var r Raman
	seen := map[string]bool{}
	if strings.TrimSpace(s) == "" {
		return r, fmt.Errorf("%w: empty, want pairs such as \"2d/g=2.3,d/g=0.05,fwhm=30\"", ErrRaman)
	}
	for _, part := range strings.Split(s, ",") {
		key, val, ok := strings.Cut(part, "=")
		key = strings.ToLower(strings.TrimSpace(key))
		val = strings.TrimSpace(val)
		if !ok || key == "" || val == "" {
			return r, fmt.Errorf("%w: %q is not key=value, want pairs such as \"2d/g=2.3,d/g=0.05,fwhm=30\"", ErrRaman, strings.TrimSpace(part))
		}
		if seen[key] {
			return r, fmt.Errorf("%w: %q given twice", ErrRaman, key)
		}
		seen[key] = true
		var dst *float64
		switch key {
		case "2d/g":
			dst = &r.TwoDG
		case "d/g":
			dst = &r.DG
		case "fwhm":
			dst = &r.Width2D
			for _, unit := range []string{"cm^-1", "cm-1", "cm⁻¹", "/cm"} {
				if n := len(val) - len(unit); n >= 0 && strings.EqualFold(val[n:], unit) {
					val = strings.TrimSpace(val[:len(val)-len(unit)])
					break
				}
			}
		default:
			return r, fmt.Errorf("%w: unknown key %q, want 2d/g, d/g or fwhm", ErrRaman, key)
		}
		v, err := strconv.ParseFloat(val, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
			return r, fmt.Errorf("%w: %s value %q, want a number of 0 or more", ErrRaman, key, val)
		}
		if key == "fwhm" && v == 0 {
			return r, fmt.Errorf("%w: fwhm value %q, want a width above 0 in cm⁻¹ (leave it out when not measured)", ErrRaman, val)
		}
		*dst = v
	}
	for _, k := range []string{"2d/g", "d/g"} {
		if !seen[k] {
			return r, fmt.Errorf("%w: %s missing in %q", ErrRaman, k, s)
		}
	}
	return r, nil
}

// String writes r in the form ParseRaman reads, shortest exact numbers,
// with fwhm only when measured.
func (r Raman) String() string {
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	s := "2d/g=" + f(r.TwoDG) + ",d/g=" + f(r.DG)
	if r.Width2D != 0 {
		s += ",fwhm=" + f(r.Width2D)
	}
	return s
}
