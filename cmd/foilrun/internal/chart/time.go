package chart

import (
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Step is one recipe step on a time axis (minutes).
type Step struct {
	Name       string // short, number first: "6 grow"
	Start, End float64
	Carbon     bool // methane flows: shaded, and the zoom column shows it
}

// Row is one quantity against time, drawn across the whole run and, when
// the figure zooms, over the steps with methane.
type Row struct {
	YLabel string
	Series []Series
	// Range fixes the y axis when Range[1] > Range[0] (e.g. 0–100 %).
	Range [2]float64
	// AutoLog draws the row on a log axis when its values spread over
	// more than LogRatio (UseLog); values ≤ 0 are then left out.
	AutoLog bool
	// Unit, when set, has the zoom column write each series' value on
	// every step with methane ("CH4 7.77 Pa"), so a small value under a
	// large one can still be read.
	Unit string
}

// TimeFigure is a stack of rows sharing a time axis in minutes, with the
// recipe's steps marked on every panel.
type TimeFigure struct {
	Title  string
	XLabel string // "time (min)"
	Steps  []Step
	Rows   []Row
}

// Time figure layout.
const (
	timeWidth   = 26 * vg.Centimeter
	timeRow     = 5 * vg.Centimeter
	timeHeader  = 28 * vg.Millimeter // title, column heads and step names
	legendWidth = 34 * vg.Millimeter
	nameLevels  = 3 // rows of step names before they fall back to numbers
	namePt      = 8
)

// TimeSize is the size of the time figure with rows rows.
func TimeSize(rows int) (w, h vg.Length) {
	return timeWidth, timeHeader + vg.Length(rows)*timeRow
}

// ZoomRange is the time window of the zoom column: the steps with
// methane, from the first one's start to the last one's end, widened on
// each side by 15 % of that span (at least 1 min) and kept within the
// run. ok is false when no step has methane or the window would cover
// nearly all of the run (over 80 %), so a zoom would show nothing new.
func ZoomRange(steps []Step) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	start, end := math.Inf(1), math.Inf(-1)
	for _, s := range steps {
		start, end = math.Min(start, s.Start), math.Max(end, s.End)
		if s.Carbon {
			lo, hi = math.Min(lo, s.Start), math.Max(hi, s.End)
		}
	}
	if lo > hi {
		return 0, 0, false
	}
	pad := math.Max(0.15*(hi-lo), 1)
	lo, hi = math.Max(start, lo-pad), math.Min(end, hi+pad)
	return lo, hi, hi-lo < 0.8*(end-start)
}

