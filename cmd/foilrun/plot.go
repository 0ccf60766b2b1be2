package main

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Plot output: plain series and grids in, PNG or SVG files out. Nothing
// here knows the model; the commands turn their results into panels.

// series is one line of a panel.
type series struct {
	Name string
	X, Y []float64
}

// panel is one plot in a vertical stack sharing the time axis.
type panel struct {
	Title, XLabel, YLabel string
	Series                []series
}

// checkPlotPath accepts a .png or .svg file name.
func checkPlotPath(path string) error {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".png", ".svg":
		return nil
	}
	return usagef("--plot %q: want a file ending in .png or .svg", path)
}

var lineColors = []color.Color{
	color.RGBA{0xc0, 0x30, 0x20, 0xff}, color.RGBA{0x20, 0x50, 0xb0, 0xff},
	color.RGBA{0x20, 0x90, 0x40, 0xff}, color.RGBA{0x80, 0x40, 0xa0, 0xff},
}

// canvasFor makes a canvas of the file's kind and a function that writes it.
func canvasFor(path string, w, h vg.Length) (vg.CanvasSizer, func(*os.File) error) {
	if strings.EqualFold(filepath.Ext(path), ".svg") {
		c := vgsvg.New(w, h)
		return c, func(f *os.File) error { _, err := c.WriteTo(f); return err }
	}
	c := vgimg.New(w, h)
	return c, func(f *os.File) error { _, err := vgimg.PngCanvas{Canvas: c}.WriteTo(f); return err }
}

func saveCanvas(path string, write func(*os.File) error) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("write plot: %w", err)
	}
	if err := write(f); err != nil {
		f.Close()
		return fmt.Errorf("write plot %q: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("write plot %q: %w", path, err)
	}
	return nil
}

// writePanels draws the panels stacked vertically into a PNG or SVG file.
func writePanels(path string, panels []panel) error {
	plots := make([][]*plot.Plot, len(panels))
	for i, pn := range panels {
		p := plot.New()
		p.Title.Text, p.X.Label.Text, p.Y.Label.Text = pn.Title, pn.XLabel, pn.YLabel
		p.Add(plotter.NewGrid())
		for j, s := range pn.Series {
			pts := make(plotter.XYs, len(s.X))
			for k := range s.X {
				pts[k].X, pts[k].Y = s.X[k], s.Y[k]
			}
			l, err := plotter.NewLine(pts)
			if err != nil {
				return fmt.Errorf("plot %s: %w", s.Name, err)
			}
			l.Color = lineColors[j%len(lineColors)]
			l.Width = vg.Points(1.5)
			p.Add(l)
			if len(pn.Series) > 1 {
				p.Legend.Add(s.Name, l)
			}
		}
		p.Legend.Top = true
		plots[i] = []*plot.Plot{p}
	}
	return drawStacked(path, plots, 16*vg.Centimeter, 6*vg.Centimeter, 4*vg.Millimeter)
}

// drawStacked draws one plot per row, aligned, into path (.png or .svg);
// each row is rowHeight tall with gap between rows.
func drawStacked(path string, plots [][]*plot.Plot, width, rowHeight, gap vg.Length) error {
	c, write := canvasFor(path, width, vg.Length(len(plots))*rowHeight)
	tiles := draw.Tiles{Rows: len(plots), Cols: 1, PadTop: vg.Millimeter * 2, PadBottom: vg.Millimeter * 2,
		PadLeft: vg.Millimeter * 2, PadRight: vg.Millimeter * 4, PadY: gap}
	canvases := plot.Align(plots, tiles, draw.New(c))
	for i := range plots {
		plots[i][0].Draw(canvases[i][0])
	}
	return saveCanvas(path, write)
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
func (g heatGrid) bounds() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, row := range g.z {
		for _, v := range row {
			if !math.IsNaN(v) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	if lo > hi {
		return 0, 1
	}
	if lo == hi {
		return lo - 0.5, hi + 0.5
	}
	return lo, hi
}

// writeHeatMap draws z over (xs, ys) with a colour bar; cells where blocked
// is true (infeasible) are grey and crossed; NaN cells are grey.
func writeHeatMap(path, title, xlabel, ylabel, zlabel string, xs, ys []float64, z [][]float64, blocked [][]bool) error {
	g := heatGrid{xs, ys, z}
	lo, hi := g.bounds()
	cm := moreland.SmoothBlueRed()
	cm.SetMin(lo)
	cm.SetMax(hi)
	p := plot.New()
	p.Title.Text, p.X.Label.Text, p.Y.Label.Text = title, xlabel, ylabel
	hm := plotter.NewHeatMap(g, cm.Palette(255))
	hm.NaN = color.Gray{0xb0}
	hm.Min, hm.Max = lo, hi
	p.Add(hm)
	var crosses plotter.XYs
	for iy := range ys {
		for ix := range xs {
			if blocked[iy][ix] {
				crosses = append(crosses, plotter.XY{X: xs[ix], Y: ys[iy]})
			}
		}
	}
	if len(crosses) > 0 {
		sc, err := plotter.NewScatter(crosses)
		if err != nil {
			return err
		}
		sc.GlyphStyle.Shape = draw.CrossGlyph{}
		sc.GlyphStyle.Color = color.Black
		sc.GlyphStyle.Radius = vg.Points(4)
		p.Add(sc)
		p.Title.Text += " (x: infeasible)"
	}
	bar := plot.New()
	bar.Title.Text = zlabel
	bar.Title.TextStyle.Font.Size = vg.Points(9)
	bar.HideX()
	bar.Y.Padding = 0
	bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true})
	c, write := canvasFor(path, 20*vg.Centimeter, 13*vg.Centimeter)
	dc := draw.New(c)
	main := draw.Crop(dc, 0, -4.5*vg.Centimeter, 0, 0)
	side := draw.Crop(dc, 16*vg.Centimeter, -vg.Centimeter, vg.Centimeter, -vg.Centimeter)
	p.Draw(main)
	bar.Draw(side)
	return saveCanvas(path, write)
}
