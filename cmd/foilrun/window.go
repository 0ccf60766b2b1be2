package main

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"unsafe"

	"github.com/spf13/cobra"

	"github.com/foilrun/foilrun/cmd/foilrun/internal/chart"
	"github.com/foilrun/foilrun/cmd/foilrun/internal/outfile"
	"github.com/foilrun/foilrun/kinetics"
	"github.com/foilrun/foilrun/recipe/infile"
)

// What `foilrun window --show` can map: the stored metrics' names, and
// time_to_99.
var windowShows = chart.WindowShows

type windowOptions struct {
	f      *factory
	recipe string
	flags  recipeFlags
	vary   []string
	show   string
	// maxPoints bounds the grid (--max-points).
	maxPoints int
	modelFlags
}

// defaultMaxPoints is the default --max-points: a 1,000 × 1,000 grid,
// about 0.5 GiB of results held and rendered.
const defaultMaxPoints = 1000 * 1000

// pointBytes is about what one grid point costs while the map is held
// and printed: the library's point, the JSON point, and a rendered cell
// or line of output (256 bytes, a generous JSON line).
const pointBytes = int64(unsafe.Sizeof(kinetics.Point{}) + unsafe.Sizeof(windowPoint{}) + 256)

func newWindowCmd(f *factory) *cobra.Command {
	opts := &windowOptions{f: f}
	cmd := &cobra.Command{
		Use:   "window RECIPE --vary PARAM=FROM:TO:STEPS --vary PARAM=FROM:TO:STEPS",
		Short: "Map a predicted quantity over two grow-step parameters",
		Long: `Map a predicted quantity over a grid of two parameters of the recipe's first grow
step: temperature, pressure, duration or a gas flow (by gas symbol, e.g. CH4).
Each grid point is the recipe with the grow step changed, checked against the
furnace like foilrun check (points with check errors are marked infeasible)
and predicted like foilrun predict. Ranges carry units:

  --vary temperature=950C:1050C:11   --vary CH4=1sccm:40sccm:10
  --vary duration=1min:30min:12      --vary pressure=100mTorr:2Torr:8

--show picks the quantity: coverage (%), nuclei_density (nuclei per mm2),
domain_size (um) or time_to_99 (min of growth to 99 % coverage). The map is
computed on all cores; a progress bar shows on a terminal. A grid has at most
--max-points points (default 1,000,000, a 1,000 × 1,000 grid).`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.recipe = args[0]
			if err := opts.check(); err != nil {
				return err
			}
			if len(opts.vary) != 2 {
				return usagef("want exactly two --vary PARAM=FROM:TO:STEPS, got %d", len(opts.vary))
			}
			if !slices.Contains(windowShows, opts.show) {
				if err := oldSpelling("--show", opts.show); err != nil {
					return err
				}
				return usagef("--show %q: want %s", opts.show, strings.Join(windowShows, ", "))
			}
			return windowRun(opts)
		},
	}
	opts.flags.register(cmd)
	cmd.Flags().StringArrayVar(&opts.vary, "vary", nil, "grow-step parameter and range PARAM=FROM:TO:STEPS (give twice)")
	cmd.Flags().StringVar(&opts.show, "show", "coverage", "quantity to map: "+strings.Join(windowShows, ", "))
	cmd.Flags().IntVar(&opts.maxPoints, "max-points", defaultMaxPoints, "most grid points computed (each takes about 0.5 KiB of memory)")
	opts.modelFlags.register(cmd, "write a heat map to this .png or .svg file")
	return cmd
}

// showValue is the --show quantity of a point in display units.
func showValue(show string, p kinetics.Point) float64 { return chart.WindowValue(show, p) }

// showLabel is the --show quantity's label.
func showLabel(show string) string { return chart.WindowLabel(show) }

// windowResult is the JSON form of `foilrun window`.
type windowResult struct {
	Recipe string `json:"recipe"`
	Step   string `json:"step"`
	X      string `json:"x"`
	XUnit  string `json:"x_unit"`
	Y      string `json:"y"`
	YUnit  string `json:"y_unit"`
	Show   string `json:"show"`
	// NotPredicted names the quantities a coverage-only calibration does
	// not predict; their fields are null.
	NotPredicted []string      `json:"not_predicted,omitempty"`
	Points       []windowPoint `json:"points"`
}

