package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/store"
)

// The demo lab is an invented scenario: a fictional thin-films group with
// two tube furnaces. No real people, labs or products appear in it.

const demoSite = `# Invented demo site for foilrun's walk-through.
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

// demoFurnace returns a furnace file; the two demo furnaces differ in
// pump speed and CH4 line.
func demoFurnace(name string, pump string, ch4FullScale string) string {
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

// demoRecipe is the low-pressure recipe with the grow step's temperature
// (°C), CH4 flow (sccm) and time (min) filled in.
func demoRecipe(tempC, ch4, minutes float64) string {
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

// demoTruth is the "real" kinetics of the invented lab: the default
// parameters with the nucleation energy shifted, so the fit has
// something to find.
func demoTruth() kinetics.Params {
	p := kinetics.DefaultParams()
	p.En -= 0.3
	p.I0 *= math.Exp(0.3 / (kinetics.BoltzmannEV * 1273.15))
	return p
}

// layDemoLab writes the lab's files under dir and returns the paths.
type demoPaths struct {
	dir, site, furnaceA, furnaceB, recipe, recipes, logs, images, plots, db string
}

func layDemoLab(dir string) (demoPaths, error) {
	p := demoPaths{
		dir:      dir,
		site:     filepath.Join(dir, "lab", "site.yaml"),
		furnaceA: filepath.Join(dir, "lab", "furnaces", "tube-a.yaml"),
		furnaceB: filepath.Join(dir, "lab", "furnaces", "tube-b.yaml"),
		recipes:  filepath.Join(dir, "lab", "recipes"),
		logs:     filepath.Join(dir, "logs"),
		images:   filepath.Join(dir, "images"),
		plots:    filepath.Join(dir, "plots"),
		db:       filepath.Join(dir, "runlog.db"),
	}
	p.recipe = filepath.Join(p.recipes, "lowpressure.yaml")
	for _, d := range []string{filepath.Dir(p.furnaceA), p.recipes, p.logs, p.images, p.plots} {
		if err := os.MkdirAll(d, 0o755); err != nil {
			return p, err
		}
	}
	files := map[string]string{
		p.site:     demoSite,
		p.furnaceA: demoFurnace("tube-a", "5.5 m3/h", "50 sccm"),
		p.furnaceB: demoFurnace("tube-b", "8 m3/h", "50 sccm"),
		p.recipe:   demoRecipe(1000, 35, 15),
	}
	for path, text := range files {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			return p, err
		}
	}
	return p, nil
}

// seedRuns logs n invented finished runs whose outcomes come from the
// kinetics model with the lab's "true" parameters plus measurement noise
// (fixed seed), over a spread of growth temperature, CH4 flow and time.
func seedRuns(ctx context.Context, log store.RunLog, paths demoPaths, n int) error {
	furnace, err := recipe.LoadFurnace(paths.furnaceA)
	if err != nil {
		return err
	}
	truth := demoTruth()
	rng := rand.New(rand.NewPCG(2026, 12))
	operators := []string{"operator A", "operator B", "operator C"}
	start := time.Date(2026, 9, 1, 9, 0, 0, 0, time.UTC)
	bundle := store.Bundle{}
	seen := map[string]bool{}
	for i := range n {
		T := 960 + 10*float64(rng.IntN(10))             // 960…1050 °C
		ch4 := []float64{2, 5, 10, 20, 35}[rng.IntN(5)] // sccm
		minutes := []float64{1, 2, 3, 5, 8, 12}[rng.IntN(6)]
		text := demoRecipe(T, ch4, minutes)
		r, err := recipe.ParseRecipe("lowpressure.yaml", []byte(text))
		if err != nil {
			return err
		}
		plan := recipe.Derive(r, furnace)
		res, err := kinetics.Predict(plan, truth, kinetics.Options{})
		if err != nil {
			return err
		}
		// Measurement noise: coverage on the complementary log-log scale
		// (σ 0.15), nuclei density and domain size log-normal (σ 10 %).
		theta := math.Min(math.Max(res.Coverage, 1e-6), 1-1e-9)
		cov := 1 - math.Exp(-math.Exp(math.Log(-math.Log(1-theta))+0.15*rng.NormFloat64()))
		dens := res.NucleiDensity * 1e-6 * math.Exp(0.1*rng.NormFloat64())
		size := res.DomainSize * 1e6 * math.Exp(0.1*rng.NormFloat64())
		snap := store.NewSnapshot(r.Name, paths.recipe, []byte(text))
		if !seen[snap.SHA256] {
			bundle.Snapshots = append(bundle.Snapshots, snap)
			seen[snap.SHA256] = true
		}
		t0 := start.Add(time.Duration(i) * 26 * time.Hour)
		rec := store.RunRecord{
			Run: store.Run{Code: store.FormatCode(t0, int64(i+1)), Status: store.Done, RecipeName: r.Name, RecipeHash: snap.SHA256,
				Furnace: furnace.Name, Operator: operators[i%3], Lot: "demo-lot-" + strconv.Itoa(1+i/20),
				Started: t0, Ended: t0.Add(time.Duration(plan.Total) * time.Second)},
			Params: plan.Parameters(),
			Outcomes: []store.Outcome{
				{Metric: "coverage", Value: math.Round(cov*1e4) / 1e4, Unit: "1", Method: "demo: model plus noise", Measured: t0.Add(30 * time.Hour)},
				{Metric: "nuclei_density", Value: dens, Unit: "1/mm2", Method: "demo: model plus noise", Measured: t0.Add(30 * time.Hour)},
			},
		}
		if res.Coverage < 0.999 {
			rec.Outcomes = append(rec.Outcomes, store.Outcome{Metric: "domain_size", Value: size, Unit: "um", Method: "demo: model plus noise", Measured: t0.Add(30 * time.Hour)})
		}
		bundle.Runs = append(bundle.Runs, rec)
	}
	_, err = log.Import(ctx, bundle, nil)
	return err
}

// writeFurnaceLog writes a controller CSV for a plan, sampled every 10 s,
// with small invented deviations: thermocouple noise of 1 K and a CH4
// flow 8 % low.
func writeFurnaceLog(path string, plan *recipe.Plan) error {
	fh, err := os.Create(path)
	if err != nil {
		return err
	}
	w := csv.NewWriter(fh)
	rng := rand.New(rand.NewPCG(7, 7))
	_ = w.Write([]string{"elapsed_s", "T_zone", "P_tube", "MFC1_Ar", "MFC2_H2", "MFC3_CH4"})
	for _, s := range plan.Steps {
		n := max(2, int(s.Duration/10))
		for k := range n {
			f := float64(k) / float64(n)
			t := s.Start + f*s.Duration
			T := s.T0 + f*(s.T1-s.T0) - 273.15 + rng.NormFloat64()
			P := s.Pressure / (101325.0 / 760) * (1 + 0.01*rng.NormFloat64())
			flow := func(g string) string {
				for _, fl := range s.Flows {
					if fl.Gas.Symbol == g {
						v := fl.SCCM
						if g == "CH4" {
							v *= 0.92
						}
						return strconv.FormatFloat(v, 'f', 2, 64)
					}
				}
				return "0"
			}
			_ = w.Write([]string{strconv.FormatFloat(t, 'f', 1, 64), strconv.FormatFloat(T, 'f', 1, 64), strconv.FormatFloat(P, 'g', 4, 64), flow("Ar"), flow("H2"), flow("CH4")})
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		fh.Close()
		return err
	}
	return fh.Close()
}

// writeDemoMicrograph draws a micrograph of a partly grown film at the
// domain density and coverage the model predicts for a short growth.
func writeDemoMicrograph(path string, pixel float64, density, coverage float64) (float64, error) {
	const w, h = 800, 600
	area := float64(w*h) * pixel * pixel
	n := max(3, int(math.Round(density*area)))
	// Hexagon area (3√3/2)r² per domain gives coverage ≈ 1 − exp(−n·a/A).
	r := math.Sqrt(-math.Log(1-math.Min(coverage, 0.9)) * float64(w*h) / float64(n) / (1.5 * math.Sqrt(3)))
	img, truth := synthMicrograph(w, h, n, r, 11)
	fh, err := os.Create(path)
	if err != nil {
		return 0, err
	}
	if err := png.Encode(fh, img); err != nil {
		fh.Close()
		return 0, err
	}
	return truth, fh.Close()
}
