package safety_test

import (
	"math"
	"testing"

	"github.com/foilrun/foilrun/recipe/gas"
	"github.com/foilrun/foilrun/recipe/safety"
)

func near(t *testing.T, name string, got, want, relTol float64) {
	t.Helper()
	if math.Abs(got-want) > relTol*math.Abs(want) {
		t.Errorf("%s: got %.8g, want %.8g (rel. tol. %g)", name, got, want, relTol)
	}
}

// The flammable limits and autoignition temperatures the analysis uses,
// against the two compilations, NFPA 497 (2008) and IEC 60079-20-1 (2010),
// as read in the data files of the `chemicals` library (chemicals/Safety).
func TestGasLimitsAgainstCompilations(t *testing.T) {
	cases := []struct {
		gas       string
		comp      gas.Compilation
		lfl, ufl  float64 // volume %
		aitC      float64
		reference string
	}{
		{"H2", gas.NFPA497, 4.0, 75, 500, "NFPA 497 (2008)"},
		{"H2", gas.IEC60079, 4.0, 77, 560, "IEC 60079-20-1 (2010)"},
		{"CH4", gas.NFPA497, 5.0, 15, 600, "NFPA 497 (2008)"},
		{"CH4", gas.IEC60079, 4.4, 17, 600, "IEC 60079-20-1 (2010)"},
	}
	for _, c := range cases {
		t.Run(c.gas+" "+c.reference, func(t *testing.T) {
			g, err := gas.Lookup(c.gas)
			if err != nil {
				t.Fatal(err)
			}
			l, u, ait := g.Limits(c.comp)
			near(t, "LFL", l.V*100, c.lfl, 1e-12)
			near(t, "UFL", u.V*100, c.ufl, 1e-12)
			near(t, "AIT °C", ait.V-gas.ZeroCelsius, c.aitC, 1e-12)
		})
	}
}

// Crowl & Louvar, Chemical Process Safety, 2nd ed. (2001), worked example of
// Le Chatelier's rule: 24 % hexane (1.2/7.5), 61 % methane (5.3/15), 15 %
// ethylene (3.1/32) gives LFL 2.7512 % and UFL 12.928 % (values as read in
// the `chemicals` library's docstring). Tolerance: the
// published five digits.
func TestLeChatelierCrowlLouvar(t *testing.T) {
	y := []float64{0.24, 0.61, 0.15}
	lfl := safety.LeChatelier(y, []float64{0.012, 0.053, 0.031})
	ufl := safety.LeChatelier(y, []float64{0.075, 0.15, 0.32})
	near(t, "LFL %", lfl*100, 2.7512, 2e-5)
	near(t, "UFL %", ufl*100, 12.928, 4e-5)
}

func TestLeChatelierPanicsOnMisuse(t *testing.T) {
	for name, f := range map[string]func(){
		"lengths":   func() { safety.LeChatelier([]float64{1}, []float64{0.04, 0.05}) },
		"zero":      func() { safety.LeChatelier([]float64{1}, []float64{0}) },
		"share sum": func() { safety.LeChatelier([]float64{0.5}, []float64{0.04}) },
	} {
		t.Run(name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Errorf("got no panic, want one")
				}
			}()
			f()
		})
	}
}

// A pure H2 feed (NFPA 497: 4 / 75 %) is above its UFL, but mixed with air
// it is flammable for feed shares 4 %–75 % (hand calculation from the
// definition a·φ ∈ [LFL, UFL]); 5 % H2 in Ar only from 80 % feed upwards;
// 3 % H2 never reaches the LFL.
func TestAirMixRange(t *testing.T) {
	cases := []struct {
		name   string
		phi    float64
		lo, hi float64
		ok     bool
	}{
		{"pure H2", 1, 0.04, 0.75, true},
		{"5 % H2", 0.05, 0.8, 1, true},
		{"3 % H2", 0.03, 0, 0, false},
	}
	for _, c := range cases {
		lo, hi, ok := safety.AirMixRange(c.phi, 0.04, 0.75)
		if ok != c.ok || math.Abs(lo-c.lo) > 1e-12 || math.Abs(hi-c.hi) > 1e-12 {
			t.Errorf("%s: got [%g, %g] %v, want [%g, %g] %v", c.name, lo, hi, ok, c.lo, c.hi, c.ok)
		}
	}
}

