package recipe

import "strconv"

// The schema of the three files a lab keeps. Field names are plain English
// in snake case; quantities carry their dimension in the dim tag and are
// parsed at the YAML boundary, so nothing past this package sees a unit
// string. A field tagged req:"true" must be present.

// Furnace describes one tube furnace: its tube, heater, gas lines, vacuum
// system, exhaust and the column layout of its controller's log.
type Furnace struct {
	Name     string     `yaml:"name" req:"true"`
	Tube     Tube       `yaml:"tube" req:"true"`
	Heater   Heater     `yaml:"heater" req:"true"`
	Lines    []GasLine  `yaml:"gas_lines" req:"true"`
	Vacuum   Vacuum     `yaml:"vacuum" req:"true"`
	Exhaust  Exhaust    `yaml:"exhaust"`
	Cooling  *Cooling   `yaml:"cooling"` // natural cooling; nil: the programmed rates are taken as reachable
	Log      *LogLayout `yaml:"controller_log"`
	Comments string     `yaml:"notes"`
	Pos      Pos        `yaml:"-"`
	File     string     `yaml:"-"` // path it was loaded from
	Content  []byte     `yaml:"-"` // the file's bytes as loaded, for the run log's snapshot
}

// Tube is the process tube.
type Tube struct {
	Material      string   `yaml:"material" req:"true"`
	InnerDiameter Quantity `yaml:"inner_diameter" dim:"length" req:"true"`
	HeatedLength  Quantity `yaml:"heated_length" dim:"length" req:"true"`
	Length        Quantity `yaml:"length" dim:"length"` // whole tube, for the volume to purge; default 1.5 × heated length
	ServiceLimit  Quantity `yaml:"service_limit" dim:"temperature" req:"true"`
	Pos           Pos      `yaml:"-"`
}

// Heater is the furnace's heating element and controller.
type Heater struct {
	MaxTemperature     Quantity `yaml:"max_temperature" dim:"temperature" req:"true"`
	MaxRampUp          Quantity `yaml:"max_ramp_up" dim:"temperature rate" req:"true"`
	MaxRampDown        Quantity `yaml:"max_ramp_down" dim:"temperature rate" req:"true"`
	ThermocoupleMargin Quantity `yaml:"thermocouple_margin" dim:"temperature difference"` // default 10 K
	Pos                Pos      `yaml:"-"`
}

// GasLine is one mass-flow-controlled gas line.
type GasLine struct {
	Gas              string   `yaml:"gas" req:"true"`
	FullScale        Quantity `yaml:"full_scale" dim:"flow" req:"true"`
	CalibratedFor    string   `yaml:"calibrated_for"`                 // default: the line's own gas
	LowEnd           Quantity `yaml:"low_end" dim:"fraction"`         // default 2 % of full scale
	CorrectionFactor Quantity `yaml:"correction_factor" dim:"number"` // overrides the table factor
	Pos              Pos      `yaml:"-"`
}

// Vacuum is the pump, its line and the pressure gauge.
type Vacuum struct {
	PumpSpeed    Quantity `yaml:"pump_speed" dim:"pumping speed" req:"true"`
	BasePressure Quantity `yaml:"base_pressure" dim:"pressure" req:"true"`
	LineDiameter Quantity `yaml:"line_diameter" dim:"length"` // pump line; default the tube diameter
	LineLength   Quantity `yaml:"line_length" dim:"length"`   // default 1 m
	Gauge        string   `yaml:"gauge" req:"true"`           // kind, e.g. "capacitance manometer"
	GaugeMin     Quantity `yaml:"gauge_min" dim:"pressure" req:"true"`
	GaugeMax     Quantity `yaml:"gauge_max" dim:"pressure" req:"true"`
	Pos          Pos      `yaml:"-"`
}

