package recipe

// Evacuation as a purge. Pumping the tube from p_high down to p_low and
// filling it again leaves p_low/p_high of the gas it held (the vacuum
// purge of Crowl & Louvar, Chemical Process Safety, 2nd ed., with the fill
// done by the process gas); some sites accept that in place of an inert
// purge, which is the site's decision (Site.PurgeByEvacuation).

// DefaultEvacuationCycles is the number of evacuations a site's
// purge_by_evacuation asks for when it gives no min_cycles.
const DefaultEvacuationCycles = 2

// Evacuations is what the pump steps before a step did to the air the
// tube held: how many evacuations (pump-downs of a tube filled since the
// last one) and the share p_low/p_high of the gas they leave, multiplied
// over every pump-down.
type Evacuations struct {
	Cycles int
	Factor float64
	Low    float64 // Pa, the pressure the last pump-down reached
	Last   int     // index of the last pump step, −1 for none
}

// EvacuationsBefore returns the evacuations of the plan before step index
// i. A pump step pumps from the pressure the step before left to the
// higher of its until and the pressure the pump reaches; it counts as a
// cycle when gas flowed into the tube since the last pump-down (or it is
// the first), so pumping on after a leak check deepens the same cycle.
func (p *Plan) EvacuationsBefore(i int) Evacuations {
	ev := Evacuations{Factor: 1, Last: -1}
	filled, at := true, atmosphere // at: the pressure the tube is at, Pa
	for j := 0; j < i && j < len(p.Steps); j++ {
		sp := &p.Steps[j]
		if sp.Step.Kind != KindPump {
			if sp.TotalFlow > 0 {
				filled = true
			}
			if sp.Step.Kind != KindLeakCheck {
				at = sp.Pressure
			}
			continue
		}
		from, to := at, max(sp.Pressure, sp.Step.Until.SI)
		if to >= from {
			continue
		}
		at = to
		ev.Factor *= to / from
		ev.Low, ev.Last = to, j
		if filled {
			ev.Cycles++
			filled = false
		}
	}
	return ev
}

// EvacuationPurges reports whether the site counts the evacuations ev as a
// purge, and how many cycles it asks for (0 when it does not allow it).
func (s *Site) EvacuationPurges(ev Evacuations) (ok bool, need int) {
	if s == nil || s.PurgeByEvacuation == nil || !s.PurgeByEvacuation.Allowed {
		return false, 0
	}
	need = s.PurgeByEvacuation.MinCycles
	if need <= 0 {
		need = DefaultEvacuationCycles
	}
	return ev.Cycles >= need, need
}
