package safety

import "github.com/foilrun/foilrun/recipe/gas"

// questions adds the cylinder and storage matters that depend on local
// code, as questions for the site rather than rules.
func (a *analysis) questions() {
	flammable, inert := false, false
	for _, sp := range a.p.Steps {
		for _, f := range sp.Flows {
			if f.Molar > 0 && f.Gas.Flammable {
				flammable = true
			}
			if f.Molar > 0 && f.Gas.Role == gas.Inert {
				inert = true
			}
		}
	}
	ask := func(action, q string) { a.add(Note, nil, "site.question", action, "%s", q) }
	code := a.s.GasCode
	if flammable {
		ask("answer from "+code, "question for the site: what cylinder size and number of flammable-gas cylinders does the local code allow in this room, and must they stand in a ventilated gas cabinet?")
		ask("answer from "+code, "question for the site: are flammable and oxidising cylinders stored apart as the local code requires, secured against falling, with the valve closed when not in use?")
		ask("answer from "+code, "question for the site: does a detector alarm shut the flammable gas off automatically (excess-flow or shut-off valve), and who is called?")
	}
	if a.s.Room.MaxRelease.IsZero() && (flammable || inert) {
		ask("give the restrictor's flow as room.max_release in the site file", "question for the site: is a flow restrictor fitted to the cylinder outlets? without max_release only releases at MFC full scale are analysed, not a broken line upstream of the MFC")
	}
	if a.detectorFor("O2") == nil && inert {
		ask("answer from "+code, "question for the site: is an oxygen monitor required where inert gases are used or stored in this room?")
	}
}