// WriteTimeFigure draws f and writes it to out as PNG or SVG, by the
// extension of name (the file's name, also used in messages): a column with the
// whole run and, when some steps carry methane, a column zoomed on them;
// step boundaries as dashed lines with the step names along the top,
// steps with methane shaded, legends to the right of the panels.
func WriteTimeFigure(out io.Writer, name string, f TimeFigure) error {
	if len(f.Rows) == 0 {
		return fmt.Errorf("time figure %q has no rows", f.Title)
	}
	start, end := math.Inf(1), math.Inf(-1)
	for _, s := range f.Steps {
		start, end = math.Min(start, s.Start), math.Max(end, s.End)
	}
	if !(end > start) {
		var ok bool
		if start, end, ok = seriesXRange(f.Rows); !ok {
			return fmt.Errorf("time figure %q has no data", f.Title)
		}
	}
	windows := [][2]float64{{start, end}}
	heads := []string{"whole run (shaded: steps with methane)"}
	if lo, hi, ok := ZoomRange(f.Steps); ok {
		windows = append(windows, [2]float64{lo, hi})
		heads = append(heads, fmt.Sprintf("zoom on the steps with methane, %s–%s min", trimFloat(lo, 1), trimFloat(hi, 1)))
	}
	plots, legends, err := timePlots(f, windows)
	if err != nil {
		return err
	}
	w, h := TimeSize(len(f.Rows))
	return save(out, name, w, h, func(dc draw.Canvas) error {
		dc = drawTitle(dc, f.Title, 12)
		top := dc.Max.Y - (timeHeader - 11*vg.Millimeter)
		area := crop(dc, dc.Min.X, dc.Min.Y, dc.Max.X-legendWidth, top)
		tiles := draw.Tiles{Rows: len(plots), Cols: len(windows), PadTop: vg.Millimeter, PadBottom: 2 * vg.Millimeter,
			PadLeft: 2 * vg.Millimeter, PadRight: 2 * vg.Millimeter, PadX: 8 * vg.Millimeter, PadY: 3 * vg.Millimeter}
		areas := drawPlots(plots, tiles, area)
		for i := range plots {
			if legends[i].TextStyle.Font.Size > 0 {
				last := areas[i][len(windows)-1]
				legends[i].Draw(crop(dc, area.Max.X+2*vg.Millimeter, last.Min.Y, dc.Max.X, last.Max.Y))
			}
		}
		for j := range windows {
			data := areas[0][j]
			head := textStyle(10)
			head.XAlign = draw.XCenter
			dc.FillText(head, vg.Point{X: (data.Min.X + data.Max.X) / 2, Y: top + 12*vg.Millimeter}, heads[j])
			// names may run a little past the data area, over the y axis
			strip := crop(dc, max(area.Min.X, data.Min.X-12*vg.Millimeter), top, min(area.Max.X, data.Max.X+4*vg.Millimeter), top+12*vg.Millimeter)
			drawStepNames(strip, data, plots[0][j], f.Steps)
		}
		return nil
	})
}

// timePlots are the panels of f, one row per Row and one column per time
// window, with the legend of each row that has more than one series.
func timePlots(f TimeFigure, windows [][2]float64) ([][]*plot.Plot, []plot.Legend, error) {
	plots := make([][]*plot.Plot, len(f.Rows))
	legends := make([]plot.Legend, len(f.Rows))
	for i, r := range f.Rows {
		plots[i] = make([]*plot.Plot, len(windows))
		for j, win := range windows {
			p, thumbs, err := timePanel(r, f.Steps, win[0], win[1], j > 0)
			if err != nil {
				return nil, nil, fmt.Errorf("plot %s: %w", r.YLabel, err)
			}
			if i == len(f.Rows)-1 {
				p.X.Label.Text = f.XLabel
			}
			plots[i][j] = p
			if j == 0 && len(r.Series) > 1 {
				legends[i] = legend()
				for k, s := range r.Series {
					legends[i].Add(s.Name, thumbs[k])
				}
			}
		}
	}
	return plots, legends, nil
}

// seriesXRange is the x range of every series in rows.
func seriesXRange(rows []Row) (lo, hi float64, ok bool) {
	var xs [][]float64
	for _, r := range rows {
		for _, s := range r.Series {
			xs = append(xs, s.X)
		}
	}
	lo, hi, ok = finiteRange(xs...)
	return lo, hi, ok && hi > lo
}