// Exhaust is the pump exhaust and its inert dilution.
type Exhaust struct {
	DilutionFlow Quantity `yaml:"dilution_flow" dim:"flow"`
	DilutionGas  string   `yaml:"dilution_gas"` // default N2
	Destination  string   `yaml:"destination"`
	Pos          Pos      `yaml:"-"`
}

// LogLayout maps the furnace controller's CSV columns to quantities.
// Column names are matched to the log's headings exactly as written,
// brackets and units included ("Time [min]").
type LogLayout struct {
	Time        LogColumn            `yaml:"time" req:"true"`
	Temperature LogColumns           `yaml:"temperature" req:"true"` // one column, or a list of thermocouples
	Pressure    LogColumn            `yaml:"pressure"`
	Flows       map[string]LogColumn `yaml:"flows"`
	Decimal     string               `yaml:"decimal"`   // "point" (default) or "comma"
	Delimiter   string               `yaml:"delimiter"` // "comma", "semicolon" or "tab"; default detected from the heading line
	Pos         Pos                  `yaml:"-"`
}

// LogColumn names a CSV column and the unit its numbers are in. Format
// applies to the time column, Reading to flow columns and Role to
// thermocouples.
type LogColumn struct {
	Column string `yaml:"column" req:"true"`
	Unit   string `yaml:"unit"` // required except for clock and date-time stamps
	// Format of the time column: "elapsed" (default: a number in Unit),
	// "clock" (09:31:07, rolling over at midnight) or "datetime"
	// (2026-03-05 09:31:07, 2026-03-05T09:31:07 or 05.03.2026 09:31:07).
	Format string `yaml:"format"`
	// Reading of a flow column: "actual" (default: the flow of the line's
	// gas) or "calibration-gas" (the equivalent flow of the gas the MFC is
	// calibrated for, as the controller shows it; converted with the
	// line's correction factor).
	Reading string `yaml:"reading"`
	// Role of a thermocouple: "control" (the one the controller holds and
	// the plan is matched to; default the first listed), or "sample",
	// "upstream", "downstream", "monitor".
	Role string `yaml:"role"`
	Pos  Pos    `yaml:"-"`
}

// LogColumns is one or more temperature columns. The file may give a
// single mapping ({column: T_zone, unit: C}) or a list of them.
type LogColumns []LogColumn

// Control returns the control thermocouple: the one with role "control",
// else the first.
func (cs LogColumns) Control() LogColumn {
	for _, c := range cs {
		if c.Role == LogRoleControl {
			return c
		}
	}
	if len(cs) == 0 {
		return LogColumn{}
	}
	return cs[0]
}

// Log column formats, flow readings and thermocouple roles.
const (
	LogElapsed        = "elapsed"
	LogClock          = "clock"
	LogDateTime       = "datetime"
	LogActual         = "actual"
	LogCalibrationGas = "calibration-gas"
	LogRoleControl    = "control"
)

// LogRoles lists the thermocouple roles a controller_log may give.
var LogRoles = []string{LogRoleControl, "sample", "upstream", "downstream", "monitor"}

// Site describes the room and the rules around the furnace.
type Site struct {
	Name      string     `yaml:"name" req:"true"`
	Room      Room       `yaml:"room" req:"true"`
	Detectors []Detector `yaml:"detectors"`
	Oxygen    *Oxygen    `yaml:"oxygen"` // the oxygen-deficiency level that applies; default 19.5 % (US OSHA)
	// PurgeByEvacuation is the site's policy on counting pump-downs as the
	// purge before flammable gas; nil: it does not.
	PurgeByEvacuation *EvacuationPolicy `yaml:"purge_by_evacuation"`
	Exhaust           string            `yaml:"exhaust_to" req:"true"`
	GasCode           string            `yaml:"gas_code" req:"true"` // the site's own gas-safety rules, by name
	Contacts          []string          `yaml:"contacts"`
	Notes             string            `yaml:"notes"`
	Pos               Pos               `yaml:"-"`
	File              string            `yaml:"-"`
	Content           []byte            `yaml:"-"` // the file's bytes as loaded, for the run log's snapshot
	// Imaging lists the site's microscopes and cameras as presets for
	// measuring micrographs (foilrun measure image --instrument NAME).
	Imaging []ImagingPreset `yaml:"imaging"`
	// RunCodes sets the prefix of the run codes the log gives; nil: the
	// default, G.
	RunCodes *RunCodes `yaml:"run_codes"`
}

