package lab

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/benchdata/fitlog"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/demolab"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
	"github.com/foilrun/foilrun/store/sqlite"
)

// exportOnly hides a log's narrow fit read and its profiles, so Collect
// reads through Export and derives every profile.
type exportOnly struct{ store.RunLog }

// TestCollectProfilesFitAsRebuilt checks that a fit on the stored profiles
// gives, parameter by parameter and bit for bit, the fit of observations
// prepared on the full profiles of plans rebuilt from the snapshots (as
// Collect did before profiles were stored), on the conditions each run's
// actuals give: the reference is computed here, outside Collect, with
// kinetics.NewProfile on the whole plan. Also: the first Collect derives
// and stores one profile per recipe, the second derives none.
func TestCollectProfilesFitAsRebuilt(t *testing.T) {
	ctx := context.Background()
	paths, err := demolab.Lay(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	bundle, err := fitlog.Bundle(paths, 600)
	if err != nil {
		t.Fatal(err)
	}
	// Every 9th run was logged with a furnace log that read its grow step
	// 15 K hot: those runs are prepared on their logged conditions.
	grow := growStep(t, paths, bundle)
	for i := 0; i < len(bundle.Runs); i += 9 {
		T := recipe.Kelvin(975 + 10*float64(i%10))
		bundle.Runs[i].Actuals = []store.Actual{{Step: grow, Label: "grow", Quantity: "temperature", Unit: "K", Planned: store.None(),
			Mean: T, Min: T - 1, Max: T + 1, Samples: 5}}
	}
	l, err := sqlite.Open(ctx, filepath.Join(paths.Dir, "p.db"))
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	if _, err := l.Import(ctx, bundle, nil); err != nil {
		t.Fatal(err)
	}
	m, start := Metrics{Coverage: true, Density: true}, demolab.Truth()
	collect := func(l store.RunLog) Observations {
		t.Helper()
		b, err := NewRebuilder(l, "")
		if err != nil {
			t.Fatal(err)
		}
		col, err := Collect(ctx, b, store.Filter{}, m, start, Logged)
		if err != nil {
			t.Fatal(err)
		}
		return col
	}
	first := collect(l)
	if got, want := len(first.Derived), len(bundle.Snapshots)-1; got != want || !first.Stored {
		t.Errorf("first collect: got %d profiles derived, stored %v; want %d (one per recipe), stored", got, first.Stored, want)
	}
	second := collect(l)
	if len(second.Derived) != 0 {
		t.Errorf("second collect: got %d profiles derived, want 0 (all stored)", len(second.Derived))
	}
	if logged, _ := second.Counts(); logged != (len(bundle.Runs)+8)/9 {
		t.Errorf("second collect: got %d runs on logged conditions, want %d", logged, (len(bundle.Runs)+8)/9)
	}
	ref := rebuiltObservations(t, l, second)
	settings := kinetics.FitSettings{Coverage: true, Density: true}
	for name, obs := range map[string][]kinetics.Observation{"stored": second.Observations, "derived": first.Observations, "export": collect(exportOnly{l}).Observations} {
		t.Run(name, func(t *testing.T) {
			got, err := kinetics.Fit(obs, start, settings)
			if err != nil {
				t.Fatal(err)
			}
			want, err := kinetics.Fit(ref, start, settings)
			if err != nil {
				t.Fatal(err)
			}
			for i, e := range want.Estimates {
				g := got.Estimates[i]
				if g.Key != e.Key || !sameFloat(g.Value, e.Value) || !sameFloat(g.SE, e.SE) {
					t.Errorf("%s: got %g ± %g, want %g ± %g (full rebuild, bit for bit)", e.Key, g.Value, g.SE, e.Value, e.SE)
				}
			}
			if got.RSS != want.RSS || got.Iterations != want.Iterations || !reflect.DeepEqual(fmt.Sprint(got.Residuals), fmt.Sprint(want.Residuals)) {
				t.Errorf("got RSS %g in %d iterations, want %g in %d; residuals equal: %v", got.RSS, got.Iterations, want.RSS, want.Iterations,
					fmt.Sprint(got.Residuals) == fmt.Sprint(want.Residuals))
			}
		})
	}
}

func sameFloat(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }

// rebuiltObservations prepares col's observations again on the full
// profile of each run's plan rebuilt from its snapshots, on its logged
// conditions where its actuals give them.
func rebuiltObservations(t *testing.T, l store.RunLog, col Observations) []kinetics.Observation {
	t.Helper()
	ctx := context.Background()
	b, err := NewRebuilder(l, "")
	if err != nil {
		t.Fatal(err)
	}
	out := append([]kinetics.Observation(nil), col.Observations...)
	for i, o := range out {
		rec, err := l.Record(ctx, o.Label)
		if err != nil {
			t.Fatal(err)
		}
		rb, err := b.Rebuild(ctx, rec)
		if err != nil {
			t.Fatal(err)
		}
		plan, _ := LoggedPlan(rb.Plan, rec.Actuals, Logged)
		if out[i].Prepared, err = kinetics.Prepare(kinetics.NewProfile(plan), demolab.Truth(), kinetics.Options{}); err != nil {
			t.Fatal(err)
		}
	}
	return out
}

// growStep is the 1-based step of the bundle's first recipe in which
// methane flows.
func growStep(t *testing.T, paths demolab.Paths, bundle store.Bundle) int {
	t.Helper()
	f, err := recipe.LoadFurnace(paths.FurnaceA)
	if err != nil {
		t.Fatal(err)
	}
	r, err := recipe.ParseRecipe("r.yaml", bundle.Snapshots[1].Content)
	if err != nil {
		t.Fatal(err)
	}
	for i, sp := range recipe.Derive(r, f).Steps {
		if sp.PCH4 > 0 {
			return i + 1
		}
	}
	t.Fatal("no step with methane")
	return 0
}

// TestProfileEncoding checks that a profile decodes to what was encoded,
// every float bit for bit, and that damaged bytes are errors.
func TestProfileEncoding(t *testing.T) {
	sp := StoredProfile{Steps: 9, Profile: kinetics.Profile{Recipe: "r é", Total: 5400.25, Segments: []kinetics.Segment{
		{Index: 5, Label: "6 grow (growth)", Kind: "grow", Start: 3000, Duration: 900, T0: 1273.15, T1: 1273.15, PC: 51.04, PH: 29.17},
		{Index: 6, Label: "7 cool", Kind: "cool", Start: 3900, Duration: 1500, T0: 1273.15, T1: 300, PC: 1e-300, PH: math.Inf(1), OtherCarbon: math.NaN()},
	}}}
	data := sp.Encode()
	got, err := DecodeProfile(data)
	if err != nil {
		t.Fatal(err)
	}
	if g, w := fmt.Sprintf("%#v", got), fmt.Sprintf("%#v", sp); g != w {
		t.Errorf("round trip: got %s, want %s", g, w)
	}
	for _, c := range []struct {
		name string
		data []byte
	}{
		{"empty", nil},
		{"other header", append([]byte("XXXX"), data[4:]...)},
		{"truncated", data[:len(data)-3]},
		{"trailing byte", append(append([]byte(nil), data...), 0)},
		{"huge count", append([]byte(profileMagic), 0xff, 0xff, 0xff, 0xff, 0x0f)},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := DecodeProfile(c.data); err == nil {
				t.Errorf("got no error, want one")
			}
		})
	}
}

// FuzzDecodeProfile: any bytes decode or fail without a panic, and what
// decodes encodes back to the same bytes.
func FuzzDecodeProfile(f *testing.F) {
	f.Add(StoredProfile{Steps: 3, Profile: kinetics.Profile{Recipe: "x", Segments: []kinetics.Segment{{Index: 1, Label: "2 grow", PC: 5, PH: 30, T0: 1300, T1: 1300, Duration: 60}}}}.Encode())
	f.Add([]byte(profileMagic))
	f.Fuzz(func(t *testing.T, data []byte) {
		sp, err := DecodeProfile(data)
		if err != nil {
			return
		}
		if again := sp.Encode(); string(again) != string(data) {
			t.Errorf("re-encoding %q gave %q", data, again)
		}
	})
}