// timePanel is one row's plot over [lo, hi] min, with one thumbnail per
// series for the legend; zoom writes the values on the steps with
// methane when the row has a unit.
func timePanel(r Row, steps []Step, lo, hi float64, zoom bool) (*plot.Plot, []plot.Thumbnailer, error) {
	p := newPlot()
	p.Y.Label.Text = r.YLabel
	p.X.Min, p.X.Max = lo, hi
	p.X.Tick.Marker = TimeTicks{}
	p.Add(stepMarks{steps}, grid())
	var all [][]float64
	for _, s := range r.Series {
		all = append(all, s.Y)
	}
	log := r.AutoLog && UseLog(all...)
	var shown [][]float64
	thumbs := make([]plot.Thumbnailer, len(r.Series))
	for k, s := range r.Series {
		xs, ys := clip(s.X, s.Y, lo, hi)
		shown = append(shown, ys)
		runs := [][2]int{{0, len(xs)}}
		if log {
			runs = positiveRuns(ys)
		}
		for _, run := range runs {
			pts := make(plotter.XYs, 0, run[1]-run[0])
			for q := run[0]; q < run[1]; q++ {
				pts = append(pts, plotter.XY{X: xs[q], Y: ys[q]})
			}
			l, err := line(pts, lineColors[k%len(lineColors)])
			if err != nil {
				return nil, nil, fmt.Errorf("%s: %w", s.Name, err)
			}
			p.Add(l)
			thumbs[k] = l
		}
		if thumbs[k] == nil { // nothing to draw: still a legend entry
			l, _ := line(plotter.XYs{{X: lo, Y: 1}}, lineColors[k%len(lineColors)])
			thumbs[k] = l
		}
	}
	if zoom && r.Unit != "" {
		p.Add(stepValues{steps: steps, series: r.Series, unit: r.Unit})
	}
	switch {
	case r.Range[1] > r.Range[0]:
		p.Y.Min, p.Y.Max = r.Range[0], r.Range[1]
		p.Y.Tick.Marker = LinearTicks{N: 5}
	case log:
		ylo, yhi, _ := positiveRange(all...)
		setScale(&p.Y, true, ylo, yhi, 6)
	default:
		ylo, yhi, ok := finiteRange(shown...)
		if !ok {
			ylo, yhi = 0, 1
		}
		setScale(&p.Y, false, ylo, yhi, 6)
	}
	return p, thumbs, nil
}

// clip keeps the points of a polyline within [lo, hi], with the line's
// values interpolated at lo and hi.
func clip(xs, ys []float64, lo, hi float64) ([]float64, []float64) {
	var cx, cy []float64
	for k := range xs {
		if k > 0 && xs[k-1] < lo && xs[k] > lo {
			cx, cy = append(cx, lo), append(cy, lerp(xs[k-1], ys[k-1], xs[k], ys[k], lo))
		}
		if xs[k] >= lo && xs[k] <= hi {
			cx, cy = append(cx, xs[k]), append(cy, ys[k])
		}
		if k > 0 && xs[k-1] < hi && xs[k] > hi {
			cx, cy = append(cx, hi), append(cy, lerp(xs[k-1], ys[k-1], xs[k], ys[k], hi))
		}
	}
	return cx, cy
}

func lerp(x0, y0, x1, y1, x float64) float64 {
	return y0 + (y1-y0)*(x-x0)/(x1-x0)
}

// positiveRuns are the index ranges [from, to) of consecutive values > 0.
func positiveRuns(ys []float64) [][2]int {
	var runs [][2]int
	from := -1
	for k, y := range ys {
		switch {
		case y > 0 && from < 0:
			from = k
		case !(y > 0) && from >= 0:
			runs, from = append(runs, [2]int{from, k}), -1
		}
	}
	if from >= 0 {
		runs = append(runs, [2]int{from, len(ys)})
	}
	return runs
}

// stepMarks shades the steps with methane and draws each step boundary
// inside the axis range as a thin dashed line.
type stepMarks struct{ steps []Step }

// Plot implements plot.Plotter.
func (m stepMarks) Plot(c draw.Canvas, p *plot.Plot) {
	x := func(v float64) vg.Length { return c.X(p.X.Norm(v)) }
	c.SetColor(carbonShade)
	for _, s := range m.steps {
		a, b := math.Max(s.Start, p.X.Min), math.Min(s.End, p.X.Max)
		if s.Carbon && b > a {
			r := vg.Rectangle{Min: vg.Point{X: x(a), Y: c.Min.Y}, Max: vg.Point{X: x(b), Y: c.Max.Y}}
			c.Fill(r.Path())
		}
	}
	sty := draw.LineStyle{Color: boundaryColor, Width: vg.Points(0.6), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}
	for _, v := range boundaries(m.steps) {
		if v > p.X.Min && v < p.X.Max {
			c.StrokeLine2(sty, x(v), c.Min.Y, x(v), c.Max.Y)
		}
	}
}

