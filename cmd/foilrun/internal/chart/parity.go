package chart

import (
	"fmt"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// ParityPanel is one metric's measured against predicted values.
type ParityPanel struct {
	Quantity            string // "coverage (%)": axes read "measured coverage (%)" and "predicted coverage (%)"
	Measured, Predicted []float64
	// Range fixes both axes when Range[1] > Range[0] (e.g. 0–100 %).
	Range [2]float64
}

// Parity is a figure of parity panels side by side.
type Parity struct {
	Title  string
	Panels []ParityPanel
}

// Parity layout: square panels side by side, the legend to the right.
const (
	paritySide   = 12 * vg.Centimeter
	parityHeader = 9 * vg.Millimeter
	parityLegend = 32 * vg.Millimeter
)

// ParitySize is the size of a parity figure of n panels.
func ParitySize(n int) (w, h vg.Length) {
	return vg.Length(n)*paritySide + parityLegend, paritySide + parityHeader
}

var (
	pointStyle = draw.GlyphStyle{Color: lineColors[0], Radius: vg.Points(2.5), Shape: draw.CircleGlyph{}}
	equalColor = lineColors[1]
)

// WriteParity draws f and writes it to out as PNG or SVG, by the
// extension of name: in each panel predicted
// against measured on equal axes (log on both when the values spread over
// more than LogRatio, values ≤ 0 then left out and counted in the
// panel's title), with the line y = x.
func WriteParity(out io.Writer, name string, f Parity) error {
	if len(f.Panels) == 0 {
		return fmt.Errorf("parity plot %q has no panels", f.Title)
	}
	plots := make([][]*plot.Plot, 1)
	var thumbs []plot.Thumbnailer
	var titles []string
	for _, pn := range f.Panels {
		p, title, th, err := parityPanel(pn)
		if err != nil {
			return fmt.Errorf("parity plot %s: %w", pn.Quantity, err)
		}
		plots[0] = append(plots[0], p)
		titles, thumbs = append(titles, title), th
	}
	l := legend()
	l.ThumbnailWidth = 7 * vg.Millimeter
	l.Add("run", thumbs[0])
	l.Add("y = x", thumbs[1])
	w, h := ParitySize(len(f.Panels))
	return save(out, name, w, h, func(dc draw.Canvas) error {
		dc = drawTitle(dc, f.Title, 12)
		area := crop(dc, dc.Min.X, dc.Min.Y, dc.Max.X-parityLegend, dc.Max.Y-7*vg.Millimeter)
		tiles := draw.Tiles{Rows: 1, Cols: len(f.Panels), PadBottom: 2 * vg.Millimeter,
			PadLeft: 2 * vg.Millimeter, PadRight: 2 * vg.Millimeter, PadX: 8 * vg.Millimeter}
		areas := drawPlots(plots, tiles, area)
		head := textStyle(10)
		head.XAlign = draw.XCenter
		for j := range plots[0] {
			data := areas[0][j]
			dc.FillText(head, vg.Point{X: (data.Min.X + data.Max.X) / 2, Y: data.Max.Y + 2*vg.Millimeter}, titles[j])
		}
		data := areas[0][len(f.Panels)-1]
		l.Draw(crop(dc, area.Max.X+2*vg.Millimeter, data.Min.Y, dc.Max.X, data.Max.Y))
		return nil
	})
}

// parityPanel is one panel and the thumbnails of its points and y = x.
func parityPanel(pn ParityPanel) (*plot.Plot, string, []plot.Thumbnailer, error) {
	if len(pn.Measured) != len(pn.Predicted) {
		return nil, "", nil, fmt.Errorf("%d measured against %d predicted values", len(pn.Measured), len(pn.Predicted))
	}
	log := UseLog(pn.Measured, pn.Predicted)
	var pts plotter.XYs
	left := 0
	for i := range pn.Measured {
		m, q := pn.Measured[i], pn.Predicted[i]
		if math.IsNaN(m) || math.IsNaN(q) || math.IsInf(m, 0) || math.IsInf(q, 0) || (log && (m <= 0 || q <= 0)) {
			left++
			continue
		}
		pts = append(pts, plotter.XY{X: m, Y: q})
	}
	p := newPlot()
	p.X.Label.Text, p.Y.Label.Text = "measured "+pn.Quantity, "predicted "+pn.Quantity
	var lo, hi float64
	switch {
	case pn.Range[1] > pn.Range[0]:
		lo, hi = pn.Range[0], pn.Range[1]
		p.X.Tick.Marker, p.Y.Tick.Marker = LinearTicks{N: 5}, LinearTicks{N: 5}
	case len(pts) == 0:
		lo, hi = 0, 1
	default:
		xs, ys := make([]float64, len(pts)), make([]float64, len(pts))
		for i, q := range pts {
			xs[i], ys[i] = q.X, q.Y
		}
		lo, hi, _ = finiteRange(xs, ys)
		if log {
			lo, hi, _ = positiveRange(xs, ys)
		}
		setScale(&p.X, log, lo, hi, 6)
		setScale(&p.Y, log, lo, hi, 6)
		lo, hi = p.X.Min, p.X.Max
	}
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = lo, hi, lo, hi
	eq, err := line(plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}}, equalColor)
	if err != nil {
		return nil, "", nil, err
	}
	eq.Width, eq.Dashes = vg.Points(1), []vg.Length{vg.Points(5), vg.Points(3)}
	p.Add(grid(), eq)
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, "", nil, err
		}
		sc.GlyphStyle = pointStyle
		p.Add(sc)
	}
	title := fmt.Sprintf("%s, %d runs", pn.Quantity, len(pts))
	if left > 0 {
		title += fmt.Sprintf(" (%d not shown: ≤ 0 or missing)", left)
	}
	return p, title, []plot.Thumbnailer{scatterThumb{}, eq}, nil
}

// scatterThumb is the legend thumbnail of the parity points.
type scatterThumb struct{}

// Thumbnail implements plot.Thumbnailer.
func (s scatterThumb) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(pointStyle, c.Center())
}
