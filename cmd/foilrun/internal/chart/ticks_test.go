package chart

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot"
)

// The spacings are the round-minute list of issue 12 (1, 2, 5, 10, 15,
// 30, 60 … min), the smallest giving at most 8 intervals; tenths of a
// minute only for spans under 2 min.
func TestTimeSpacing(t *testing.T) {
	tests := []struct {
		name         string
		span         float64
		major, minor float64
	}{
		{"half a minute", 0.5, 0.1, 0.05},
		{"a minute and a half", 1.5, 0.2, 0.1},
		{"3 min", 3, 1, 0.5},
		{"8 min", 8, 1, 0.5},
		{"9 min", 9, 2, 1},
		{"25 min grow step", 25, 5, 1},
		{"90 min", 90, 15, 5},
		{"whole low-pressure run, 211 min", 211.3, 30, 10},
		{"400 min", 400, 60, 15},
		{"1000 min", 1000, 180, 60},
		{"a week", 7 * 1440, 1440, 480},
		{"three weeks", 21 * 1440, 4320, 1080},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			major, minor := TimeSpacing(tc.span)
			if major != tc.major || minor != tc.minor {
				t.Errorf("TimeSpacing(%g): got %g, %g min, want %g, %g", tc.span, major, minor, tc.major, tc.minor)
			}
		})
	}
}

func labels(ticks []plot.Tick) string {
	var out []string
	for _, t := range ticks {
		if t.Label != "" {
			out = append(out, t.Label)
		}
	}
	return strings.Join(out, " ")
}

// labelCase is a ticker's labels over an axis range.
type labelCase struct {
	name   string
	lo, hi float64
	want   string
}

func checkLabels(t *testing.T, ticker plot.Ticker, tests []labelCase) {
	t.Helper()
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := labels(ticker.Ticks(tc.lo, tc.hi)); got != tc.want {
				t.Errorf("labels over %g–%g: got %q, want %q", tc.lo, tc.hi, got, tc.want)
			}
		})
	}
}

func TestTimeTicks(t *testing.T) {
	checkLabels(t, TimeTicks{}, []labelCase{
		{"whole run", 0, 211.3, "0 30 60 90 120 150 180 210"},
		{"zoom", 91.7, 111.2, "95 100 105 110"},
		{"short zoom", 93.2, 96.1, "94 95 96"},
		{"sub-minute", 0, 0.35, "0.0 0.1 0.2 0.3"},
	})
}

// The log-or-linear choice: log when the largest positive value is more
// than 100 times the smallest (issue 12); values ≤ 0 never count.
func TestUseLog(t *testing.T) {
	tests := []struct {
		name   string
		values [][]float64
		want   bool
	}{
		{"exactly 100×", [][]float64{{50}, {5000}}, false},
		{"just over 100×", [][]float64{{49.99}, {5000}}, true},
		{"low-pressure CH4 and H2 with zeros", [][]float64{{0, 51.04, 0}, {0, 32.77, 29.17}}, false},
		{"96 Pa CH4 under 4820 Pa H2 is 50×", [][]float64{{0, 96}, {4820}}, false},
		{"7.8 Pa CH4 under 4820 Pa H2", [][]float64{{0, 7.8}, {4820, 0}}, true},
		{"nuclei density over decades", [][]float64{{1.5e3, 9e5}}, true},
		{"negative, NaN and Inf left out", [][]float64{{-1e6, math.NaN(), math.Inf(1), 2, 100}}, false},
		{"nothing positive", [][]float64{{0, -3}}, false},
		{"empty", nil, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := UseLog(tc.values...); got != tc.want {
				t.Errorf("UseLog(%v): got %v, want %v", tc.values, got, tc.want)
			}
		})
	}
}

func TestLogTicks(t *testing.T) {
	checkLabels(t, LogTicks{}, []labelCase{
		{"two decades: 1, 2, 5", 10, 1000, "10 20 50 100 200 500 1000"},
		{"three decades: 1, 3", 1, 2000, "1 3 10 30 100 300 1000"},
		{"past 1e5: powers from 1000 up", 1000, 2e6, "10³ 3×10³ 10⁴ 3×10⁴ 10⁵ 3×10⁵ 10⁶"},
		{"six decades: decades only", 0.01, 1e4, "0.01 0.1 1 10 100 1000 10000"},
		{"small values", 1e-6, 1e-3, "10⁻⁶ 3×10⁻⁶ 10⁻⁵ 3×10⁻⁵ 10⁻⁴ 3×10⁻⁴ 0.001"},
		{"not a log range", 0, 10, ""},
	})
	// every decade of 1–1000 has its minor ticks at 2…9
	if n := len(LogTicks{}.Ticks(1, 1000)); n != 28 {
		t.Errorf("ticks over 1–1000: got %d, want 28 (9 per decade and 1000)", n)
	}
}

func TestNiceSpacing(t *testing.T) {
	tests := []struct {
		name         string
		span         float64
		n            int
		major, minor float64
	}{
		{"temperature to 1040 C", 1040, 6, 200, 50},
		{"coverage 0-100 %", 100, 5, 20, 5},
		{"266 Pa", 266, 6, 50, 10},
		{"zoomed temperature 25 C", 25, 6, 5, 1},
		{"2.5 step", 14, 6, 2.5, 0.5},
		{"small span", 0.3, 6, 0.05, 0.01},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			major, minor := NiceSpacing(tc.span, tc.n)
			if math.Abs(major-tc.major) > 1e-12 || math.Abs(minor-tc.minor) > 1e-12 {
				t.Errorf("NiceSpacing(%g, %d): got %g, %g, want %g, %g", tc.span, tc.n, major, minor, tc.major, tc.minor)
			}
		})
	}
}

func TestBounds(t *testing.T) {
	tests := []struct {
		name           string
		log            bool
		lo, hi         float64
		wantLo, wantHi float64
	}{
		{"linear to whole ticks", false, 20, 1040, 0, 1200},
		{"linear flat", false, 1000, 1000, 940, 1060},
		{"log to 1-2-5", true, 1.5e3, 9e5, 1000, 2e6},
		{"log pressures", true, 7.77, 4825, 5, 10000},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi := linearBounds(tc.lo, tc.hi, 6)
			if tc.log {
				lo, hi = logBounds(tc.lo, tc.hi)
			}
			if math.Abs(lo-tc.wantLo) > 1e-9*tc.wantHi || math.Abs(hi-tc.wantHi) > 1e-9*tc.wantHi {
				t.Errorf("bounds of %g–%g: got %g–%g, want %g–%g", tc.lo, tc.hi, lo, hi, tc.wantLo, tc.wantHi)
			}
		})
	}
}

func TestFormatValue(t *testing.T) {
	tests := []struct {
		v    float64
		want string
	}{
		{7.76635, "7.77"}, {51.0397, "51"}, {384.535, "385"}, {4806.69, "4807"},
		{0.0123, "0.0123"}, {0, "0"}, {2.5e6, "2.5e+06"},
	}
	for _, tc := range tests {
		if got := FormatValue(tc.v); got != tc.want {
			t.Errorf("FormatValue(%g): got %q, want %q", tc.v, got, tc.want)
		}
	}
}
