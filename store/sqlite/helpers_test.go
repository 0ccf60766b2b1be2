package sqlite

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"path/filepath"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// testRecipe is a recipe file's bytes with what a byte-exact store must
// keep: CRLF line ends, a tab in a comment, trailing spaces, non-ASCII
// text and no final newline.
var testRecipe = []byte("# r\u00e9cipe \t test  \r\nname: demo\r\nsteps: []   \r\n# end")

var t0 = time.Date(2026, 3, 2, 9, 0, 0, 0, time.UTC)

// genRecord makes run i of a synthetic log: parameters spread over
// realistic ranges and a coverage that rises with temperature.
func genRecord(i int, hash string) store.RunRecord {
	T := 950 + float64((i*37)%121) // 950..1070 °C
	ch4 := 1 + float64((i*13)%40)  // 1..40 sccm
	h2 := 10 + float64((i*7)%30)   // 10..39 sccm
	tg := 5 + float64((i*11)%26)   // 5..30 min
	cov := math.Min(1, math.Max(0, (T-940)/130*0.8+tg/150+float64(i%7)/100))
	return store.RunRecord{
		Run: store.Run{Status: store.Done, RecipeHash: hash, RecipeName: "demo", Furnace: "tube-" + fmt.Sprint(1+i%3),
			Operator: "op" + fmt.Sprint(i%5), Lot: fmt.Sprintf("L%03d", i%40),
			Started: t0.Add(time.Duration(i) * time.Hour), Ended: t0.Add(time.Duration(i)*time.Hour + 2*time.Hour), Created: t0.Add(time.Duration(i) * time.Hour)},
		Params: map[string]float64{"growth_temperature_c": T, "ch4_flow_sccm": ch4, "h2_flow_sccm": h2, "growth_time_min": tg,
			"ch4_h2_ratio": ch4 / h2, "growth_pressure_torr": 0.5 + float64(i%4)/4, "anneal_temperature_c": T, "anneal_time_min": 30,
			"foil_thickness_um": 25, "total_time_min": 120 + tg, "ar_flow_sccm": 0, "ch4_partial_pa": ch4 / (ch4 + h2) * 66, "h2_partial_pa": h2 / (ch4 + h2) * 66,
			"ramp_rate_c_min": 20, "cool_rate_c_min": 10},
		Outcomes: []store.Outcome{
			{Metric: "coverage", Value: cov, Unit: "1", Entered: fmt.Sprint(cov), Method: "micrograph", Measured: t0.Add(time.Duration(i)*time.Hour + 5*time.Hour)},
			{Metric: "domain_size", Value: 5 + T/100, Unit: "um", Entered: fmt.Sprintf("%gum", 5+T/100)},
		},
	}
}

func openTemp(t testing.TB) (*DB, string) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "runs.db")
	db, err := Open(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db, path
}

// fingerprint is the whole content of a log as JSON plus row counts of
// every table, to show a failed write changed nothing.
func fingerprint(t testing.TB, db *DB) string {
	t.Helper()
	ctx := context.Background()
	var b bytes.Buffer
	if _, err := store.WriteJSON(ctx, &b, db, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	for _, tbl := range []string{"runs", "snapshots", "run_params", "run_notes", "outcomes", "run_actuals", "run_deviations", "attachments", "names", "counters", "schema_version"} {
		var n int
		if err := db.SQL().QueryRowContext(ctx, "SELECT COUNT(*) FROM "+tbl).Scan(&n); err != nil {
			t.Fatalf("count %s: %v", tbl, err)
		}
		fmt.Fprintf(&b, "%s=%d\n", tbl, n)
	}
	return b.String()
}

func countRuns(t testing.TB, db *DB) int {
	t.Helper()
	var n int
	if err := db.SQL().QueryRow("SELECT COUNT(*) FROM runs").Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}
