package chart

import (
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
)

// LogRatio is the spread (largest over smallest positive value) above
// which a quantity is drawn on a log axis.
const LogRatio = 100

// UseLog reports whether values spread over more than LogRatio: the
// largest positive value over the smallest is above LogRatio. Values ≤ 0,
// NaN and ±Inf are left out (they have no place on a log axis); with no
// positive value it reports false.
func UseLog(values ...[]float64) bool {
	lo, hi, ok := positiveRange(values...)
	return ok && hi/lo > LogRatio
}

// positiveRange is the smallest and largest finite value > 0.
func positiveRange(values ...[]float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, vs := range values {
		for _, v := range vs {
			if v > 0 && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return lo, hi, lo <= hi
}

// timeSteps are the round tick spacings of a time axis in minutes, with
// the minor spacing of each.
var timeSteps = []struct{ major, minor float64 }{
	{0.1, 0.05}, {0.2, 0.1}, {0.5, 0.1}, {1, 0.5}, {2, 1}, {5, 1}, {10, 5}, {15, 5}, {30, 10},
	{60, 15}, {120, 30}, {180, 60}, {240, 60}, {360, 120}, {480, 120}, {720, 240}, {1440, 480},
}

// maxTimeTicks is the most major intervals a time axis gets.
const maxTimeTicks = 8

// TimeSpacing picks the major and minor tick spacing (min) of a time axis
// spanning span minutes: the smallest round spacing (1, 2, 5, 10, 15, 30,
// 60, 120 … min, and 0.1, 0.2, 0.5 min for spans under 2 min) that gives
// at most 8 intervals.
func TimeSpacing(span float64) (major, minor float64) {
	for _, s := range timeSteps {
		if s.major < 1 && span >= 2 {
			continue
		}
		if span/s.major <= maxTimeTicks {
			return s.major, s.minor
		}
	}
	last := timeSteps[len(timeSteps)-1]
	days := math.Ceil(span / last.major / maxTimeTicks)
	return days * last.major, days * last.major / 4
}

// TimeTicks marks a time axis in minutes at round-minute spacing
// (TimeSpacing), labelled in minutes.
type TimeTicks struct{}

// Ticks implements plot.Ticker.
func (TimeTicks) Ticks(lo, hi float64) []plot.Tick {
	major, minor := TimeSpacing(hi - lo)
	return spacedTicks(lo, hi, major, minor)
}

// spacedTicks labels multiples of major in [lo, hi] and marks multiples
// of minor between them.
func spacedTicks(lo, hi, major, minor float64) []plot.Tick {
	if !(hi > lo) || !(major > 0) || !(minor > 0) {
		return nil
	}
	prec := decimals(major)
	var ticks []plot.Tick
	perMajor := math.Round(major / minor)
	for i := math.Ceil(lo/minor - 1e-9); i*minor <= hi+minor*1e-9; i++ {
		v := i * minor
		if math.Mod(i, perMajor) == 0 {
			ticks = append(ticks, plot.Tick{Value: v, Label: trimFloat(v, prec)})
		} else {
			ticks = append(ticks, plot.Tick{Value: v})
		}
	}
	return ticks
}

// decimals is the number of decimal places that spacing step needs.
func decimals(step float64) int {
	d := 0
	for d < 8 && math.Abs(step*math.Pow10(d)-math.Round(step*math.Pow10(d))) > 1e-6*step*math.Pow10(d) {
		d++
	}
	return d
}

// trimFloat formats v with prec decimals and no negative zero.
func trimFloat(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.Trim(s, "-0.") == "" {
		return strings.TrimPrefix(s, "-")
	}
	return s
}

// NiceSpacing picks a linear axis' major and minor tick spacing: 1, 2, 2.5
// or 5 times a power of ten, the smallest giving at most n intervals over
// span.
func NiceSpacing(span float64, n int) (major, minor float64) {
	if !(span > 0) || n < 1 {
		return 1, 0.5
	}
	raw := span / float64(n)
	pow := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []struct{ major, minor float64 }{{1, 0.2}, {2, 0.5}, {2.5, 0.5}, {5, 1}, {10, 2}} {
		if m.major*pow >= raw*(1-1e-9) {
			return m.major * pow, m.minor * pow
		}
	}
	return 10 * pow, 2 * pow
}

// LinearTicks marks a linear axis at 1-2-2.5-5 spacing with about N
// labelled ticks (default 6).
type LinearTicks struct{ N int }

// Ticks implements plot.Ticker.
func (t LinearTicks) Ticks(lo, hi float64) []plot.Tick {
	n := t.N
	if n <= 0 {
		n = 6
	}
	major, minor := NiceSpacing(hi-lo, n)
	return spacedTicks(lo, hi, major, minor)
}

// LogTicks marks a log axis: a labelled tick at every decade, labelled
// intermediate ticks (at 2 and 5 times the decade when the axis spans at
// most two decades, at 3 times it up to four decades), and minor ticks at
// 2…9 times each decade. Labels are plain numbers (0.05, 200, 5000)
// unless the axis reaches 10⁵, where values from 1000 up are written as
// powers of ten (10³, 3×10⁴).
type LogTicks struct{}

// Ticks implements plot.Ticker.
func (LogTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	labelled := map[int]bool{1: true}
	switch decades := math.Log10(hi / lo); {
	case decades <= 2+1e-9:
		labelled[2], labelled[5] = true, true
	case decades <= 4+1e-9:
		labelled[3] = true
	}
	powers := hi >= 1e5*(1-1e-9)
	var ticks []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		dec := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * dec
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if labelled[m] {
				t.Label = LogLabel(v, powers)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// LogLabel writes a log-axis tick value: plainly from 0.001 to 99 999
// ("0.05", "200", "10000") unless powers is set for values ≥ 1000,
// otherwise as a power of ten with superscript digits ("10⁶", "2×10⁶").
func LogLabel(v float64, powers bool) string {
	if v >= 1e-3 && (v < 1000 || (v < 1e5 && !powers)) {
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	e := int(math.Floor(math.Log10(v) + 1e-9))
	m := math.Round(v / math.Pow10(e))
	exp := superscript(e)
	if m == 1 {
		return "10" + exp
	}
	return strconv.FormatFloat(m, 'f', -1, 64) + "×10" + exp
}

func superscript(n int) string {
	const digits = "⁰¹²³⁴⁵⁶⁷⁸⁹"
	sup := []rune(digits)
	var b strings.Builder
	if n < 0 {
		b.WriteRune('⁻')
		n = -n
	}
	for _, c := range strconv.Itoa(n) {
		b.WriteRune(sup[c-'0'])
	}
	return b.String()
}

// logBounds widens [lo, hi] (both > 0) outwards to the next 1, 2 or 5
// times a power of ten, leaving a little room at each end.
func logBounds(lo, hi float64) (float64, float64) {
	lo, hi = lo/1.15, hi*1.15
	down := func(v float64) float64 {
		d := math.Pow(10, math.Floor(math.Log10(v)))
		for _, m := range []float64{5, 2, 1} {
			if m*d <= v {
				return m * d
			}
		}
		return d
	}
	up := func(v float64) float64 {
		d := math.Pow(10, math.Floor(math.Log10(v)))
		for _, m := range []float64{1, 2, 5, 10} {
			if m*d >= v {
				return m * d
			}
		}
		return 10 * d
	}
	return down(lo), up(hi)
}

// linearBounds widens [lo, hi] outwards to whole major tick spacings,
// and pads a zero-width range.
func linearBounds(lo, hi float64, n int) (float64, float64) {
	if hi <= lo {
		pad := math.Max(math.Abs(lo)*0.05, 0.5)
		lo, hi = lo-pad, hi+pad
	}
	major, _ := NiceSpacing(hi-lo, n)
	return math.Floor(lo/major+1e-9) * major, math.Ceil(hi/major-1e-9) * major
}
