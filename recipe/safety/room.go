package safety

import (
	"fmt"
	"strings"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// releaseSource is one way gas can reach the room.
type releaseSource struct {
	g    gas.Gas
	what string
	flow float64 // mol/s
}

// sources lists, for every gas the recipe flows, its line at MFC full
// scale and the site's max_release; and the furnace's exhaust dilution feed.
func (a *analysis) sources() []releaseSource {
	var out []releaseSource
	seen := map[string]bool{}
	for _, sp := range a.p.Steps {
		for _, f := range sp.Flows {
			if f.Molar <= 0 || seen[f.Gas.Symbol] || f.Gas.Role == gas.Oxidiser {
				continue
			}
			seen[f.Gas.Symbol] = true
			if l := a.p.Furnace.LineFor(f.Gas.Symbol); l != nil {
				out = append(out, releaseSource{f.Gas, "MFC full scale", l.FullScaleOfGas()})
			}
			if mr := a.s.Room.MaxRelease.SI; mr > 0 {
				out = append(out, releaseSource{f.Gas, "site max_release", mr})
			}
		}
	}
	ex := a.p.Furnace.Exhaust
	if ex.DilutionFlow.SI > 0 {
		name := ex.DilutionGas
		if name == "" {
			name = "N2"
		}
		if g, err := gas.Lookup(name); err == nil && g.Role == gas.Inert {
			out = append(out, releaseSource{g, "exhaust dilution feed", ex.DilutionFlow.SI})
		}
	}
	return out
}

// detectorFor returns the site's detector for a gas symbol, or nil.
func (a *analysis) detectorFor(symbol string) *recipe.Detector {
	for i := range a.s.Detectors {
		if a.s.Detectors[i].Gas == symbol {
			return &a.s.Detectors[i]
		}
	}
	return nil
}

// room judges each release into the room: flammable gases against 25 % of
// LFL and the detector alarms, inert gases by the oxygen left.
func (a *analysis) room() {
	V := a.s.Room.Volume.SI
	Q := a.o.MixingFactor * a.s.Room.AirChanges.SI * V // m³/s
	toVolume := gas.R * a.o.RoomTempK / a.o.RoomPressurePa
	noDetector := map[string]bool{}
	for _, src := range a.sources() {
		G := src.flow * toVolume
		css := SteadyConcentration(G, Q)
		rel := Release{Gas: src.g.Symbol, Source: src.what, FlowSLM: slm(src.flow), Steady: css}
		det := a.detectorFor(src.g.Symbol)
		if src.g.Flammable {
			lfl, _, _ := a.limits(src.g)
			rel.ShareOfLFL = css / lfl
			if det != nil {
				rel.Detector = det.Where
				for _, al := range det.Alarms {
					rel.Alarms = append(rel.Alarms, AlarmTime{Alarm: al.SI, Seconds: secondsOrNever(TimeToConcentration(al.SI*lfl, G, Q, V))})
				}
			}
			a.flammableRelease(rel, lfl, det, noDetector)
		} else {
			rel.Oxygen = OxygenAfter(css)
			if det := a.detectorFor("O2"); det != nil {
				rel.Detector = det.Where
				for _, al := range det.Alarms {
					rel.Alarms = append(rel.Alarms, AlarmTime{Alarm: al.SI, Seconds: secondsOrNever(TimeToConcentration(1-al.SI/airOxygen, G, Q, V))})
				}
			}
			a.inertRelease(rel)
		}
		a.r.Releases = append(a.r.Releases, rel)
	}
}

func secondsOrNever(t float64) float64 {
	if t > 1e300 {
		return -1
	}
	return t
}

// alarmText describes the times to each alarm: "10 % LFL in 14 min, 20 % never".
func alarmText(rel Release, unit string) string {
	var parts []string
	for _, al := range rel.Alarms {
		w := "never reached"
		if al.Seconds >= 0 {
			w = "reached after " + minutes(al.Seconds)
		}
		parts = append(parts, fmt.Sprintf("%s%s %s", pct(al.Alarm), unit, w))
	}
	return strings.Join(parts, ", ")
}

func minutes(s float64) string {
	if s < 60 {
		return fmt.Sprintf("%.0f s", s)
	}
	return fmt.Sprintf("%.1f min", s/60)
}

func (a *analysis) flammableRelease(rel Release, lfl float64, det *recipe.Detector, noDetector map[string]bool) {
	where := fmt.Sprintf("%s at %.3g slm (%s) into %.0f m3 at %.3g air changes/h", rel.Gas, rel.FlowSLM, rel.Source, a.s.Room.Volume.SI, a.s.Room.AirChanges.SI*3600)
	share, limit := pctApart(rel.ShareOfLFL, a.o.RoomLimit)
	msg := fmt.Sprintf("%s: well-mixed steady state %s = %s of LFL %s (%s)", where, pct(rel.Steady), share, pct(lfl), a.r.Compilation)
	if len(rel.Alarms) > 0 {
		msg += "; alarms: " + alarmText(rel, " LFL")
	}
	first := 2.0
	if det != nil {
		for _, al := range det.Alarms {
			first = min(first, al.SI)
		}
	} else if !noDetector[rel.Gas] {
		noDetector[rel.Gas] = true
		a.add(Warning, nil, "room.no-detector", fmt.Sprintf("fit a fixed %s detector near the furnace and gas cabinet, or have the site's gas-safety review decide", rel.Gas),
			"the site lists no detector for %s, which the recipe uses", rel.Gas)
	}
	var f *Finding
	switch {
	case rel.ShareOfLFL >= a.o.RoomLimit:
		f = a.add(Stop, nil, "room.leak", fmt.Sprintf("limit the release (smaller MFC, flow restrictor, excess-flow valve) or raise the ventilation so a release stays below %.0f %% of LFL; have the site's gas-safety review decide", a.o.RoomLimit*100),
			"%s, at or above the %s limit", msg, limit)
	case rel.ShareOfLFL >= first:
		f = a.add(Warning, nil, "room.leak", "on the first alarm shut the cylinder valve, keep ventilation running and leave; make sure the alarm also shuts the gas off",
			"%s: this release sets off the detector", msg)
	default:
		f = a.add(Note, nil, "room.leak", "no action from this rule; local concentrations near a leak are higher than the room average", "%s", msg)
	}
	f.num("release", rel.FlowSLM, "slm").num("steady state", rel.Steady*100, "%").num("share of LFL", rel.ShareOfLFL*100, "%")
}

func (a *analysis) inertRelease(rel Release) {
	o2, limit := pctApart(rel.Oxygen, a.o.OxygenLimit)
	msg := fmt.Sprintf("%s at %.3g slm (%s) into %.0f m3 at %.3g air changes/h: well-mixed steady state %s %s leaves %s O2 (deficient below %s, %s)",
		rel.Gas, rel.FlowSLM, rel.Source, a.s.Room.Volume.SI, a.s.Room.AirChanges.SI*3600, pct(rel.Steady), rel.Gas, o2, limit, a.o.OxygenSource)
	if len(rel.Alarms) > 0 {
		msg += "; O2 alarms: " + alarmText(rel, " O2")
	}
	highest := 0.0
	for _, al := range rel.Alarms {
		highest = max(highest, al.Alarm)
	}
	var f *Finding
	switch {
	case rel.Oxygen < a.o.OxygenLimit:
		f = a.add(Stop, nil, "room.oxygen", "limit the release (flow restrictor) or raise the ventilation; fit an oxygen monitor; have the site's gas-safety review decide",
			"%s: the room can become oxygen-deficient", msg)
	case rel.Oxygen <= highest:
		f = a.add(Warning, nil, "room.oxygen", "on an oxygen alarm leave the room and shut the cylinder from outside if the site allows",
			"%s: this release sets off the oxygen monitor", msg)
	default:
		f = a.add(Note, nil, "room.oxygen", "no action from this rule", "%s", msg)
	}
	f.num("release", rel.FlowSLM, "slm").num("O2 at steady state", rel.Oxygen*100, "%")
}
