package kinetics

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/foilrun/foilrun/recipe"
	"github.com/foilrun/foilrun/recipe/gas"
)

// Axis is one grow-step parameter varied over a linear range.
type Axis struct {
	Param    string           // ParamTemperature, ParamPressure, ParamDuration or a gas symbol such as "CH4"
	Dim      recipe.Dimension // recipe.Temperature, Pressure, Duration or Flow
	From, To float64          // SI: K, Pa, s or mol/s
	Steps    int              // number of values, ≥ 2
	Text     string           // as written, e.g. "temperature=950C:1050C:11"
}

// MaxAxisSteps is the most values ParseAxis accepts on one axis (a
// window of 10⁴ × 10⁴ points already takes hours).
const MaxAxisSteps = 10000

// Values returns the Steps values from From to To, evenly spaced: the
// first is From and the last To exactly, and every value lies between
// them.
func (a Axis) Values() []float64 {
	v := make([]float64, a.Steps)
	lo, hi := math.Min(a.From, a.To), math.Max(a.From, a.To)
	for i := range v {
		x := a.From + (a.To-a.From)*(float64(i)/float64(a.Steps-1))
		v[i] = math.Min(math.Max(x, lo), hi)
	}
	v[0], v[len(v)-1] = a.From, a.To
	return v
}

// Unit is the display unit of the axis: "C", "Pa", "min" or "sccm".
func (a Axis) Unit() string {
	switch a.Dim {
	case recipe.Temperature:
		return "C"
	case recipe.Pressure:
		return "Pa"
	case recipe.Duration:
		return "min"
	}
	return "sccm"
}

// Display converts an SI value of the axis into its display unit.
func (a Axis) Display(si float64) float64 {
	v, _ := recipe.ConvertTo(si, a.Unit())
	return v
}

// Label is "temperature (C)", "CH4 flow (sccm)", and so on.
func (a Axis) Label() string {
	if a.Dim == recipe.Flow {
		return a.Param + " flow (sccm)"
	}
	return a.Param + " (" + a.Unit() + ")"
}

// ParseAxis reads PARAM=FROM:TO:STEPS, e.g. "temperature=950C:1050C:11",
// "CH4=1sccm:40sccm:10", "duration=1min:30min:12" or
// "pressure=100mTorr:2Torr:8". PARAM is temperature, duration, pressure or
// a gas name (its flow in the grow step); the old name "time" is refused
// with a message naming "duration". FROM and TO carry units and are
// finite; 2 ≤ STEPS ≤ MaxAxisSteps. Errors are *InputError of kind
// KindAxis (wrapping ErrAxis).
func ParseAxis(spec string) (Axis, error) {
	a := Axis{Text: spec}
	ctx := fmt.Sprintf("axis %q", spec)
	name, rng, ok := strings.Cut(spec, "=")
	parts := strings.Split(rng, ":")
	if !ok || len(parts) != 3 {
		return a, inputErr(KindAxis, "%s: want PARAM=FROM:TO:STEPS, e.g. \"temperature=950C:1050C:11\"", ctx)
	}
	param, dim, err := parameterOf(KindAxis, ctx, strings.TrimSpace(name))
	if err != nil {
		return a, err
	}
	a.Param, a.Dim = param, dim
	from, err := recipe.Parse(parts[0], a.Dim)
	if err != nil {
		return a, inputErr(KindAxis, "%s: from %v", ctx, err)
	}
	to, err := recipe.Parse(parts[1], a.Dim)
	if err != nil {
		return a, inputErr(KindAxis, "%s: to %v", ctx, err)
	}
	n, err := strconv.Atoi(strings.TrimSpace(parts[2]))
	if err != nil {
		return a, inputErr(KindAxis, "%s: steps %q is not a whole number", ctx, parts[2])
	}
	if n < 2 || n > MaxAxisSteps {
		return a, inputErr(KindAxis, "%s: want 2 to %d steps, got %d", ctx, MaxAxisSteps, n)
	}
	if from.SI == to.SI {
		return a, inputErr(KindAxis, "%s: the range is empty (from equals to)", ctx)
	}
	if d := to.SI - from.SI; math.IsInf(d, 0) || math.IsNaN(d) || math.IsInf(from.SI, 0) || math.IsInf(to.SI, 0) {
		return a, inputErr(KindAxis, "%s: the range is too wide to hold", ctx)
	}
	a.From, a.To, a.Steps = from.SI, to.SI, n
	return a, nil
}

