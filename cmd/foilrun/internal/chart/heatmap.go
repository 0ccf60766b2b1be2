package chart

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/brewer"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// HeatMap is a value over a grid of two parameters.
type HeatMap struct {
	Title, XLabel, YLabel string
	ZLabel                string      // the value and its unit: "coverage (%)"
	X, Y                  []float64   // cell centres, increasing
	Z                     [][]float64 // Z[iy][ix]; NaN: no value
	Blocked               [][]bool    // Blocked[iy][ix]: outside the furnace's limits (may be nil)
	BlockedLabel          string      // legend text of blocked cells, default "outside furnace limits"
	MissingLabel          string      // legend text of NaN cells, default "no value"
	// Points are marked on the map as open rings with one legend entry
	// (e.g. the logged runs); a point outside the axes, or with a NaN
	// coordinate, is left out and counted in the legend.
	Points      []MapPoint
	PointsLabel string // legend text of the points, default "logged runs"
}

// MapPoint is a point marked on a heat map, in the axes' units.
type MapPoint struct{ X, Y float64 }

// Heat map layout.
const (
	heatWidth  = 22 * vg.Centimeter
	heatHeight = 14 * vg.Centimeter
	heatSide   = 55 * vg.Millimeter // colour bar and legend
)

// HeatSize is the size of a heat-map figure.
func HeatSize() (w, h vg.Length) { return heatWidth, heatHeight }

var (
	blockedColor = color.Gray{0x8c}
	missingColor = color.Gray{0xe4}
)

// Sequential returns the map's colour scale over [lo, hi]: ColorBrewer's
// 9-class sequential "YlGnBu" (yellow–green–blue, light for low values,
// dark for high), interpolated in CIELAB with luminance falling linearly
// with the value.
//
// References: C. A. Brewer, ColorBrewer 2.0, colorbrewer2.org (the
// scheme, as gonum's palette/brewer holds it); K. Moreland, "Why we use
// bad color maps and what you can do about it", Electronic Imaging 2016
// (the luminance interpolation of gonum's palette/moreland).
func Sequential(lo, hi float64) (palette.ColorMap, error) {
	p, err := brewer.GetPalette(brewer.TypeSequential, "YlGnBu", 9)
	if err != nil {
		return nil, err
	}
	cs := p.Colors()
	dark := make([]color.Color, len(cs)) // dark to light: rising luminance
	for i, c := range cs {
		dark[len(cs)-1-i] = c
	}
	cm, err := moreland.NewLuminance(dark)
	if err != nil {
		return nil, err
	}
	cm = palette.Reverse(cm)
	cm.SetMin(lo)
	cm.SetMax(hi)
	return cm, nil
}

// heatGrid is a plotter.GridXYZ over Z[row][col].
type heatGrid struct {
	xs, ys []float64
	z      [][]float64
}

func (g heatGrid) Dims() (c, r int)   { return len(g.xs), len(g.ys) }
func (g heatGrid) Z(c, r int) float64 { return g.z[r][c] }
func (g heatGrid) X(c int) float64    { return g.xs[c] }
func (g heatGrid) Y(r int) float64    { return g.ys[r] }

// zRange is the range of the values not blocked, widened to whole tick
// spacings of the colour bar.
func (m HeatMap) zRange() (lo, hi float64) {
	var vs []float64
	for iy, row := range m.Z {
		for ix, v := range row {
			if !m.blocked(ix, iy) {
				vs = append(vs, v)
			}
		}
	}
	lo, hi, ok := finiteRange(vs)
	if !ok {
		return 0, 1
	}
	return linearBounds(lo, hi, 6)
}

func (m HeatMap) blocked(ix, iy int) bool {
	return iy < len(m.Blocked) && ix < len(m.Blocked[iy]) && m.Blocked[iy][ix]
}

