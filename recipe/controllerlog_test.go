package recipe

import (
	"os"
	"strings"
	"testing"
)

// TestControllerLog: the controller_log mapping's fields are checked at
// load, each mistake reported with its place and a hint.
func TestControllerLog(t *testing.T) {
	data, err := os.ReadFile("../templates/furnace.yaml")
	if err != nil {
		t.Fatal(err)
	}
	base := string(data)
	base = base[:strings.Index(base, "controller_log:")]
	tests := []struct{ name, log, want string }{
		{"one thermocouple without a list", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n", ""},
		{"clock time", "  time: {column: Time, format: clock}\n  temperature: [{column: TC1, unit: C}, {column: TC2, unit: C, role: control}]\n", ""},
		{"clock time with a unit", "  time: {column: Time, format: clock, unit: s}\n  temperature: {column: T, unit: C}\n", `a clock time stamp has no unit, but unit "s" is given`},
		{"elapsed time without a unit", "  time: {column: t}\n  temperature: {column: T, unit: C}\n", `column "t" has no unit`},
		{"unknown format", "  time: {column: t, unit: s, format: clok}\n  temperature: {column: T, unit: C}\n", `unknown format "clok"`},
		{"unknown role", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C, role: contol}\n", `did you mean "control"?`},
		{"role twice", "  time: {column: t, unit: s}\n  temperature: [{column: A, unit: C, role: control}, {column: B, unit: C, role: control}]\n", `role "control" is already given to column "A"`},
		{"heading mapped twice", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n  pressure: {column: T, unit: Torr}\n", `column "T" is already mapped as temperature`},
		{"calibration-gas on a line calibrated for itself", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n  flows: {H2: {column: H2, unit: sccm, reading: calibration-gas}}\n", "the H2 line is calibrated for H2 itself"},
		{"calibration-gas without a line", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n  flows: {C2H4: {column: E, unit: sccm, reading: calibration-gas}}\n", "needs a gas line for C2H4"},
		{"calibration-gas on the N2-calibrated CH4 line", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n  flows: {CH4: {column: M, unit: sccm, reading: calibration-gas}}\n", ""},
		{"decimal comma split by commas", "  time: {column: t, unit: s}\n  temperature: {column: T, unit: C}\n  decimal: comma\n  delimiter: comma\n", "decimal comma with a comma delimiter"},
		{"reading on the time column", "  time: {column: t, unit: s, reading: actual}\n  temperature: {column: T, unit: C}\n", `"reading" applies only to flow columns`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ParseFurnace("furnace.yaml", []byte(base+"controller_log:\n"+tt.log))
			switch {
			case tt.want == "" && err != nil:
				t.Errorf("got %v, want it loaded", err)
			case tt.want != "" && (err == nil || !strings.Contains(err.Error(), tt.want)):
				t.Errorf("got %v, want an error containing %q", err, tt.want)
			}
		})
	}
}
