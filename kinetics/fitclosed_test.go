package kinetics

import (
	"math"
	"testing"
)

// The fit's table of closed-form runs (closedTable) gives the values the
// prepared profile does (Prepared.final, itself checked against the
// Gauss–Legendre quadrature of PredictProfile in TestPreparedMatchesPredict)
// at the start and at points moved along every coordinate: X and N to
// 1e-12 relative, c = ln clip(X) and ln max(N, 1) to 1e-12 absolute.
// Runs inside the clip, beyond it on both sides and etching runs.
func TestClosedTableMatchesPrepared(t *testing.T) {
	p := DefaultParams()
	profs := []Profile{
		isothermal(1273.15, 30, 20, 150),   // inside the clip
		isothermal(1273.15, 30, 20, 1),     // below: X < ε
		isothermal(1323.15, 80, 5, 5000),   // above: X > −ln ε
		isothermal(1173.15, 30, 20, 600),   // another temperature
		isothermal(1273.15, 0.01, 900, 60), // etching: pC below graphite equilibrium
	}
	var obs []Observation
	for i, prof := range profs {
		pr, err := Prepare(prof, p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		obs = append(obs, Observation{Label: string(rune('a' + i)), Prepared: pr, Coverage: 0.5, NucleiDensity: 1e12})
	}
	f := &fitter{s: FitSettings{Epsilon: 1e-3, Workers: 1, Coverage: true, Density: true}, start: p, mode: Continuous,
		v0: vecOf(p), xlo: -math.Log1p(-1e-3), xhi: -math.Log(1e-3),
		free: []int{fitEn, fitLnI0, fitA, fitB, fitEg, fitLnG0}}
	for _, i := range f.free {
		f.lo[i], f.hi[i] = -1e3, 1e3
	}
	if err := f.addRows(obs); err != nil {
		t.Fatal(err)
	}
	f.coordinates(false)
	tab := f.closedTable()
	points := [][]float64{f.x0}
	for j := range f.x0 {
		x := append([]float64(nil), f.x0...)
		x[j] += 0.3
		points = append(points, x)
	}
	close := func(got, want, tol float64) bool {
		return got == want || math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
	}
	for k := range f.obs {
		if !tab.use[k] {
			t.Fatalf("run %d: not in the closed-form table", k)
		}
		pr := f.all[f.obs[k]].Prepared
		for _, x := range points {
			v := f.vec(x)
			X, N := pr.final(&v, nil, -1, math.NaN())
			got := tab.model(k, x, true, f.xlo, f.xhi)
			wantC, wantLnN := f.clogX(X), math.Log(math.Max(N, 1))
			if !close(got.X, X, 1e-12) || !close(got.N, N, 1e-12) || math.Abs(got.c-wantC) > 1e-12 || math.Abs(got.lnN-wantLnN) > 1e-12 {
				t.Errorf("run %s at %v: got X %g N %g c %g lnN %g, want X %g N %g c %g lnN %g (Prepared.final)",
					obs[f.obs[k]].Label, x, got.X, got.N, got.c, got.lnN, X, N, wantC, wantLnN)
			}
		}
	}
}