type windowPoint struct {
	X            float64       `json:"x"`
	Y            float64       `json:"y"`
	Feasible     bool          `json:"feasible"`
	Rule         string        `json:"rule,omitempty"`
	Message      string        `json:"message,omitempty"`
	Coverage     float64       `json:"coverage"`
	NucleiPerMM2 *float64      `json:"nuclei_per_mm2"` // null when not predicted
	DomainUm     *float64      `json:"domain_size_um"` // null when not predicted
	T99Min       *float64      `json:"t99_min"`
	Etching      bool          `json:"etching"`
	Interval     *intervalJSON `json:"interval,omitempty"` // with a fitted params file (fit.go)
}

func windowRun(opts *windowOptions) error {
	var axes [2]kinetics.Axis
	for i, v := range opts.vary {
		a, err := kinetics.ParseAxis(v)
		if err != nil && hintOf(err) != "" {
			return err // the library's own hint says what to write
		}
		if err != nil {
			return withHint(err, "write --vary PARAM=FROM:TO:STEPS with PARAM temperature, pressure, duration or a gas, e.g. --vary temperature=950C:1050C:11")
		}
		axes[i] = a
	}
	if err := opts.checkGrid(axes); err != nil {
		return err
	}
	params, err := loadParams(opts.params)
	if err != nil {
		return err
	}
	if opts.show != "time_to_99" {
		if err := params.Predicts(opts.show); err != nil {
			return asUsage(fmt.Errorf("--show: %w", err))
		}
	}
	plan, site, err := opts.flags.loadPlan(opts.recipe)
	if err != nil {
		return err
	}
	guard, err := opts.plotGuard(opts.f, plan, site)
	if err != nil {
		return err
	}
	spec := kinetics.WindowSpec{X: axes[0], Y: axes[1], Params: params}
	bar := opts.f.io.progress("window")
	spec.Progress = bar.report()
	m, err := kinetics.Window(plan, spec)
	bar.finish()
	if err != nil {
		return err
	}
	ivs, err := windowIntervals(plan, m, params)
	if err != nil {
		return err
	}
	if ivs != nil && opts.output == formatTable {
		fmt.Fprintln(opts.f.io.Err, "90 % intervals of every point are in --output json")
	}
	if err := opts.writeWindow(m, params, ivs); err != nil {
		return err
	}
	if opts.plot != "" {
		return opts.writePlot(m, guard)
	}
	return nil
}

// writeWindow writes the map in the --output format; JSON carries the
// points' intervals ivs (none without a covariance).
func (opts *windowOptions) writeWindow(m *kinetics.Map, params kinetics.Params, ivs []*intervalJSON) error {
	var err error
	w := opts.f.io.Out
	switch opts.output {
	case formatJSON:
		res := windowJSON(m, opts.show, params)
		for i := range ivs {
			res.Points[i].Interval = ivs[i]
		}
		err = writeJSON(w, res)
	case formatCSV:
		err = writeCSV(w, windowLongTable(m, params))
	default:
		err = printWindow(w, m, opts.show)
		if np := notPredicted(params); err == nil && len(np) > 0 {
			fmt.Fprintf(w, "note: the parameters were calibrated on coverage only: coverage and times to coverage are predicted; %s are not\n", strings.Join(np, " and "))
		}
	}
	return err
}

// windowJSON is the JSON form of the map. With a coverage-only
// calibration the nuclei density and domain size of every point are null
// and named in not_predicted.
func windowJSON(m *kinetics.Map, show string, params kinetics.Params) windowResult {
	res := windowResult{Recipe: m.Recipe, Step: m.Step, X: m.X.Param, XUnit: m.X.Unit(), Y: m.Y.Param, YUnit: m.Y.Unit(), Show: show,
		NotPredicted: notPredicted(params)}
	predicted := len(res.NotPredicted) == 0
	for _, row := range m.Points {
		for _, p := range row {
			wp := windowPoint{
				X: round6(m.X.Display(p.X)), Y: round6(m.Y.Display(p.Y)), Feasible: p.Feasible, Rule: p.Rule, Message: p.Message,
				Coverage: round6(p.Coverage), T99Min: opt6(p.T99 / 60), Etching: p.Etching,
			}
			if predicted {
				wp.NucleiPerMM2, wp.DomainUm = opt6(inUnit(p.NucleiDensity, "1/mm2")), opt6(inUnit(p.DomainSize, "um"))
			}
			res.Points = append(res.Points, wp)
		}
	}
	return res
}

// writePlot writes the --plot heat map of the map's --show quantity,
// infeasible cells blocked.
func (opts *windowOptions) writePlot(m *kinetics.Map, guard outfile.Guard) error {
	hm := chart.WindowMap(m, opts.show)
	if err := writeOutput(opts.plot, guard, func(w io.Writer) error { return chart.WriteHeatMap(w, opts.plot, hm) }); err != nil {
		return err
	}
	fmt.Fprintf(opts.f.io.Err, "wrote %s\n", opts.plot)
	return nil
}