// checkLimits reports a range that leaves what the furnace can do: a
// temperature above the heater's maximum or the tube's service limit, a
// flow above the line's full scale (or a gas without a line), a pressure
// below the base pressure or above one atmosphere, or a duration that is not
// positive.
func (a Axis) checkLimits(f *recipe.Furnace) error {
	lo, hi := math.Min(a.From, a.To), math.Max(a.From, a.To)
	c := func(k float64) string { return fmt.Sprintf("%.4g C", recipe.Celsius(k)) }
	switch a.Dim {
	case recipe.Temperature:
		if lo <= 0 {
			return inputErr(KindAxis, "axis %q: %s is at or below absolute zero", a.Text, c(lo))
		}
		if hi > f.Heater.MaxTemperature.SI {
			return inputErr(KindAxis, "axis %q: %s is above the heater's maximum %s on furnace %q", a.Text, c(hi), c(f.Heater.MaxTemperature.SI), f.Name)
		}
		if hi > f.Tube.ServiceLimit.SI {
			return inputErr(KindAxis, "axis %q: %s is above the tube's service limit %s on furnace %q", a.Text, c(hi), c(f.Tube.ServiceLimit.SI), f.Name)
		}
	case recipe.Pressure:
		if lo < f.Vacuum.BasePressure.SI {
			return inputErr(KindAxis, "axis %q: %.4g Pa is below the base pressure %.4g Pa on furnace %q", a.Text, lo, f.Vacuum.BasePressure.SI, f.Name)
		}
		if hi > gas.StandardAtmosphere {
			return inputErr(KindAxis, "axis %q: %.6g Pa is above one atmosphere (101325 Pa)", a.Text, hi)
		}
	case recipe.Duration:
		if !(lo > 0) {
			return inputErr(KindAxis, "axis %q: durations must be greater than zero", a.Text)
		}
	case recipe.Flow:
		if lo < 0 {
			return inputErr(KindAxis, "axis %q: flows must not be negative", a.Text)
		}
		line := f.LineFor(a.Param)
		if line == nil {
			return inputErr(KindAxis, "axis %q: furnace %q has no gas line for %s", a.Text, f.Name, a.Param)
		}
		if fs := line.FullScaleOfGas(); hi > fs*(1+1e-9) {
			return inputErr(KindAxis, "axis %q: %.4g sccm is above the %s line's full scale %.4g sccm on furnace %q",
				a.Text, hi/gas.MolPerSCCMPerSecond, a.Param, fs/gas.MolPerSCCMPerSecond, f.Name)
		}
	}
	return nil
}

// WindowSpec says what to map.
type WindowSpec struct {
	X, Y    Axis    // the two grow-step parameters, different from each other
	Params  Params  // model parameters
	Options Options // numerics of each prediction
	// Workers is the number of goroutines; 0 means runtime.GOMAXPROCS(0).
	Workers int
	// Progress, when not nil, is called after each point with the number
	// done so far and the total. Calls are serialised and done increases.
	Progress func(done, total int)
}

// Point is one grid point of a window.
type Point struct {
	X, Y float64 // SI values of the two axes
	// Feasible is false when recipe.Check found an error for the changed
	// recipe; Rule and Message are then the first error's.
	Feasible bool
	Rule     string
	Message  string

	Coverage      float64 // final θ
	NucleiDensity float64 // final N, 1/m²
	DomainSize    float64 // final domain size, m
	T99           float64 // s from the first carbon to 99 % coverage; NaN if not reached
	Etching       bool    // the grow step etches
}

// Map is a window: predictions over a grid of two grow-step parameters.
type Map struct {
	Recipe string
	Step   string // label of the grow step varied
	X, Y   Axis
	Xs, Ys []float64 // SI values along each axis
	Points [][]Point // Points[iy][ix]
}

