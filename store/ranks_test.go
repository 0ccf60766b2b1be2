package store

import (
	"cmp"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"
)

// sortRanks is how ranks was computed before the radix sort: a
// comparison sort of (value, index) pairs and the same tie averaging. It
// is the reference the radix sort must reproduce exactly.
func sortRanks(v []float64) []float64 {
	type entry struct {
		v float64
		i int
	}
	es := make([]entry, len(v))
	for i, x := range v {
		es[i] = entry{x, i}
	}
	slices.SortFunc(es, func(a, b entry) int { return cmp.Compare(a.v, b.v) })
	r := make([]float64, len(v))
	for i := 0; i < len(es); {
		j := i + 1
		for j < len(es) && es[j].v == es[i].v {
			j++
		}
		avg := float64(i+j+1) / 2
		for k := i; k < j; k++ {
			r[es[k].i] = avg
		}
		i = j
	}
	return r
}

// TestRanksRadix checks the radix-sorted ranks against the comparison
// sort's on data with many ties, negative numbers, both zeros and both
// infinities, bit for bit, and on hand-worked cases (1-based ranks, ties
// averaged: textbook definition of Spearman's rank, as scipy.stats.rankdata
// method="average").
func TestRanksRadix(t *testing.T) {
	rng := rand.New(rand.NewPCG(18, 2))
	gen := func(n int, f func(i int) float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = f(i)
		}
		return v
	}
	tests := []struct {
		name string
		v    []float64
		want []float64 // nil: compare with sortRanks only
	}{
		{"empty", nil, []float64{}},
		{"one", []float64{3}, []float64{1}},
		{"hand worked ties", []float64{10, 20, 10, 30, 20, 10}, []float64{2, 4.5, 2, 6, 4.5, 2}},
		{"both zeros tie", []float64{0, math.Copysign(0, -1), -1, 1}, []float64{2.5, 2.5, 1, 4}},
		{"infinities", []float64{math.Inf(1), -5, math.Inf(-1), 5}, []float64{4, 2, 1, 3}},
		{"whole numbers with ties", gen(100000, func(int) float64 { return float64(950 + rng.IntN(121)) }), nil},
		{"fractions", gen(50000, func(int) float64 { return rng.NormFloat64() * 1e3 }), nil},
		{"signed few values", gen(20000, func(int) float64 { return float64(rng.IntN(7)-3) * 0.25 }), nil},
		{"constant", gen(1000, func(int) float64 { return 25 }), nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := ranks(tt.v)
			want := tt.want
			if want == nil {
				want = sortRanks(tt.v)
			}
			// The int indices that ranks takes for 2³¹ values and more
			// give the same ranks.
			if wide := new(rankBuffers[int]).ranks(tt.v); !slices.Equal(wide, want) {
				t.Errorf("with int indices: ranks differ from the reference")
			}
			if !slices.Equal(got, want) {
				for i := range got {
					if got[i] != want[i] {
						t.Fatalf("rank of value %d (%v): got %v, want %v", i, tt.v[i], got[i], want[i])
					}
				}
				t.Fatalf("ranks: got %d values, want %d", len(got), len(want))
			}
		})
	}
}

// TestRanksNaN: NaNs rank below every number, each with a rank of its
// own (they equal nothing), as before.
func TestRanksNaN(t *testing.T) {
	nan := math.NaN()
	got := ranks([]float64{2, nan, 1, nan})
	if got[0] != 4 || got[2] != 3 {
		t.Errorf("numbers: got ranks %v, %v; want 4, 3", got[0], got[2])
	}
	if !(got[1] == 1 && got[3] == 2 || got[1] == 2 && got[3] == 1) {
		t.Errorf("NaNs: got ranks %v, %v; want 1 and 2", got[1], got[3])
	}
}

func BenchmarkRanks100k(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	v := make([]float64, 100000)
	for i := range v {
		v[i] = rng.NormFloat64()
	}
	b.Run("radix", func(b *testing.B) {
		for b.Loop() {
			ranks(v)
		}
	})
	b.Run("sort", func(b *testing.B) {
		for b.Loop() {
			sortRanks(v)
		}
	})
}