// WriteHeatMap draws m and writes it to out as PNG or SVG, by the
// extension of name: the cells in a
// sequential colour scale with a labelled colour bar, blocked cells grey
// and crossed, cells without a value pale grey, each kind named in the
// legend beside the bar.
func WriteHeatMap(out io.Writer, name string, m HeatMap) error {
	if len(m.X) == 0 || len(m.Y) == 0 || len(m.Z) != len(m.Y) {
		return fmt.Errorf("heat map %q: want a value for each of %d × %d cells", m.Title, len(m.X), len(m.Y))
	}
	for _, row := range m.Z {
		if len(row) != len(m.X) {
			return fmt.Errorf("heat map %q: a row has %d values, want %d", m.Title, len(row), len(m.X))
		}
	}
	lo, hi := m.zRange()
	cm, err := Sequential(lo, hi)
	if err != nil {
		return err
	}
	pal, err := samplePalette(cm, 255)
	if err != nil {
		return err
	}
	z, blocked, missing := m.cells()
	p := newPlot()
	p.X.Label.Text, p.Y.Label.Text = m.XLabel, m.YLabel
	hm := plotter.NewHeatMap(heatGrid{m.X, m.Y, z}, pal)
	hm.NaN, hm.Min, hm.Max = missingColor, lo, hi
	p.Add(hm)
	marks := cellMarks{xs: edges(m.X), ys: edges(m.Y), cells: blocked}
	p.Add(marks)
	p.X.Min, p.X.Max = marks.xs[0], marks.xs[len(marks.xs)-1]
	p.Y.Min, p.Y.Max = marks.ys[0], marks.ys[len(marks.ys)-1]
	p.X.Tick.Marker, p.Y.Tick.Marker = LinearTicks{N: 7}, LinearTicks{N: 7}
	inside := pointsInside(m.Points, p.X.Min, p.X.Max, p.Y.Min, p.Y.Max)
	if len(inside) > 0 {
		p.Add(pointMarks(inside))
	}

	bar := newPlot()
	bar.HideX()
	bar.Y.Padding = 0
	bar.Y.Min, bar.Y.Max = lo, hi
	bar.Y.Tick.Marker = LinearTicks{N: 6}
	bar.Y.Label.Text = m.ZLabel
	bar.Add(colourBar{colors: pal.Colors(), lo: lo, hi: hi})

	l := legend()
	if len(blocked) > 0 {
		l.Add(orDefault(m.BlockedLabel, "outside furnace limits"), swatch{blockedColor, true})
	}
	if len(missing) > 0 {
		l.Add(orDefault(m.MissingLabel, "no value"), swatch{missingColor, false})
	}
	if len(m.Points) > 0 {
		l.Add(pointsLegend(orDefault(m.PointsLabel, "logged runs"), len(inside), len(m.Points)), pointMarks(nil))
	}
	l.ThumbnailWidth = 5 * vg.Millimeter
	entries := min(len(blocked), 1) + min(len(missing), 1) + min(len(m.Points), 1)
	return save(out, name, heatWidth, heatHeight, func(dc draw.Canvas) error {
		titled := drawTitle(crop(dc, dc.Min.X, dc.Min.Y, dc.Max.X-heatSide, dc.Max.Y), m.Title, 12)
		dc = crop(dc, dc.Min.X, dc.Min.Y, dc.Max.X, titled.Max.Y)
		pad := 3 * vg.Millimeter
		p.Draw(crop(dc, dc.Min.X+pad, dc.Min.Y+pad, dc.Max.X-heatSide, dc.Max.Y))
		data := p.DataCanvas(crop(dc, dc.Min.X+pad, dc.Min.Y+pad, dc.Max.X-heatSide, dc.Max.Y))
		side := dc.Max.X - heatSide + 6*vg.Millimeter
		legendH := vg.Length(0)
		if entries > 0 {
			legendH = vg.Length(entries)*5*vg.Millimeter + 4*vg.Millimeter
		}
		bar.Draw(crop(dc, side, data.Min.Y+legendH, side+22*vg.Millimeter, data.Max.Y))
		l.Draw(crop(dc, side, data.Min.Y, dc.Max.X, data.Min.Y+legendH-2*vg.Millimeter))
		return nil
	})
}