// checkGrid refuses a grid of more than --max-points points, before
// anything is computed, with the memory it would take.
func (opts *windowOptions) checkGrid(axes [2]kinetics.Axis) error {
	n := int64(axes[0].Steps) * int64(axes[1].Steps)
	if n <= int64(opts.maxPoints) {
		return nil
	}
	return withHint(usagef("window: a %d × %d grid is %d points, over the limit of %d (it would take about %s of memory)",
		axes[0].Steps, axes[1].Steps, n, opts.maxPoints, infile.FormatSize(n*pointBytes)),
		"use fewer steps per --vary, or raise the limit with --max-points N if the machine has the memory")
}

// printWindow prints the map as a grid: one row per y value, one column
// per x value; infeasible cells read "x", with the rules listed below.
func printWindow(w io.Writer, m *kinetics.Map, show string) error {
	fmt.Fprintf(w, "recipe %q, step %s: %s\n", m.Recipe, m.Step, showLabel(show))
	t := table{Header: []string{m.Y.Label() + " \\ " + m.X.Label()}, Numeric: []bool{true}}
	for _, x := range m.Xs {
		t.Header = append(t.Header, num(m.X.Display(x), 4))
		t.Numeric = append(t.Numeric, true)
	}
	rules := map[string]string{}
	var order []string
	for iy, row := range m.Points {
		cells := []string{num(m.Y.Display(m.Ys[iy]), 4)}
		for _, p := range row {
			v := showValue(show, p)
			switch {
			case !p.Feasible:
				cells = append(cells, "x")
				if _, ok := rules[p.Rule]; !ok {
					rules[p.Rule] = p.Message
					order = append(order, p.Rule)
				}
			case math.IsNaN(v):
				cells = append(cells, "-")
			default:
				cells = append(cells, num(v, 3))
			}
		}
		t.add(cells...)
	}
	heading(w, "Window")
	if err := writeTable(w, t); err != nil {
		return err
	}
	if show == "time_to_99" {
		fmt.Fprintln(w, "-: 99 % coverage not reached")
	}
	for _, r := range order {
		fmt.Fprintf(w, "x: infeasible, %s (e.g. %s)\n", r, rules[r])
	}
	return nil
}

// windowLongTable is the CSV form: one row per grid point, with the
// values of the JSON form (windowJSON) to 6 significant digits, written
// straight from the map (g6 of a value is num of its round6). Each axis
// value is written once; the grid's rows are written on GOMAXPROCS
// goroutines, each row in its place.
func windowLongTable(m *kinetics.Map, params kinetics.Params) table {
	const cols = 9
	t := table{Header: []string{m.X.Param + " " + m.X.Unit(), m.Y.Param + " " + m.Y.Unit(), "feasible", "rule", "coverage", "nuclei_per_mm2", "domain_size_um", "t99_min", "etching"}}
	predicted := len(notPredicted(params)) == 0
	nx := len(m.Xs)
	xs := make([]string, nx)
	for ix, x := range m.Xs {
		xs[ix] = g6(m.X.Display(x))
	}
	cells := make([]string, cols*nx*len(m.Ys)) // one array for every row
	t.Rows = make([][]string, nx*len(m.Ys))
	rows := func(iy int) {
		y := g6(m.Y.Display(m.Ys[iy]))
		for ix, p := range m.Points[iy] {
			k := iy*nx + ix
			c := cells[k*cols : (k+1)*cols : (k+1)*cols]
			c[0], c[1], c[2], c[3] = xs[ix], y, strconv.FormatBool(p.Feasible), p.Rule
			c[4], c[7], c[8] = g6(p.Coverage), finite6(p.T99/60), strconv.FormatBool(p.Etching)
			if predicted {
				c[5], c[6] = finite6(inUnit(p.NucleiDensity, "1/mm2")), finite6(inUnit(p.DomainSize, "um"))
			}
			t.Rows[k] = c
		}
	}
	var wg sync.WaitGroup
	workers := runtime.GOMAXPROCS(0)
	for w := range workers {
		wg.Go(func() {
			for iy := w; iy < len(m.Ys); iy += workers {
				rows(iy)
			}
		})
	}
	wg.Wait()
	return t
}

// g6 is v with 6 significant digits, as num(v, 6) writes it ("" for NaN).
func g6(v float64) string {
	if v != v {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// finite6 is g6 of a finite v and "" for NaN and infinities (the JSON
// form's null, opt6).
func finite6(v float64) string {
	if math.IsInf(v, 0) {
		return ""
	}
	return g6(v)
}