// rankSequential is Rank as it was before the radix sort and the
// goroutines: one parameter after the other, comparison-sorted ranks. It
// is the reference TestRankSameAsBefore holds Rank to.
func rankSequential(samples []Sample, params []string, goal Goal) []RankRow {
	var all []float64
	for _, s := range samples {
		if !math.IsNaN(s.Metric) {
			all = append(all, s.Metric)
		}
	}
	var out []RankRow
	var xs, ys []float64
	for j, p := range params {
		row := sampleRankRow(samples, j, p, goal, &xs, &ys)
		if row.N == 0 {
			continue
		}
		ry := sortRanks(ys)
		if row.N == len(all) {
			ry = sortRanks(all)
		}
		row.Rho = rankCorrelation(sortRanks(xs), ry)
		out = append(out, row)
	}
	slices.SortStableFunc(out, func(a, b RankRow) int {
		if math.IsNaN(a.Rho) != math.IsNaN(b.Rho) {
			if math.IsNaN(a.Rho) {
				return 1
			}
			return -1
		}
		return cmp.Compare(math.Abs(b.Rho), math.Abs(a.Rho))
	})
	return out
}

// genSamples makes n samples like storetest.GenRecord's runs (whole
// temperatures 950–1070 °C, flows, a ratio, constants, a coverage built
// from temperature and time), with a parameter missing (NaN) on every
// tenth run and the metric missing on every 97th.
func genSamples(n int) ([]Sample, []string) {
	params := []string{"growth_temperature_c", "ch4_flow_sccm", "h2_flow_sccm", "growth_time_min", "ch4_h2_ratio", "foil_thickness_um", "sparse"}
	vals := make([]float64, n*len(params))
	out := make([]Sample, n)
	for i := range out {
		T := 950 + float64((i*37)%121)
		ch4, h2, tg := 1+float64((i*13)%40), 10+float64((i*7)%30), 5+float64((i*11)%26)
		p := vals[i*len(params) : (i+1)*len(params)]
		copy(p, []float64{T, ch4, h2, tg, ch4 / h2, 25, math.NaN()})
		if i%10 == 0 {
			p[1] = math.NaN()
		}
		if i%1000 == 0 {
			p[6] = float64(i % 3)
		}
		m := math.Min(1, math.Max(0, (T-940)/130*0.8+tg/150+float64(i%7)/100))
		if i%97 == 0 {
			m = math.NaN()
		}
		out[i] = Sample{Code: "R" + strconv.Itoa(i), Metric: m, Params: p}
	}
	return out, params
}

// TestRankSameAsBefore: Rank gives the very rows (every field, bit for
// bit) the sequential comparison-sort version gave, on a generated log
// of 20,000 runs, with and without a goal.
func TestRankSameAsBefore(t *testing.T) {
	samples, params := genSamples(20000)
	goals := []struct {
		name string
		goal Goal
	}{
		{"goal at least 0.8", Goal{Min: 0.8, Max: None()}},
		{"goal 0.5 to 0.9", Goal{Min: 0.5, Max: 0.9}},
	}
	same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
	for _, g := range goals {
		t.Run(g.name, func(t *testing.T) {
			got := Rank(samples, "coverage", params, g.goal, false).Rows
			want := rankSequential(samples, params, g.goal)
			if len(got) != len(want) {
				t.Fatalf("got %d rows, want %d", len(got), len(want))
			}
			for i := range got {
				a, b := got[i], want[i]
				if a.Param != b.Param || a.N != b.N || a.Good != b.Good || !same(a.Rho, b.Rho) ||
					!same(a.GoodMin, b.GoodMin) || !same(a.GoodMax, b.GoodMax) || !same(a.RestMin, b.RestMin) || !same(a.RestMax, b.RestMax) {
					t.Errorf("row %d: got %+v, want %+v", i, a, b)
				}
			}
		})
	}
}

