package recipe

import (
	"fmt"
	"sort"
	"strings"
)

// controllerLog validates the furnace file's controller_log mapping: the
// units of its columns, the time format, the flow readings (a
// calibration-gas reading needs a line with a correction factor), the
// thermocouple roles (each at most once), the decimal mark and delimiter,
// and that no heading is mapped twice. It canonicalises the flow map's gas
// names. The gas lines must have been validated first.
func (ps *problems) controllerLog(f *Furnace) {
	lg := f.Log
	if lg == nil {
		return
	}
	used := map[string]string{} // heading -> field
	heading := func(c LogColumn, field string) {
		if prev, ok := used[c.Column]; ok {
			ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: column %q is already mapped as %s", field, c.Column, prev), "map each heading of the log to one quantity")
			return
		}
		used[c.Column] = field
	}
	only := func(c LogColumn, field, key, value, where string) {
		if value != "" {
			ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: %q applies only to %s", field, key, where), "remove \""+key+": "+value+"\"")
		}
	}
	ps.logTime(lg.Time)
	heading(lg.Time, "time")
	only(lg.Time, "time", "reading", lg.Time.Reading, "flow columns")
	only(lg.Time, "time", "role", lg.Time.Role, "temperature columns")
	if len(lg.Temperature) == 0 {
		ps.at(lg.Pos, "temperature", "controller_log temperature lists no column", "add \"temperature: {column: T_zone, unit: C}\"")
	}
	roles := map[string]int{}
	for i, c := range lg.Temperature {
		field := "temperature"
		if len(lg.Temperature) > 1 {
			field = fmt.Sprintf("temperature[%d]", i+1)
		}
		ps.logUnit(c, field, Temperature)
		heading(c, field)
		only(c, field, "format", c.Format, "the time column")
		only(c, field, "reading", c.Reading, "flow columns")
		if c.Role == "" {
			continue
		}
		if !ps.oneOf(c, field, "role", c.Role, LogRoles) {
			continue
		}
		if j, ok := roles[c.Role]; ok {
			ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: role %q is already given to column %q", field, c.Role, lg.Temperature[j].Column),
				"give each thermocouple its own role, or leave the role out")
			continue
		}
		roles[c.Role] = i
	}
	if lg.Pressure.Column != "" {
		ps.logUnit(lg.Pressure, "pressure", Pressure)
		heading(lg.Pressure, "pressure")
		only(lg.Pressure, "pressure", "format", lg.Pressure.Format, "the time column")
		only(lg.Pressure, "pressure", "reading", lg.Pressure.Reading, "flow columns")
		only(lg.Pressure, "pressure", "role", lg.Pressure.Role, "temperature columns")
	}
	gases := make([]string, 0, len(lg.Flows))
	for g := range lg.Flows {
		gases = append(gases, g)
	}
	sort.Strings(gases) // messages in a stable order
	canon := map[string]LogColumn{}
	for _, g := range gases {
		c := lg.Flows[g]
		field := "flows." + g
		sym := ps.gasName(g, c.Pos, "flows")
		ps.logUnit(c, field, Flow)
		heading(c, field)
		only(c, field, "format", c.Format, "the time column")
		only(c, field, "role", c.Role, "temperature columns")
		if c.Reading != "" && ps.oneOf(c, field, "reading", c.Reading, []string{LogActual, LogCalibrationGas}) && c.Reading == LogCalibrationGas {
			ps.calibrationReading(f, c, field, sym)
		}
		canon[sym] = c
	}
	lg.Flows = canon
	ps.oneOf(LogColumn{Pos: lg.Pos}, "decimal", "decimal", lg.Decimal, []string{"point", "comma"})
	ps.oneOf(LogColumn{Pos: lg.Pos}, "delimiter", "delimiter", lg.Delimiter, []string{"comma", "semicolon", "tab"})
	if lg.Decimal == "comma" && lg.Delimiter == "comma" {
		ps.at(lg.Pos, "delimiter", "controller_log: decimal comma with a comma delimiter cannot be told apart", "logs with decimal commas separate columns with semicolons or tabs: write \"delimiter: semicolon\"")
	}
}

// logTime checks the time column's format and unit.
func (ps *problems) logTime(c LogColumn) {
	if c.Format != "" && !ps.oneOf(c, "time", "format", c.Format, []string{LogElapsed, LogClock, LogDateTime}) {
		return
	}
	if c.Format == LogClock || c.Format == LogDateTime {
		if c.Unit != "" {
			ps.at(c.Pos, "time", fmt.Sprintf("controller_log time: a %s time stamp has no unit, but unit %q is given", c.Format, c.Unit), "remove \"unit: "+c.Unit+"\"")
		}
		return
	}
	ps.logUnit(c, "time", Duration)
}

// logUnit requires c's unit to be of dimension want.
func (ps *problems) logUnit(c LogColumn, field string, want Dimension) {
	if c.Unit == "" {
		ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: column %q has no unit", field, c.Column), "add the unit its numbers are in, one of: "+unitsOf[want])
		return
	}
	if d, ok := UnitDimension(c.Unit); !ok || d != want {
		ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: unit %q is not a %s unit", field, c.Unit, want), "use one of: "+unitsOf[want])
	}
}

// oneOf requires value to be empty or one of allowed.
func (ps *problems) oneOf(c LogColumn, field, key, value string, allowed []string) bool {
	if value == "" {
		return true
	}
	for _, a := range allowed {
		if value == a {
			return true
		}
	}
	ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: unknown %s %q", field, key, value), "use one of: "+strings.Join(allowed, ", ")+suggest(value, allowed))
	return false
}

// calibrationReading requires a line for gas whose MFC is calibrated for
// another gas (or carries its own correction factor).
func (ps *problems) calibrationReading(f *Furnace, c LogColumn, field, gas string) {
	l := f.LineFor(gas)
	switch {
	case l == nil:
		ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: reading %q needs a gas line for %s to take the correction factor from", field, LogCalibrationGas, gas),
			"add the line to gas_lines with its calibrated_for")
	case l.CorrectionFactor.IsZero() && (l.CalibratedFor == "" || l.CalibratedFor == l.Gas):
		ps.at(c.Pos, field, fmt.Sprintf("controller_log %s: reading %q, but the %s line is calibrated for %s itself", field, LogCalibrationGas, gas, gas),
			"write \"reading: actual\", or give the line's calibrated_for")
	}
}
