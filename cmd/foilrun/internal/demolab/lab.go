// Package demolab lays out the invented lab of foilrun's demo: its site,
// furnace and recipe files, a run log seeded with invented runs whose
// outcomes come from the kinetics model plus noise, and the files of one
// short run (recipe, controller log, micrograph) for the walk-through to
// log and measure. It writes files and never prints; the demo command
// prints.
//
// The demo lab is an invented scenario: a fictional thin-films group with
// two tube furnaces. No real people, labs or products appear in it.
// Everything it draws is deterministic (fixed seeds), so the demo prints
// the same figures on every machine.
package demolab

import (
	"fmt"
	"math"
	"os"
	"path/filepath"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
)

// Site is the demo lab's site file.
const Site = `# Invented demo site for foilrun's walk-through.
name: demo thin-films group, lab 2.14 (invented)
room:
  volume: 75 m3
  air_changes: 8 /h
  max_release: 20 slm
detectors:
  - gas: H2
    alarms: [10 %, 20 %]
    location: ceiling above the furnaces
  - gas: CH4
    alarms: [10 %, 20 %]
    location: gas cabinet
  - gas: O2
    alarms: [19.5 %]
    location: breathing height by the door
exhaust_to: ducted fume exhaust, roof fan 3 (invented)
gas_code: demo site gas-safety rules, rev. 4 (invented)
contacts:
  - demo gas-safety officer, extension 4410 (invented)
  - demo building emergency line, extension 2222 (invented)
`

// Furnace returns a demo furnace file; the two demo furnaces differ in
// pump speed (pump, e.g. "5.5 m3/h") and CH4 line (ch4FullScale, e.g.
// "50 sccm").
func Furnace(name string, pump string, ch4FullScale string) string {
	return fmt.Sprintf(`# Invented demo furnace.
name: %s
tube:
  material: fused quartz
  inner_diameter: 22 mm
  heated_length: 300 mm
  length: 1000 mm
  service_limit: 1100 C
heater:
  max_temperature: 1200 C
  max_ramp_up: 25 C/min
  max_ramp_down: 10 C/min
  thermocouple_margin: 10 K
gas_lines:
  - gas: Ar
    full_scale: 1 slm
  - gas: H2
    full_scale: 100 sccm
  - gas: CH4
    full_scale: %s
    calibrated_for: N2
vacuum:
  pump_speed: %s
  base_pressure: 5 mTorr
  line_diameter: 16 mm
  line_length: 1.5 m
  gauge: pirani-piezo combination gauge
  gauge_min: 0.5 mTorr
  gauge_max: 1100 mbar
exhaust:
  dilution_flow: 20 slm
  dilution_gas: N2
  destination: ducted fume exhaust
controller_log:
  time: {column: elapsed_s, unit: s}
  temperature: {column: T_zone, unit: C}
  pressure: {column: P_tube, unit: Torr}
  flows:
    Ar: {column: MFC1_Ar, unit: sccm}
    H2: {column: MFC2_H2, unit: sccm}
    CH4: {column: MFC3_CH4, unit: sccm}
`, name, ch4FullScale, pump)
}

// Recipe returns the demo low-pressure recipe with the grow step's
// temperature (°C), CH4 flow (sccm) and time (min) filled in.
func Recipe(tempC, ch4, minutes float64) string {
	return fmt.Sprintf(`# Demo low-pressure recipe (invented lab, illustrative numbers).
name: demo low-pressure monolayer
furnace: ../furnaces/tube-a.yaml
site: ../site.yaml
substrate:
  material: copper foil
  thickness: 25 um
  purity: 99.8 %%
  pretreatment: acetic acid dip 10 min
steps:
  - kind: pump
    until: 20 mTorr
  - kind: leak-check
    duration: 5 min
    max_rise: 5 mTorr/min
  - kind: purge
    flows: {Ar: 500 sccm}
    pressure: pump
    duration: 10 min
  - kind: ramp
    to: %[1]g C
    rate: 20 C/min
    flows: {H2: 20 sccm}
    pressure: pump
  - kind: anneal
    temperature: %[1]g C
    duration: 30 min
    flows: {H2: 20 sccm}
  - kind: grow
    name: growth
    temperature: %[1]g C
    duration: %[3]g min
    flows: {H2: 20 sccm, CH4: %[2]g sccm}
  - kind: cool
    to: 80 C
    rate: 10 C/min
    flows: {H2: 20 sccm}
  - kind: purge
    flows: {Ar: 500 sccm}
    duration: 10 min
  - kind: vent
    flows: {Ar: 1 slm}
    pressure: 1 atm
`, tempC, ch4, minutes)
}

// Truth is the "real" kinetics of the invented lab: the default
// parameters with the nucleation energy lowered by 0.3 eV and the
// prefactor scaled by exp(0.3 eV / k·1273.15 K), so nucleation at 1000 °C
// is unchanged and the fit has an activation energy to find.
func Truth() kinetics.Params {
	p := kinetics.DefaultParams()
	p.En -= 0.3
	p.I0 *= math.Exp(0.3 / (kinetics.BoltzmannEV * recipe.Kelvin(1000)))
	return p
}

// Paths are the files and folders of a laid-out demo lab.
type Paths struct {
	Dir                string // the demo folder
	Site               string // lab/site.yaml
	FurnaceA, FurnaceB string // lab/furnaces/tube-a.yaml, tube-b.yaml
	Recipe             string // lab/recipes/lowpressure.yaml
	Recipes            string // lab/recipes
	Logs, Images       string // logs, images
	Plots              string // plots
	DB                 string // runlog.db, the demo's own run log
}

// Lay writes the lab's site, furnace and recipe files under dir, makes
// the folders the walk-through writes into, and returns the paths.
func Lay(dir string) (Paths, error) {
	p := Paths{
		Dir:      dir,
		Site:     filepath.Join(dir, "lab", "site.yaml"),
		FurnaceA: filepath.Join(dir, "lab", "furnaces", "tube-a.yaml"),
		FurnaceB: filepath.Join(dir, "lab", "furnaces", "tube-b.yaml"),
		Recipes:  filepath.Join(dir, "lab", "recipes"),
		Logs:     filepath.Join(dir, "logs"),
		Images:   filepath.Join(dir, "images"),
		Plots:    filepath.Join(dir, "plots"),
		DB:       filepath.Join(dir, "runlog.db"),
	}
	p.Recipe = filepath.Join(p.Recipes, "lowpressure.yaml")
	for _, d := range []string{filepath.Dir(p.FurnaceA), p.Recipes, p.Logs, p.Images, p.Plots} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			return p, err
		}
	}
	files := map[string]string{
		p.Site:     Site,
		p.FurnaceA: Furnace("tube-a", "5.5 m3/h", "50 sccm"),
		p.FurnaceB: Furnace("tube-b", "8 m3/h", "50 sccm"),
		p.Recipe:   Recipe(1000, 35, 15),
	}
	for path, text := range files {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			return p, err
		}
	}
	return p, nil
}