// ImagingPreset is how one instrument shows graphene on copper: which way
// domains look against copper, the pixel size at the magnification the
// lab uses, and optionally the gray level of bare copper.
type ImagingPreset struct {
	Name     string   `yaml:"name" req:"true"`
	Polarity string   `yaml:"polarity"`           // "darker" or "brighter": domains against copper
	Pixel    Quantity `yaml:"pixel" dim:"length"` // side of one pixel on the sample
	BareGray *float64 `yaml:"bare_gray"`          // gray level of bare copper in the image's own units
	Pos      Pos      `yaml:"-"`
}

// Instrument returns the imaging preset named name, or nil.
func (s *Site) Instrument(name string) *ImagingPreset {
	for i := range s.Imaging {
		if s.Imaging[i].Name == name {
			return &s.Imaging[i]
		}
	}
	return nil
}

// Room is the laboratory room the furnace stands in.
type Room struct {
	Volume     Quantity `yaml:"volume" dim:"volume" req:"true"`
	AirChanges Quantity `yaml:"air_changes" dim:"rate per time" req:"true"`
	MaxRelease Quantity `yaml:"max_release" dim:"flow"` // bound on an unrestricted release (flow restrictor), optional
	Pos        Pos      `yaml:"-"`
}

// Oxygen is the oxygen-deficiency level of the site's own rules and where
// it comes from ("19.5 %", "the site's confined-space rule, rev. 3").
type Oxygen struct {
	DeficientBelow Quantity `yaml:"deficient_below" dim:"fraction" req:"true"`
	Source         string   `yaml:"source" req:"true"`
	Pos            Pos      `yaml:"-"`
}

// EvacuationPolicy says whether evacuating the tube counts as the inert
// purge before flammable gas, and after how many evacuations (default
// DefaultEvacuationCycles).
type EvacuationPolicy struct {
	Allowed   bool `yaml:"allowed" req:"true"`
	MinCycles int  `yaml:"min_cycles"`
	Pos       Pos  `yaml:"-"`
}

// Detector is a fixed gas detector and its alarm points. For flammable
// gases the alarms are in % of LFL; for O2 they are in % oxygen by volume.
type Detector struct {
	Gas    string     `yaml:"gas" req:"true"`
	Alarms []Quantity `yaml:"alarms" dim:"fraction" req:"true"`
	Where  string     `yaml:"location"`
	Pos    Pos        `yaml:"-"`
}

// Recipe is a growth recipe: substrate, furnace and an ordered list of steps.
type Recipe struct {
	Name             string    `yaml:"name" req:"true"`
	Description      string    `yaml:"description"`
	Furnace          string    `yaml:"furnace"` // path relative to the recipe file
	Site             string    `yaml:"site"`    // path relative to the recipe file
	Substrate        Substrate `yaml:"substrate" req:"true"`
	StartTemperature Quantity  `yaml:"start_temperature" dim:"temperature"` // default 25 C
	Steps            []Step    `yaml:"steps" req:"true"`
	Pos              Pos       `yaml:"-"`
	File             string    `yaml:"-"`
}

// Substrate is the copper foil.
type Substrate struct {
	Material     string   `yaml:"material" req:"true"`
	Thickness    Quantity `yaml:"thickness" dim:"length" req:"true"`
	Purity       Quantity `yaml:"purity" dim:"fraction"`
	Pretreatment string   `yaml:"pretreatment"`
	Lot          string   `yaml:"lot"`
	Pos          Pos      `yaml:"-"`
}