// cells are the values to colour (blocked cells NaN), the blocked cells
// and the cells without a value.
func (m HeatMap) cells() (z [][]float64, blocked, missing []cell) {
	z = make([][]float64, len(m.Z))
	for iy, row := range m.Z {
		z[iy] = append([]float64(nil), row...)
		for ix, v := range row {
			switch {
			case m.blocked(ix, iy):
				z[iy][ix] = math.NaN()
				blocked = append(blocked, cell{ix, iy})
			case math.IsNaN(v):
				missing = append(missing, cell{ix, iy})
			}
		}
	}
	return z, blocked, missing
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// cell is a grid cell by column and row.
type cell struct{ ix, iy int }

// edges are the cell boundaries around centres cs: midway between
// neighbours, half a cell beyond the ends (as plotter.HeatMap draws).
func edges(cs []float64) []float64 {
	if len(cs) == 1 {
		return []float64{cs[0] - 0.5, cs[0] + 0.5}
	}
	out := make([]float64, len(cs)+1)
	for i := 1; i < len(cs); i++ {
		out[i] = (cs[i-1] + cs[i]) / 2
	}
	out[0] = cs[0] - (cs[1]-cs[0])/2
	out[len(cs)] = cs[len(cs)-1] + (cs[len(cs)-1]-cs[len(cs)-2])/2
	return out
}

// cellMarks covers the listed cells in grey with a cross.
type cellMarks struct {
	xs, ys []float64 // cell edges
	cells  []cell
}

// Plot implements plot.Plotter.
func (m cellMarks) Plot(c draw.Canvas, p *plot.Plot) {
	x, y := p.Transforms(&c)
	for _, q := range m.cells {
		r := vg.Rectangle{Min: vg.Point{X: x(m.xs[q.ix]), Y: y(m.ys[q.iy])}, Max: vg.Point{X: x(m.xs[q.ix+1]), Y: y(m.ys[q.iy+1])}}
		drawSwatch(c, r, blockedColor, true)
	}
}

// swatch is a legend thumbnail: a filled square, crossed or not.
type swatch struct {
	color   color.Color
	crossed bool
}

// Thumbnail implements plot.Thumbnailer.
func (s swatch) Thumbnail(c *draw.Canvas) {
	h := c.Max.Y - c.Min.Y
	r := vg.Rectangle{Min: c.Min, Max: vg.Point{X: c.Min.X + h, Y: c.Max.Y}}
	drawSwatch(*c, r, s.color, s.crossed)
}

func drawSwatch(c draw.Canvas, r vg.Rectangle, col color.Color, crossed bool) {
	c.SetColor(col)
	c.Fill(r.Path())
	edge := draw.LineStyle{Color: color.Gray{0x60}, Width: vg.Points(0.4)}
	c.StrokeLines(edge, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}, r.Min})
	if !crossed {
		return
	}
	in := min(r.Max.X-r.Min.X, r.Max.Y-r.Min.Y) * 0.25
	mx, my := (r.Min.X+r.Max.X)/2, (r.Min.Y+r.Max.Y)/2
	sty := draw.LineStyle{Color: color.Gray{0x20}, Width: vg.Points(0.8)}
	c.StrokeLine2(sty, mx-in, my-in, mx+in, my+in)
	c.StrokeLine2(sty, mx-in, my+in, mx+in, my-in)
}

// Point marks: a vermillion ring over a white one, readable on both ends
// of the colour map.
var (
	pointRing = draw.GlyphStyle{Color: lineColors[1], Radius: vg.Points(3.5), Shape: ringGlyph{width: vg.Points(1.3)}}
	pointHalo = draw.GlyphStyle{Color: color.White, Radius: vg.Points(3.5), Shape: ringGlyph{width: vg.Points(3)}}
)

// pointsInside returns the points within [x0, x1] × [y0, y1]; NaN
// coordinates are outside.
func pointsInside(pts []MapPoint, x0, x1, y0, y1 float64) plotter.XYs {
	var in plotter.XYs
	for _, q := range pts {
		if q.X >= x0 && q.X <= x1 && q.Y >= y0 && q.Y <= y1 {
			in = append(in, plotter.XY{X: q.X, Y: q.Y})
		}
	}
	return in
}

// Covered counts the points that fall on the map: within its outer cell
// edges, where WriteHeatMap draws them (the rest are counted "off map"
// in its legend).
func (m HeatMap) Covered(pts []MapPoint) int {
	if len(m.X) == 0 || len(m.Y) == 0 {
		return 0
	}
	xs, ys := edges(m.X), edges(m.Y)
	return len(pointsInside(pts, xs[0], xs[len(xs)-1], ys[0], ys[len(ys)-1]))
}

// pointsLegend is the legend text of the points: the label and how many
// are drawn, with how many were outside the map.
func pointsLegend(label string, drawn, all int) string {
	if drawn == all {
		return fmt.Sprintf("%s: %d", label, all)
	}
	return fmt.Sprintf("%s: %d, %d off map", label, drawn, all-drawn)
}

// pointMarks draws the points as open rings; as a legend thumbnail, one
// ring.
type pointMarks plotter.XYs

// Plot implements plot.Plotter.
func (m pointMarks) Plot(c draw.Canvas, p *plot.Plot) {
	x, y := p.Transforms(&c)
	for _, q := range m {
		at := vg.Point{X: x(q.X), Y: y(q.Y)}
		c.DrawGlyph(pointHalo, at)
		c.DrawGlyph(pointRing, at)
	}
}

// Thumbnail implements plot.Thumbnailer.
func (m pointMarks) Thumbnail(c *draw.Canvas) {
	at := vg.Point{X: c.Min.X + (c.Max.Y-c.Min.Y)/2, Y: c.Center().Y}
	c.DrawGlyph(pointHalo, at)
	c.DrawGlyph(pointRing, at)
}

// ringGlyph is an open circle of a given line width (draw.RingGlyph's
// width is fixed).
type ringGlyph struct{ width vg.Length }

// DrawGlyph implements draw.GlyphDrawer.
func (g ringGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: g.width})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}