// boundaries are the times between steps and the end of the last one.
func boundaries(steps []Step) []float64 {
	var out []float64
	for i, s := range steps {
		if i > 0 {
			out = append(out, s.Start)
		}
	}
	if len(steps) > 0 {
		out = append(out, steps[len(steps)-1].End)
	}
	return out
}

// placedName is a step name and where it sits in the strip.
type placedName struct {
	text   string
	x0, x1 vg.Length // extent
	level  int
}

// nameSlot is where a step name may go: centred at mid, or shifted
// sideways as long as its centre stays over the step (from a to b).
type nameSlot struct{ a, mid, b vg.Length }

// placeNames lays out step names between left and right, width(name)
// wide: each takes the lowest of nameLevels rows where it overlaps no
// other name, centred over its step or shifted beside a name already
// there while its centre stays over the step. A name that fits nowhere
// is cut to its first word (the step number); if that fits nowhere
// either it goes to the row where it overlaps least.
func placeNames(names []string, slots []nameSlot, width func(string) vg.Length, left, right vg.Length) []placedName {
	gap := vg.Points(4)
	var placed []placedName
	overlap := func(level int, x0, x1 vg.Length) vg.Length {
		var o vg.Length
		for _, q := range placed {
			if q.level == level {
				o += max(0, min(x1, q.x1+gap)-max(x0, q.x0-gap))
			}
		}
		return o
	}
	clamp := func(x0, w vg.Length) vg.Length { return min(max(x0, left), right-w) }
	// fit is the free start nearest the centred one on level, if any.
	fit := func(level int, w vg.Length, sl nameSlot) (vg.Length, bool) {
		cands := []vg.Length{clamp(sl.mid-w/2, w)}
		for _, q := range placed {
			if q.level == level {
				cands = append(cands, q.x1+gap, q.x0-gap-w)
			}
		}
		best, found := vg.Length(0), false
		for k, x0 := range cands {
			c := x0 + w/2
			shiftedOff := k > 0 && (x0 < left || x0+w > right || c < sl.a || c > sl.b)
			if shiftedOff || overlap(level, x0, x0+w) > 0 {
				continue
			}
			if !found || abs(c-sl.mid) < abs(best+w/2-sl.mid) {
				best, found = x0, true
			}
		}
		return best, found
	}
	for i, name := range names {
		done := false
		short := strings.Fields(name + " ")[0]
		for _, t := range []string{name, short} {
			w := width(t)
			for lv := 0; lv < nameLevels && !done; lv++ {
				if x0, ok := fit(lv, w, slots[i]); ok {
					placed, done = append(placed, placedName{t, x0, x0 + w, lv}), true
				}
			}
			if done {
				break
			}
		}
		if !done {
			w := width(short)
			x0 := clamp(slots[i].mid-w/2, w)
			best := 0
			for lv := 1; lv < nameLevels; lv++ {
				if overlap(lv, x0, x0+w) < overlap(best, x0, x0+w) {
					best = lv
				}
			}
			placed = append(placed, placedName{short, x0, x0 + w, best})
		}
	}
	return placed
}

func abs(v vg.Length) vg.Length { return max(v, -v) }

// drawStepNames writes the names of the steps visible in p's x range
// into strip, each over the visible part of its step in data (the
// panel's data canvas).
func drawStepNames(strip, data draw.Canvas, p *plot.Plot, steps []Step) {
	sty := textStyle(namePt)
	var names []string
	var slots []nameSlot
	x := func(v float64) vg.Length { return data.X(p.X.Norm(v)) }
	for _, s := range steps {
		a, b := math.Max(s.Start, p.X.Min), math.Min(s.End, p.X.Max)
		if b < a || (b == a && s.End > s.Start) {
			continue
		}
		names = append(names, s.Name)
		slots = append(slots, nameSlot{x(a), x((a + b) / 2), x(b)})
	}
	lineH := sty.Height("Ag") + vg.Points(2)
	for _, q := range placeNames(names, slots, sty.Width, strip.Min.X, strip.Max.X) {
		strip.FillText(sty, vg.Point{X: q.x0, Y: strip.Min.Y + vg.Points(2) + vg.Length(q.level)*lineH}, q.text)
	}
}

