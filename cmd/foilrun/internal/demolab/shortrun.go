package demolab

import (
	"encoding/csv"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"

	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe"
)

// NucleationCH4 is the CH4 flow (sccm) of the demo's short nucleation run:
// low, so domains grow slowly enough to stop the run while they are apart.
const NucleationCH4 = 5

// MicrographPixel is the pixel size of the demo micrograph, m.
const MicrographPixel = 0.2e-6

// ShortRun is the files of the run the walk-through logs: a short
// nucleation run on the demo recipe, stopped at about 20 % coverage so the
// domains can be counted.
type ShortRun struct {
	Recipe     string // lab/recipes/lowpressure-nucleation.yaml
	FurnaceLog string // logs/tube-a-run.csv, the controller's log of it
	Micrograph string // images/foil-nucleation.png, drawn at MicrographPixel
}

// WriteShortRun writes the short run's recipe, controller log and
// micrograph into the laid-out lab. The grow time is the one at which the
// lab's kinetics (Truth) reach 20 % coverage on furnace A; the micrograph
// shows the nuclei density and coverage predicted for it.
func WriteShortRun(paths Paths) (ShortRun, error) {
	s := ShortRun{
		Recipe:     filepath.Join(paths.Recipes, "lowpressure-nucleation.yaml"),
		FurnaceLog: filepath.Join(paths.Logs, "tube-a-run.csv"),
		Micrograph: filepath.Join(paths.Images, "foil-nucleation.png"),
	}
	f, err := recipe.LoadFurnace(paths.FurnaceA)
	if err != nil {
		return s, err
	}
	minutes, res, err := ShortGrowth(f, 0.2)
	if err != nil {
		return s, err
	}
	if err := os.WriteFile(s.Recipe, []byte(Recipe(1000, NucleationCH4, minutes)), 0o644); err != nil {
		return s, err
	}
	r, err := recipe.LoadRecipe(s.Recipe)
	if err != nil {
		return s, err
	}
	if err := WriteFurnaceLog(s.FurnaceLog, recipe.Derive(r, f)); err != nil {
		return s, err
	}
	if _, err := WriteMicrograph(s.Micrograph, MicrographPixel, res.NucleiDensity, res.Coverage); err != nil {
		return s, err
	}
	return s, nil
}

// ShortGrowth finds the grow time, in minutes in steps of 0.1 min up to
// 15 min, at which the lab's kinetics (Truth) reach the target coverage on
// the demo recipe at 1000 °C and NucleationCH4, and returns it with the
// prediction. It returns 15 min when the target is not reached.
func ShortGrowth(f *recipe.Furnace, target float64) (float64, kinetics.Result, error) {
	var res kinetics.Result
	for tenths := 1; tenths <= 150; tenths++ {
		minutes := float64(tenths) / 10
		r, err := recipe.ParseRecipe("lowpressure-nucleation.yaml", []byte(Recipe(1000, NucleationCH4, minutes)))
		if err != nil {
			return 0, res, err
		}
		if res, err = kinetics.Predict(recipe.Derive(r, f), Truth(), kinetics.Options{}); err != nil {
			return 0, res, err
		}
		if res.Coverage >= target {
			return minutes, res, nil
		}
	}
	return 15, res, nil
}

// WriteFurnaceLog writes a controller CSV for a plan in the demo furnaces'
// controller_log columns (elapsed s, °C, Torr, sccm), sampled every 10 s
// with small invented deviations: thermocouple noise of 1 K, pressure noise
// of 1 % and a CH4 flow 8 % low (fixed seed).
func WriteFurnaceLog(path string, plan *recipe.Plan) error {
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
			T := recipe.Celsius(s.T0+f*(s.T1-s.T0)) + rng.NormFloat64()
			torr, err := recipe.In(s.Pressure, "Torr")
			if err != nil {
				fh.Close()
				return err
			}
			P := torr * (1 + 0.01*rng.NormFloat64())
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
