package main

import (
	"fmt"
	"io"
	"math"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/recipe"
)

// recipeFlags are the flags of every command that reads a recipe.
type recipeFlags struct {
	furnace string
	site    string
}

func (rf *recipeFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&rf.furnace, "furnace", "", "furnace file (wins over the recipe's own)")
	cmd.Flags().StringVar(&rf.site, "site", "", "site file (wins over the recipe's own)")
}

// loadPlan loads a recipe, its furnace and site, and derives the plan.
func (rf *recipeFlags) loadPlan(path string) (*recipe.Plan, *recipe.Site, error) {
	r, err := recipe.LoadRecipe(path)
	if err != nil {
		return nil, nil, err
	}
	f, s, err := recipe.Resolve(r, rf.furnace, rf.site)
	if err != nil {
		return nil, nil, err
	}
	return recipe.Derive(r, f), s, nil
}

type checkOptions struct {
	f      *factory
	recipe string
	flags  recipeFlags
	output outputFormat
}

func newCheckCmd(f *factory) *cobra.Command {
	opts := &checkOptions{f: f}
	cmd := &cobra.Command{
		Use:   "check RECIPE",
		Short: "Check a recipe against the furnace's limits and the safe order of steps",
		Long: `Check a recipe against its furnace: temperatures (heater, tube, copper's melting
point), ramp rates, each gas flow against its MFC line, pressures the pump can
hold, copper evaporation, and the order of steps (leak check and purge before
flammable gas, no vent while hot). Prints the findings and a per-step table of
derived gas-phase numbers. Exit status 1 when any finding is an error.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			return checkRun(opts)
		},
	}
	opts.flags.register(cmd)
	addOutputFlag(cmd, &opts.output)
	return cmd
}

// checkResult is the JSON form of `foilrun check`.
type checkResult struct {
	Recipe   string           `json:"recipe"`
	Furnace  string           `json:"furnace"`
	Findings []recipe.Finding `json:"findings"`
	Steps    []stepNumbers    `json:"steps"`
	TotalMin float64          `json:"total_min"`
	Errors   int              `json:"errors"`
	Warnings int              `json:"warnings"`
}

// stepNumbers is one row of the derived-numbers table, in display units.
type stepNumbers struct {
	Step            int                `json:"step"`
	Label           string             `json:"label"`
	StartMin        float64            `json:"start_min"`
	DurationMin     float64            `json:"duration_min"`
	T0C             float64            `json:"t_start_c"`
	T1C             float64            `json:"t_end_c"`
	PressurePa      float64            `json:"pressure_pa"`
	PumpLimitPa     float64            `json:"pump_limit_pa"`
	OpenToPump      bool               `json:"open_to_pump"`
	FlowsSCCM       map[string]float64 `json:"flows_sccm"`
	MoleFractions   map[string]float64 `json:"mole_fractions"`
	PCH4Pa          float64            `json:"p_ch4_pa"`
	PH2Pa           float64            `json:"p_h2_pa"`
	CH4H2           *float64           `json:"ch4_h2_ratio"`
	VolFlowLmin     float64            `json:"actual_flow_l_min"`
	VelocityMS      float64            `json:"velocity_m_s"`
	ResidenceS      float64            `json:"residence_s"`
	Reynolds        float64            `json:"reynolds"`
	Knudsen         float64            `json:"knudsen"`
	Supersaturation *float64           `json:"supersaturation"`
	CopperLossUm    float64            `json:"copper_loss_um_per_face"`
}

func optional(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func numbersOf(p *recipe.Plan) []stepNumbers {
	out := make([]stepNumbers, len(p.Steps))
	for i, s := range p.Steps {
		n := stepNumbers{
			Step: i + 1, Label: s.Label, StartMin: s.Start / 60, DurationMin: s.Duration / 60,
			T0C: s.T0 - 273.15, T1C: s.T1 - 273.15, PressurePa: s.Pressure, PumpLimitPa: s.PumpLimit,
			OpenToPump: s.OpenToPump, FlowsSCCM: map[string]float64{}, MoleFractions: map[string]float64{},
			PCH4Pa: s.PCH4, PH2Pa: s.PH2, CH4H2: optional(s.CH4H2Ratio), VolFlowLmin: s.VolumetricFlow * 60000,
			VelocityMS: s.Velocity, ResidenceS: s.Residence, Reynolds: s.Reynolds, Knudsen: s.Knudsen,
			Supersaturation: optional(s.Supersaturation), CopperLossUm: inUnit(s.CopperLoss, "um"),
		}
		for _, fl := range s.Flows {
			n.FlowsSCCM[fl.Gas.Symbol] = fl.SCCM
			n.MoleFractions[fl.Gas.Symbol] = fl.Fraction
		}
		out[i] = n
	}
	return out
}

func checkRun(opts *checkOptions) error {
	plan, _, err := opts.flags.loadPlan(opts.recipe)
	if err != nil {
		return err
	}
	findings := recipe.Check(plan)
	res := checkResult{Recipe: plan.Recipe.Name, Furnace: plan.Furnace.Name, Findings: findings, Steps: numbersOf(plan), TotalMin: plan.Total / 60}
	if res.Findings == nil {
		res.Findings = []recipe.Finding{}
	}
	for _, fd := range findings {
		switch fd.Severity {
		case recipe.Error:
			res.Errors++
		case recipe.Warning:
			res.Warnings++
		}
	}
	w := opts.f.io.Out
	switch opts.output {
	case formatJSON:
		err = writeJSON(w, res)
	case formatCSV:
		err = writeCSV(w, stepTable(res.Steps))
	default:
		err = printCheck(w, opts.recipe, res)
	}
	if err != nil {
		return err
	}
	if recipe.HasErrors(findings) {
		return errFindings
	}
	return nil
}

func printCheck(w io.Writer, file string, res checkResult) error {
	fmt.Fprintf(w, "recipe %q on furnace %q: %d steps, %.0f min\n", res.Recipe, res.Furnace, len(res.Steps), res.TotalMin)
	if len(res.Findings) > 0 {
		if err := section(w, "Findings", findingTable(res.Findings)); err != nil {
			return err
		}
	}
	heading(w, "Derived gas-phase numbers per step")
	if err := writeTable(w, stepTable(res.Steps)); err != nil {
		return err
	}
	fmt.Fprintf(w, "\n%d errors, %d warnings, %d notes\n", res.Errors, res.Warnings, len(res.Findings)-res.Errors-res.Warnings)
	fmt.Fprintln(w, "These are limit and sequence checks, not a gas-safety review: see foilrun safety, and follow the site's gas code and the people licensed to approve the set-up.")
	return nil
}

// findingTable is the findings of a check, one row each, the hint under
// the message.
func findingTable(findings []recipe.Finding) table {
	ft := table{Header: []string{"severity", "step", "rule", "finding"}}
	for _, fd := range findings {
		step := fd.StepName
		if step == "" {
			step = "recipe"
		}
		msg := fd.Message
		if fd.Hint != "" {
			msg += "\n→ " + fd.Hint
		}
		ft.add(fd.Severity.String(), step, fd.Rule, msg)
	}
	return ft
}

func stepTable(steps []stepNumbers) table {
	t := table{
		Header:  []string{"step", "t0 min", "dur min", "T C", "P Pa", "CH4 Pa", "H2 Pa", "CH4:H2", "flow L/min", "v m/s", "resid s", "Re", "Kn", "CH4 supersat", "Cu loss um"},
		Numeric: []bool{false, true, true, true, true, true, true, true, true, true, true, true, true, true, true},
	}
	for _, s := range steps {
		T := fixed(s.T0C, 0)
		if math.Abs(s.T1C-s.T0C) > 0.05 {
			T = fixed(s.T0C, 0) + "→" + fixed(s.T1C, 0)
		}
		ratio, ss := "", ""
		if s.CH4H2 != nil {
			ratio = num(*s.CH4H2, 3)
		}
		if s.Supersaturation != nil {
			ss = num(*s.Supersaturation, 3)
		}
		t.add(s.Label, fixed(s.StartMin, 1), fixed(s.DurationMin, 1), T, num(s.PressurePa, 3), num(s.PCH4Pa, 3), num(s.PH2Pa, 3), ratio,
			num(s.VolFlowLmin, 3), num(s.VelocityMS, 3), num(s.ResidenceS, 3), num(s.Reynolds, 3), num(s.Knudsen, 2), ss, num(tiny(s.CopperLossUm, 0.005), 2))
	}
	return t
}

// tiny shows values below eps as zero (copper loss far below anything a
// balance can weigh).
func tiny(v, eps float64) float64 {
	if math.Abs(v) < eps {
		return 0
	}
	return v
}
