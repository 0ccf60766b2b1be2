package storetest

import (
	"bytes"
	"context"
	"database/sql"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/foilrun/foilrun/store"
)

// TestRecipe is a recipe file's bytes with what a byte-exact store must
// keep: CRLF line ends, a tab in a comment, trailing spaces, non-ASCII
// text and no final newline.
var TestRecipe = []byte("# r\u00e9cipe \t test  \r\nname: demo\r\nsteps: []   \r\n# end")

// T0 is the start time of the synthetic runs.
var T0 = time.Date(2026, 3, 2, 9, 0, 0, 0, time.UTC)

// GenRecord makes run i of a synthetic log: 15 parameters spread over
// realistic ranges and two outcomes, a coverage that rises with
// temperature and a domain size. hash is the recipe snapshot it refers to
// ("" for none).
func GenRecord(i int, hash string) store.RunRecord {
	T := 950 + float64((i*37)%121) // 950..1070 °C
	ch4 := 1 + float64((i*13)%40)  // 1..40 sccm
	h2 := 10 + float64((i*7)%30)   // 10..39 sccm
	tg := 5 + float64((i*11)%26)   // 5..30 min
	cov := math.Min(1, math.Max(0, (T-940)/130*0.8+tg/150+float64(i%7)/100))
	return store.RunRecord{
		Run: store.Run{Status: store.Done, RecipeHash: hash, RecipeName: "demo", Furnace: "tube-" + fmt.Sprint(1+i%3),
			Operator: "op" + fmt.Sprint(i%5), Lot: fmt.Sprintf("L%03d", i%40),
			Started: T0.Add(time.Duration(i) * time.Hour), Ended: T0.Add(time.Duration(i)*time.Hour + 2*time.Hour), Created: T0.Add(time.Duration(i) * time.Hour)},
		Params: map[string]float64{"growth_temperature_c": T, "ch4_flow_sccm": ch4, "h2_flow_sccm": h2, "growth_time_min": tg,
			"ch4_h2_ratio": ch4 / h2, "growth_pressure_torr": 0.5 + float64(i%4)/4, "anneal_temperature_c": T, "anneal_time_min": 30,
			"foil_thickness_um": 25, "total_time_min": 120 + tg, "ar_flow_sccm": 0, "ch4_partial_pa": ch4 / (ch4 + h2) * 66, "h2_partial_pa": h2 / (ch4 + h2) * 66,
			"ramp_rate_c_min": 20, "cool_rate_c_min": 10},
		Outcomes: []store.Outcome{
			{Metric: "coverage", Value: cov, Unit: "1", Entered: fmt.Sprint(cov), Method: "micrograph", Measured: T0.Add(time.Duration(i)*time.Hour + 5*time.Hour)},
			{Metric: "domain_size", Value: 5 + T/100, Unit: "um", Entered: fmt.Sprintf("%gum", 5+T/100)},
		},
	}
}

// FullRecord is GenRecord with a note, an actual (planned value missing),
// a deviation and an attachment, and every third run (i divisible by 3)
// an override, so every table gets rows.
func FullRecord(i int, hash string) store.RunRecord {
	rec := GenRecord(i, hash)
	rec.Notes = []store.Note{{At: T0, Text: "note " + rec.Lot}}
	rec.Actuals = []store.Actual{
		{Step: 2, Label: "2 grow", Quantity: "temperature", Unit: "K", Planned: store.None(), Mean: 1273, Min: 1270, Max: 1276, Samples: 10},
		{Step: 2, Label: "2 grow", Quantity: "flow:CH4", Unit: "mol/s", Planned: 7.4e-6, Mean: 7.5e-6, Min: 7.3e-6, Max: 7.7e-6, Samples: 10},
		{Step: 2, Label: "2 grow", Quantity: "flow_total", Unit: "mol/s", Planned: 1e-5, Mean: 1e-5, Min: 1e-5, Max: 1e-5, Samples: 10},
	}
	rec.Deviations = []store.Deviation{{Step: 2, Label: "2 grow", Quantity: "duration", Unit: "s", Planned: 900, Actual: 1100, Tolerance: 90, Message: "long"}}
	rec.Attachments = []store.Attachment{{Path: "a.png", SHA256: store.HashOf([]byte(rec.Lot)), Kind: "micrograph", Added: T0}}
	if i%3 == 0 {
		rec.Override = TestOverride(rec.Operator)
	}
	return rec
}

// TestOverride is an override by the operator with one check error and
// one safety stop, text with a quote and non-ASCII to round-trip.
func TestOverride(operator string) *store.Override {
	return &store.Override{Reason: "trial of the new \"hot\" tube, approved by the group lead", Operator: operator, At: T0,
		Findings: []store.OverrideFinding{
			{Source: "check", Severity: "error", Step: "grow", Rule: "temperature.copper-melting", Message: "1080 °C is within the thermocouple margin of copper's melting point"},
			{Source: "safety", Severity: "stop", Step: "vent", Rule: "vent.hot", Message: "vents at 400 °C with H2 in the tube"},
		}}
}

// Records returns n GenRecords referring to the snapshot hash.
func Records(n int, hash string) []store.RunRecord {
	recs := make([]store.RunRecord, n)
	for i := range recs {
		recs[i] = GenRecord(i, hash)
	}
	return recs
}

// Tables are the run log's tables, for row counts.
var Tables = []string{"runs", "snapshots", "run_params", "run_notes", "outcomes", "run_actuals", "run_deviations", "attachments", "run_overrides", "names", "counters", "schema_version"}

// SQLBacked is what the shared tests need of a back end beyond
// store.RunLog: its clock, and its database for row counts and for
// tampering with the schema. Every back end built on store/sqldb has both.
type SQLBacked interface {
	SetClock(now func() time.Time)
	SQL() *sql.DB
}

// Backend returns the log as a SQLBacked; a log without those methods
// fails the test.
func Backend(t testing.TB, l store.RunLog) SQLBacked {
	t.Helper()
	b, ok := l.(SQLBacked)
	if !ok {
		t.Fatalf("run log %T has no SetClock and SQL methods (is it built on store/sqldb?)", l)
	}
	return b
}

// Fingerprint is the whole content of a log as JSON plus row counts of
// every table, to show a failed write changed nothing.
func Fingerprint(t testing.TB, l store.RunLog) string {
	t.Helper()
	ctx := context.Background()
	var b bytes.Buffer
	if _, err := store.WriteJSON(ctx, &b, l, store.Filter{}); err != nil {
		t.Fatal(err)
	}
	for _, tbl := range Tables {
		fmt.Fprintf(&b, "%s=%d\n", tbl, Count(t, l, tbl))
	}
	return b.String()
}

// Count returns the number of rows in a table of the log.
func Count(t testing.TB, l store.RunLog, table string) int {
	t.Helper()
	var n int
	if err := Backend(t, l).SQL().QueryRowContext(context.Background(), "SELECT COUNT(*) FROM "+table).Scan(&n); err != nil {
		t.Fatalf("count %s: %v", table, err)
	}
	return n
}

// counterRows lists the log's code counters as "name=value; …".
func counterRows(t *testing.T, l store.RunLog) string {
	t.Helper()
	rows, err := Backend(t, l).SQL().QueryContext(context.Background(), `SELECT name, CAST(value AS TEXT) FROM counters ORDER BY name`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var name, v string
		if err := rows.Scan(&name, &v); err != nil {
			t.Fatal(err)
		}
		out = append(out, name+"="+v)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return strings.Join(out, "; ")
}