// TestRankDefaultGoal: without a goal, Rank takes the upper quartile
// (lower quartile when lower is better) of the metric over the runs that
// have it as the goal, as Quantile computes it, and gives the rows of
// that goal. Runs without the metric do not count in the quartile: they
// did before, as NaNs sorted below every value, which moved it.
func TestRankDefaultGoal(t *testing.T) {
	withNaN, params := genSamples(20000)
	var full []Sample // the runs that have the metric
	for _, s := range withNaN {
		if !math.IsNaN(s.Metric) {
			full = append(full, s)
		}
	}
	same := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
	for _, tc := range []struct {
		name        string
		samples     []Sample
		lowerBetter bool
	}{
		{"every run has the metric", full, false},
		{"every run has the metric, lower better", full, true},
		{"some runs lack it", withNaN, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var ms []float64 // the metric of the runs that have it
			for _, s := range tc.samples {
				if !math.IsNaN(s.Metric) {
					ms = append(ms, s.Metric)
				}
			}
			want := NoGoal()
			if tc.lowerBetter {
				want.Max = Optional(Quantile(ms, 0.25))
			} else {
				want.Min = Optional(Quantile(ms, 0.75))
			}
			res := Rank(tc.samples, "coverage", params, NoGoal(), tc.lowerBetter)
			if !same(float64(res.Goal.Min), float64(want.Min)) || !same(float64(res.Goal.Max), float64(want.Max)) {
				t.Fatalf("goal %v, want %v", res.Goal, want)
			}
			ref := rankSequential(tc.samples, params, want)
			if len(res.Rows) != len(ref) {
				t.Fatalf("got %d rows, want %d", len(res.Rows), len(ref))
			}
			for i, a := range res.Rows {
				if b := ref[i]; a.Param != b.Param || a.Good != b.Good || !same(a.Rho, b.Rho) {
					t.Errorf("row %d: got %+v, want %+v", i, a, b)
				}
			}
		})
	}
}

// sampleRankRow is rankRow as it was, over samples: the counts and ranges
// of parameter j, and in xs and ys the pairs of the runs that have both.
func sampleRankRow(samples []Sample, j int, p string, goal Goal, xs, ys *[]float64) RankRow {
	*xs, *ys = (*xs)[:0], (*ys)[:0]
	row := RankRow{Param: p, GoodMin: math.Inf(1), GoodMax: math.Inf(-1), RestMin: math.Inf(1), RestMax: math.Inf(-1)}
	for _, s := range samples {
		if j >= len(s.Params) || math.IsNaN(s.Params[j]) || math.IsNaN(s.Metric) {
			continue
		}
		v := s.Params[j]
		*xs, *ys = append(*xs, v), append(*ys, s.Metric)
		if goal.Met(s.Metric) {
			row.Good++
			row.GoodMin, row.GoodMax = math.Min(row.GoodMin, v), math.Max(row.GoodMax, v)
		} else {
			row.RestMin, row.RestMax = math.Min(row.RestMin, v), math.Max(row.RestMax, v)
		}
	}
	row.N = len(*xs)
	if row.Good == 0 {
		row.GoodMin, row.GoodMax = math.NaN(), math.NaN()
	}
	if row.Good == row.N {
		row.RestMin, row.RestMax = math.NaN(), math.NaN()
	}
	return row
}

// TestLowerUpper: lower and upper are math.Min and math.Max (the
// reference) on numbers, both zeros and infinities included.
func TestLowerUpper(t *testing.T) {
	negZero := math.Copysign(0, -1)
	vals := []float64{negZero, 0, -1, 1, 2.5, math.Inf(1), math.Inf(-1), math.SmallestNonzeroFloat64, -math.MaxFloat64}
	for _, m := range vals {
		for _, v := range vals {
			if got, want := lower(m, v), math.Min(m, v); math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("lower(%v, %v) = %v, want %v", m, v, got, want)
			}
			if got, want := upper(m, v), math.Max(m, v); math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("upper(%v, %v) = %v, want %v", m, v, got, want)
			}
		}
	}
}

// BenchmarkRankColumns100k ranks 21 parameters of 100,000 runs (the
// size of `runs rank` on the benchmark log), the metric with no goal set.
func BenchmarkRankColumns100k(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n, np = 100000, 21
	ms := make([]float64, n)
	for i := range ms {
		ms[i] = rng.Float64()
	}
	params := make([]string, np)
	xs := make([][]float64, np)
	for j := range xs {
		params[j] = "p" + strconv.Itoa(j)
		xs[j] = make([]float64, n)
		for i := range xs[j] {
			xs[j][i] = 900 + 200*rng.Float64()
		}
	}
	for b.Loop() {
		RankColumns("coverage", params, ms, xs, NoGoal(), false)
	}
}
