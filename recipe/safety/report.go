package safety

import (
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// Thresholds that are choices of practice, not physics. Options overrides
// each; the zero Options uses these.
const (
	// ExhaustLimit is the share of LFL the exhaust outlet is held below
	// (25 %, common practice for ventilation and exhaust design).
	ExhaustLimit = 0.25
	// RoomLimit is the share of LFL a room's steady-state concentration
	// must stay below (25 %, common practice).
	RoomLimit = 0.25
	// OxygenLimit is the default oxygen-deficiency threshold, 19.5 % O2 by
	// volume (US OSHA 29 CFR 1910.134), used when neither Options nor the
	// site file (oxygen.deficient_below) sets one.
	OxygenLimit = 0.195
	// OxygenLimitSource says where the default comes from and how to
	// replace it.
	OxygenLimitSource = "default: US OSHA 29 CFR 1910.134; set oxygen: {deficient_below, source} in the site file for the rule where the furnace stands"
	// PurgeOxygenTarget is the most oxygen the tube may hold when the first
	// flammable gas enters: 1 % O2 (ln 20.95 ≈ 3.04 volume changes from
	// air, Crowl & Louvar).
	PurgeOxygenTarget = 0.01
	// VentFuelTarget is the most fuel the tube may hold when it is opened,
	// as a share of the fuel mixture's LFL (25 %, common practice).
	VentFuelTarget = 0.25
	// slugTime: a purge's initial push-out of fuel that decays faster than
	// this (s) is reported as a note only: the pump and exhaust line hold
	// more gas than it carries.
	slugTime = 1.0
)

// airOxygen is the O2 fraction of dry air.
const airOxygen = gas.OxygenInAir

// Options tunes the analysis. The zero value uses the package defaults.
type Options struct {
	Compilation    gas.Compilation // flammable limits and AIT; default NFPA 497 (2008)
	ExhaustLimit   float64         // share of LFL; default ExhaustLimit
	RoomLimit      float64         // share of LFL; default RoomLimit
	OxygenLimit    float64         // O2 fraction; default the site's oxygen.deficient_below, else OxygenLimit
	OxygenSource   string          // where OxygenLimit comes from; set with it
	PurgeTarget    float64         // O2 fraction; default PurgeOxygenTarget
	VentTarget     float64         // share of LFL; default VentFuelTarget
	MixingFactor   float64         // room mixing factor m in (0, 1]; default 1 (well mixed)
	RoomTempK      float64         // room temperature for release volumes, K; default recipe.RoomTemperature
	RoomPressurePa float64         // room pressure, Pa; default 101325
}

// withSite takes the oxygen-deficiency level from the site file when
// Options does not set one.
func (o Options) withSite(s *recipe.Site) Options {
	if o.OxygenLimit <= 0 && s.Oxygen != nil && s.Oxygen.DeficientBelow.SI > 0 {
		o.OxygenLimit, o.OxygenSource = s.Oxygen.DeficientBelow.SI, "site file: "+s.Oxygen.Source
	}
	return o
}

func (o Options) withDefaults() Options {
	if o.OxygenLimit <= 0 {
		o.OxygenSource = OxygenLimitSource
	} else if o.OxygenSource == "" {
		o.OxygenSource = "set by the caller"
	}
	def := func(v *float64, d float64) {
		if *v <= 0 {
			*v = d
		}
	}
	def(&o.ExhaustLimit, ExhaustLimit)
	def(&o.RoomLimit, RoomLimit)
	def(&o.OxygenLimit, OxygenLimit)
	def(&o.PurgeTarget, PurgeOxygenTarget)
	def(&o.VentTarget, VentFuelTarget)
	def(&o.MixingFactor, 1)
	def(&o.RoomTempK, recipe.RoomTemperature)
	def(&o.RoomPressurePa, gas.StandardAtmosphere)
	return o
}

// StepSafety holds the flammability and exhaust numbers of one step.
type StepSafety struct {
	Step         int      `json:"step"`
	Label        string   `json:"label"`
	FuelFraction float64  `json:"fuel_fraction"`        // φ, fuel share of the feed
	LFL          float64  `json:"lfl"`                  // fuel-basis LFL (Le Chatelier), 0 without fuel
	UFL          float64  `json:"ufl"`                  // fuel-basis UFL
	AirMixLow    float64  `json:"air_mix_low"`          // feed share in air where flammable mixtures begin
	AirMixHigh   float64  `json:"air_mix_high"`         // … and end; both 0 when none can form
	Exhaust      float64  `json:"exhaust_share_of_lfl"` // outlet fuel with the furnace's dilution, share of LFL
	DilutionSLM  float64  `json:"dilution_needed_slm"`  // inert dilution to hold ExhaustLimit, slm
	MaxTempC     float64  `json:"max_temperature_c"`
	AboveAIT     []string `json:"above_autoignition,omitempty"` // fuels flowing above their AIT
	Slug         *Slug    `json:"purge_slug,omitempty"`         // an inert step pushing out the fuel before it
}

// Slug is the fuel an inert step pushes out of the tube after a
// flammable step: the tube's inventory and the peak it leaves at.
type Slug struct {
	TubeFuelSCC  float64 `json:"tube_fuel_scc"` // fuel in the tube when the step begins, scc
	PeakSCCM     float64 `json:"peak_sccm"`     // highest fuel flow out, n_fuel/τ
	TimeConstant float64 `json:"time_constant_s"`
	DilutionSLM  float64 `json:"dilution_needed_slm"` // to hold the peak below the exhaust limit
}

// AlarmTime is when a release reaches one detector alarm point.
type AlarmTime struct {
	Alarm   float64 `json:"alarm"`   // alarm point: share of LFL, or O2 fraction
	Seconds float64 `json:"seconds"` // time to reach it; −1 when never reached
}

// Release is a leak into the room and the room's response to it.
type Release struct {
	Gas        string      `json:"gas"`
	Source     string      `json:"source"`       // "MFC full scale", "site max_release", "exhaust dilution feed"
	FlowSLM    float64     `json:"flow_slm"`     // standard flow
	Steady     float64     `json:"steady"`       // steady-state volume fraction in the room
	ShareOfLFL float64     `json:"share_of_lfl"` // flammable gases; 0 for inert
	Oxygen     float64     `json:"oxygen"`       // O2 fraction at steady state (inert gases); 0 for flammable
	Alarms     []AlarmTime `json:"alarms,omitempty"`
	Detector   string      `json:"detector,omitempty"` // where the detector is, or "" without one
}

// Purge records one purge of the tube and what it leaves behind.
type Purge struct {
	Step        int     `json:"step"`
	Label       string  `json:"label"`
	Cycles      int     `json:"cycles,omitempty"`      // pump-and-backfill cycles, 0 for flow-through
	Evacuations int     `json:"evacuations,omitempty"` // pump-downs the site counts as the purge (purge_by_evacuation)
	LowPa       float64 `json:"low_pa,omitempty"`      // cycle low pressure (pump_to)
	HighPa      float64 `json:"high_pa,omitempty"`     // backfill pressure
	PerCycle    float64 `json:"per_cycle,omitempty"`   // P_low/P_high: the share one cycle leaves
	// CycleSeconds is the time of one pump-and-backfill cycle; StartPa,
	// OxygenBefore and FuelBefore what the tube held when the cycles began
	// (pressure, O2 and fuel fractions).
	CycleSeconds float64 `json:"cycle_seconds,omitempty"`
	StartPa      float64 `json:"start_pa,omitempty"`
	OxygenBefore float64 `json:"oxygen_before,omitempty"`
	FuelBefore   float64 `json:"fuel_before,omitempty"`
	Exchanges    float64 `json:"exchanges,omitempty"` // flow-through tube-volume exchanges
	Factor       float64 `json:"factor"`              // fraction left of what the tube held: exp(−N) or (P_low/P_high)^n, cycles only
	OxygenAfter  float64 `json:"oxygen_after"`        // O2 fraction in the tube after it
	FuelAfter    float64 `json:"fuel_after"`          // fuel fraction in the tube after it
}

// Report is the result of Analyze.
type Report struct {
	Recipe         string       `json:"recipe"`
	Furnace        string       `json:"furnace"`
	Site           string       `json:"site"`
	GasCode        string       `json:"gas_code"`
	Compilation    string       `json:"compilation"`
	Findings       []Finding    `json:"findings"`
	Steps          []StepSafety `json:"steps"`
	Releases       []Release    `json:"releases"`
	Purges         []Purge      `json:"purges"`
	TubeLitres     float64      `json:"tube_volume_l"`
	VentilationM3H float64      `json:"ventilation_m3_h"` // Q = air changes × room volume

	// FirstFuelStep is the first step with flammable gas (0 for none);
	// OxygenAtFuel is the tube's O2 fraction when that gas arrives.
	FirstFuelStep int     `json:"first_fuel_step"`
	OxygenAtFuel  float64 `json:"oxygen_at_fuel"`
	// LeakCheckStep is the first leak-check step (0 for none) and
	// LeakCheckPass its pass figure as written ("5 mTorr/min").
	LeakCheckStep int    `json:"leak_check_step"`
	LeakCheckPass string `json:"leak_check_pass"`
	LeakCheckTime string `json:"leak_check_duration"`
	// LeakOxygenPPM is the O2 the leak-check pass figure would let into
	// the flammable step with the least flow, in ppm of its feed.
	LeakOxygenPPM float64 `json:"leak_oxygen_ppm"`
	// LeakOxygenAtFuel is the O2 fraction a leak at the pass figure keeps
	// in the first fuel step's flow (0 without a leak check before it);
	// the tube's O2 then is OxygenAtFuel plus this.
	LeakOxygenAtFuel float64 `json:"leak_oxygen_at_fuel"`
	// VentStep is the vent step (0 for none); FuelAtOpen the tube's fuel as
	// a share of its LFL when opened; VentTempC the temperature then.
	VentStep   int     `json:"vent_step"`
	FuelAtOpen float64 `json:"fuel_at_open_share_of_lfl"`
	VentTempC  float64 `json:"vent_temperature_c"`
	// OxygenLimit is the oxygen-deficiency level judged against and
	// OxygenSource where it comes from (the site file, or the default).
	OxygenLimit  float64 `json:"oxygen_deficient_below"`
	OxygenSource string  `json:"oxygen_source"`
	// OpenBelowC is the temperature to cool to before opening.
	OpenBelowC float64 `json:"open_below_c"`
	// Limits used, for the record.
	Options    Options `json:"-"`
	Disclaimer string  `json:"disclaimer"`
	Verdict    string  `json:"verdict"`
}