// Step is one step of a recipe. Which fields apply depends on Kind:
//
//	pump        pressure "pump"; until (a pressure) or duration
//	leak-check  duration; max_rise (pass figure)
//	purge       flows of inert gas; duration, or cycles with backfill and
//	            pump_to (how far each cycle pumps down; default just above
//	            the base pressure)
//	ramp, cool  to (temperature) and rate; flows; pressure
//	anneal      temperature, duration, flows, pressure
//	grow        temperature, duration, flows with a carbon source, pressure
//	vent        flows of inert gas up to atmospheric pressure
type Step struct {
	Kind        StepKind        `yaml:"kind" req:"true"`
	Name        string          `yaml:"name"`
	Duration    Quantity        `yaml:"duration" dim:"duration"`
	Until       Quantity        `yaml:"until" dim:"pressure"`
	Temperature Quantity        `yaml:"temperature" dim:"temperature"`
	To          Quantity        `yaml:"to" dim:"temperature"`
	Rate        Quantity        `yaml:"rate" dim:"temperature rate"`
	Pressure    PressureSetting `yaml:"pressure"`
	Flows       Flows           `yaml:"flows"`
	MaxRise     Quantity        `yaml:"max_rise" dim:"pressure rise rate"`
	Cycles      int             `yaml:"cycles"`
	Backfill    Quantity        `yaml:"backfill" dim:"pressure"`
	PumpTo      Quantity        `yaml:"pump_to" dim:"pressure"`
	Notes       string          `yaml:"notes"`
	Pos         Pos             `yaml:"-"`
}

// Label names the step for messages: "3 grow" or "3 grow (main growth)".
func (s Step) Label(i int) string {
	if s.Name != "" {
		return strconv.Itoa(i+1) + " " + string(s.Kind) + " (" + s.Name + ")"
	}
	return strconv.Itoa(i+1) + " " + string(s.Kind)
}

// StepKind is what a step does.
type StepKind string

// The step kinds.
const (
	KindPump      StepKind = "pump"
	KindLeakCheck StepKind = "leak-check"
	KindPurge     StepKind = "purge"
	KindRamp      StepKind = "ramp"
	KindAnneal    StepKind = "anneal"
	KindGrow      StepKind = "grow"
	KindCool      StepKind = "cool"
	KindVent      StepKind = "vent"
)

// StepKinds lists every step kind in recipe order.
var StepKinds = []StepKind{KindPump, KindLeakCheck, KindPurge, KindRamp, KindAnneal, KindGrow, KindCool, KindVent}

// PressureSetting is either a set-point or "pump" (valve open to the pump,
// the pressure follows the gas throughput). The zero value means "not
// given": the step inherits the previous step's setting.
type PressureSetting struct {
	Pump     bool
	Setpoint Quantity
	Pos      Pos
}

// IsSet reports whether the file gave a pressure for the step.
func (p PressureSetting) IsSet() bool { return p.Pump || !p.Setpoint.IsZero() }

// String returns "pump" or the set-point as written.
func (p PressureSetting) String() string {
	if p.Pump {
		return "pump"
	}
	return p.Setpoint.String()
}

// GasFlow is one gas and its set-point flow.
type GasFlow struct {
	Gas  string   // as written in the file; resolved with gas.Lookup
	Flow Quantity // standard flow, SI mol/s
	Pos  Pos
}

// Flows lists a step's gas flows in the order written.
type Flows []GasFlow

// Of returns the flow of the named gas (already-canonical symbol) in mol/s.
func (f Flows) Of(symbol string) float64 {
	for _, g := range f {
		if g.Gas == symbol {
			return g.Flow.SI
		}
	}
	return 0
}

// Total returns the summed flow in mol/s.
func (f Flows) Total() float64 {
	t := 0.0
	for _, g := range f {
		t += g.Flow.SI
	}
	return t
}