// stepValues writes each series' value at the middle of every step with
// methane, above its line, or below it where the label would run into
// another label.
type stepValues struct {
	steps  []Step
	series []Series
	unit   string
}

// Plot implements plot.Plotter.
func (v stepValues) Plot(c draw.Canvas, p *plot.Plot) {
	sty := textStyle(8)
	sty.XAlign = draw.XCenter
	h := sty.Height("Ag")
	pad := vg.Points(2)
	for _, s := range v.steps {
		a, b := math.Max(s.Start, p.X.Min), math.Min(s.End, p.X.Max)
		if !s.Carbon || b <= a {
			continue
		}
		mid := (a + b) / 2
		type label struct {
			text string
			y    vg.Length
		}
		var labels []label
		for _, se := range v.series {
			val, ok := valueAt(se, mid)
			if _, log := p.Y.Scale.(plot.LogScale); !ok || (log && !(val > 0)) {
				continue
			}
			labels = append(labels, label{se.Name + " " + FormatValue(val) + " " + v.unit, c.Y(p.Y.Norm(val))})
		}
		sort.Slice(labels, func(i, j int) bool { return labels[i].y > labels[j].y })
		var taken []vg.Rectangle
		x := c.X(p.X.Norm(mid))
		for _, l := range labels {
			w := sty.Width(l.text)
			box := vg.Rectangle{Min: vg.Point{X: x - w/2, Y: l.y + pad}, Max: vg.Point{X: x + w/2, Y: l.y + pad + h}}
			if box.Max.Y > c.Max.Y || overlapsAny(box, taken) {
				box.Min.Y, box.Max.Y = l.y-pad-h, l.y-pad
			}
			taken = append(taken, box)
			c.FillText(sty, vg.Point{X: x, Y: box.Min.Y}, l.text)
		}
	}
}

func overlapsAny(r vg.Rectangle, rs []vg.Rectangle) bool {
	for _, q := range rs {
		if r.Min.X < q.Max.X && q.Min.X < r.Max.X && r.Min.Y < q.Max.Y && q.Min.Y < r.Max.Y {
			return true
		}
	}
	return false
}

// valueAt is the series' value at x, interpolated; ok is false outside
// its x range.
func valueAt(s Series, x float64) (float64, bool) {
	for k := 1; k < len(s.X); k++ {
		if s.X[k-1] <= x && x <= s.X[k] {
			if s.X[k] == s.X[k-1] {
				return s.Y[k], true
			}
			return lerp(s.X[k-1], s.Y[k-1], s.X[k], s.Y[k], x), true
		}
	}
	return 0, false
}

// FormatValue writes v with three significant digits and no exponent
// below 10⁶ ("7.77", "51", "384", "4807").
func FormatValue(v float64) string {
	a := math.Abs(v)
	switch {
	case a == 0:
		return "0"
	case a >= 1e6 || a < 1e-3:
		return strconv.FormatFloat(v, 'g', 3, 64)
	case a >= 100:
		return strconv.FormatFloat(v, 'f', 0, 64)
	}
	d := 2 - int(math.Floor(math.Log10(a)))
	return trimZeros(strconv.FormatFloat(v, 'f', d, 64))
}

// trimZeros drops trailing zeros after a decimal point ("51.0" → "51").
func trimZeros(s string) string {
	if !strings.Contains(s, ".") {
		return s
	}
	return strings.TrimSuffix(strings.TrimRight(s, "0"), ".")
}