// Hand calculation: 100 sccm of pure H2 (LFL 4 %, NFPA 497) held at 25 % of
// LFL (1 %) needs 100/0.01 = 10 000 sccm in all, i.e. 9 900 sccm dilution.
func TestDilutionNeeded(t *testing.T) {
	near(t, "dilution sccm", safety.DilutionNeeded(100, 100, 0.04, 0.25), 9900, 1e-12)
	if got := safety.DilutionNeeded(1, 1000, 0.04, 0.25); got != 0 {
		t.Errorf("already dilute: got %g, want 0", got)
	}
}

// Well-mixed room, hand calculation (Crowl & Louvar ch. 3 model): 1 L/min
// into a 60 m3 room at 6 air changes/h (Q = 6 m3/min) gives C_ss = 1/6000 =
// 166.67 ppm; after one time constant V/Q = 10 min it holds (1 − 1/e) of
// that; half the steady state is reached after (V/Q)·ln 2 = 6.93 min.
func TestRoomDilution(t *testing.T) {
	G, V := 1e-3/60, 60.0
	Q := 6 * V / 3600
	near(t, "steady ppm", safety.SteadyConcentration(G, Q)*1e6, 166.6667, 1e-6)
	near(t, "C(V/Q)/C_ss", safety.RoomConcentration(G, Q, V, V/Q)/safety.SteadyConcentration(G, Q), 1-math.Exp(-1), 1e-12)
	near(t, "t(half) s", safety.TimeToConcentration(0.5*G/Q, G, Q, V), 600*math.Ln2, 1e-12)
	if got := safety.TimeToConcentration(2*G/Q, G, Q, V); !math.IsInf(got, 1) {
		t.Errorf("above steady state: got %g s, want +Inf", got)
	}
}

// Purging, Crowl & Louvar, Chemical Process Safety, 2nd ed. (2001), sweep-through
// and vacuum purging:
// air (21 % O2) to 1 % O2 takes ln 21 = 3.04 volume changes; vacuum cycles
// to 0.5 atm take 21 % to below 1 % in 5 cycles (4 are not enough).
func TestPurgeFormulas(t *testing.T) {
	near(t, "volume changes 21→1 %", safety.SweepExchanges(0.21, 0.01), 3.0445, 1e-4)
	near(t, "exp(−N)", safety.SweepFraction(math.Log(21))*0.21, 0.01, 1e-12)
	if n := safety.CyclesNeeded(0.21, 0.01, 0.5, 1); n != 5 {
		t.Errorf("cycles to 0.5 atm: got %d, want 5", n)
	}
	if c5, c4 := 0.21*safety.CycleFraction(0.5, 1, 5), 0.21*safety.CycleFraction(0.5, 1, 4); !(c5 < 0.01 && c4 > 0.01) {
		t.Errorf("after 4 and 5 cycles: got %g and %g, want above and below 1 %%", c4, c5)
	}
	if n := safety.CyclesNeeded(0.21, 0.01, 1, 1); n != -1 {
		t.Errorf("no pressure swing: got %d, want -1", n)
	}
}

// Oxygen deficiency below 19.5 % O2 (29 CFR 1910.134). With dry air at
// 20.9476 % O2 (NASA Glenn air composition) an inert fraction of
// 1 − 19.5/20.9476 = 6.91 % reaches it (hand calculation).
func TestOxygenThreshold(t *testing.T) {
	near(t, "OxygenLimit", safety.OxygenLimit, 0.195, 0)
	c := 1 - 0.195/0.209476
	near(t, "inert fraction at 19.5 % O2", c, 0.0691, 1e-3)
	near(t, "O2 after", safety.OxygenAfter(c), 0.195, 1e-12)
}