// Window maps predictions over two grow-step parameters of the plan's
// recipe. Every grid point is the recipe with the first grow step changed,
// laid out again as recipe.Derive would, checked as recipe.Check would (an
// error finding makes the point infeasible; it is still predicted) and
// predicted as Predict would, with exactly their results; the steps
// before the grow step are derived, checked and predicted once for the
// whole map (see windowBase). It returns an error (wrapping ErrAxis) for two
// axes on the same parameter or a range outside the furnace's limits, and
// an error when the recipe has no grow step or the parameters are invalid.
// It panics if plan, plan.Recipe or plan.Furnace is nil.
func Window(plan *recipe.Plan, spec WindowSpec) (*Map, error) {
	r, f := plan.Recipe, plan.Furnace
	if err := spec.Params.Validate(); err != nil {
		return nil, err
	}
	if spec.X.Param == spec.Y.Param {
		return nil, inputErr(KindAxis, "axes %q and %q vary the same parameter %s", spec.X.Text, spec.Y.Text, spec.X.Param)
	}
	for _, a := range []Axis{spec.X, spec.Y} {
		if a.Steps < 2 {
			return nil, inputErr(KindAxis, "axis %q: want at least 2 steps, got %d", a.Text, a.Steps)
		}
		if err := a.checkLimits(f); err != nil {
			return nil, err
		}
	}
	grow := r.FirstStep(recipe.KindGrow)
	if grow < 0 {
		return nil, fmt.Errorf("window: recipe %q has no grow step to vary", r.Name)
	}
	m := &Map{Recipe: r.Name, Step: r.Steps[grow].Label(grow), X: spec.X, Y: spec.Y, Xs: spec.X.Values(), Ys: spec.Y.Values()}
	m.Points = make([][]Point, len(m.Ys))
	for iy := range m.Points {
		m.Points[iy] = make([]Point, len(m.Xs))
	}
	base, err := newWindowBase(r, f, grow, spec)
	if err != nil {
		return nil, err
	}
	if err := m.fill(base, spec); err != nil {
		return nil, err
	}
	return m, nil
}

// windowChunk is how many consecutive points a worker takes at a time.
const windowChunk = 64

// fill predicts every point of the map on spec.Workers goroutines (0:
// GOMAXPROCS), each taking the next windowChunk points in turn and
// writing them by index, so the map is the same whatever the order. It
// returns the error of the first point, in map order, that has one.
func (m *Map) fill(base *windowBase, spec WindowSpec) error {
	total := len(m.Xs) * len(m.Ys)
	workers := spec.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, total)
	var (
		next     atomic.Int64
		mu       sync.Mutex
		done     int
		errAt    = total
		firstErr error
		wg       sync.WaitGroup
	)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := base.newWorker()
			for {
				from := int(next.Add(windowChunk)) - windowChunk
				if from >= total {
					return
				}
				to, at := min(from+windowChunk, total), total
				var err error
				for k := from; k < to; k++ {
					iy, ix := k/len(m.Xs), k%len(m.Xs)
					_, pt, perr := w.point(ix, iy)
					m.Points[iy][ix] = pt
					if perr != nil && err == nil {
						err, at = perr, k
					}
				}
				mu.Lock()
				if at < errAt {
					firstErr, errAt = err, at
				}
				for range to - from {
					done++
					if spec.Progress != nil {
						spec.Progress(done, total)
					}
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	return firstErr
}

// setParam sets one axis value on the (copied) grow step; a gas flow gets a
// fresh Flows slice so the base recipe is never written.
func setParam(s *recipe.Step, a Axis, v float64) {
	if a.Dim == recipe.Flow {
		s.Flows = slices.Clone(s.Flows)
	}
	setOwnParam(s, a, v)
}

// setOwnParam is setParam on a step whose Flows the caller owns: a gas
// flow is set in place, or appended when the step has none of that gas.
func setOwnParam(s *recipe.Step, a Axis, v float64) { setQuantity(s, a, a.quantity(v)) }

// quantity is the axis value v as setParam writes it into a step.
func (a Axis) quantity(v float64) recipe.Quantity {
	text := strconv.FormatFloat(a.Display(v), 'g', 6, 64) + " " + a.Unit()
	return recipe.Quantity{SI: v, Dim: a.Dim, Text: text}
}

// setQuantity is setOwnParam with the value already made a quantity.
func setQuantity(s *recipe.Step, a Axis, q recipe.Quantity) {
	switch a.Param {
	case ParamTemperature:
		s.Temperature = q
	case ParamPressure:
		s.Pressure = recipe.PressureSetting{Setpoint: q}
	case ParamDuration:
		s.Duration = q
	default:
		found := false
		for i := range s.Flows {
			if s.Flows[i].Gas == a.Param {
				s.Flows[i].Flow, found = q, true
			}
		}
		if !found {
			s.Flows = append(s.Flows, recipe.GasFlow{Gas: a.Param, Flow: q})
		}
	}
}
