// Package chart draws foilrun's figures from plain data: time series
// with named step spans (the recipe profile and the predicted coverage),
// maps of a value over a grid (window), and parity plots of measured
// against predicted (fit). It knows neither the model nor the run log;
// the commands turn their results into the types here.
//
// Every figure is written as PNG (at DPI dots per inch) or SVG, chosen by
// the file name's extension. Axes follow the same rules everywhere: time
// at round minutes (TimeSpacing), linear axes at 1-2-2.5-5 spacing
// (NiceSpacing), log axes when values spread over more than LogRatio
// (UseLog), and legends outside the data area.
package chart

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// DPI is the resolution of PNG output.
const DPI = 120

// Series is one line of a panel: Y against X, both finite.
type Series struct {
	Name string
	X, Y []float64
}

// Supported reports whether path ends in an extension the writers
// handle: .png or .svg (any case).
func Supported(path string) bool {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".png", ".svg":
		return true
	}
	return false
}

// Line colours, from the colour-blind-safe set of Okabe and Ito,
// "Color Universal Design" (2008): blue, vermillion, bluish green,
// reddish purple.
var lineColors = []color.Color{
	color.RGBA{0x00, 0x72, 0xb2, 0xff}, color.RGBA{0xd5, 0x5e, 0x00, 0xff},
	color.RGBA{0x00, 0x9e, 0x73, 0xff}, color.RGBA{0xcc, 0x79, 0xa7, 0xff},
}

var (
	gridColor     = color.Gray{0xdd}
	boundaryColor = color.Gray{0x88}
	carbonShade   = color.RGBA{0xfd, 0xef, 0xd8, 0xff} // light orange behind steps with methane
	textColor     = color.Gray{0x20}
)

// sans is the face of every text.
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// textStyle is a left-aligned, bottom-aligned sans text of size pt.
func textStyle(pt float64) text.Style {
	return text.Style{
		Color: textColor, Font: font.From(sans, vg.Points(pt)),
		Handler: plot.DefaultTextHandler, XAlign: draw.XLeft, YAlign: draw.YBottom,
	}
}

// newPlot is a plot with sans text: 10 pt labels and 9 pt tick labels.
func newPlot() *plot.Plot {
	p := plot.New()
	p.Title.TextStyle.Font = font.From(sans, vg.Points(11))
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, vg.Points(10))
		a.Tick.Label.Font = font.From(sans, vg.Points(9))
		a.Padding = vg.Points(2)
	}
	return p
}

// grid is a plotter.Grid in a light grey that stays behind the data.
func grid() *plotter.Grid {
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = gridColor, gridColor
	g.Vertical.Width, g.Horizontal.Width = vg.Points(0.5), vg.Points(0.5)
	return g
}

// setScale makes axis a log axis (LogScale with LogTicks) or a linear
// one (LinearTicks with about n labels) over [lo, hi], widened to round
// values.
func setScale(a *plot.Axis, log bool, lo, hi float64, n int) {
	if log {
		a.Scale, a.Tick.Marker = plot.LogScale{}, LogTicks{}
		a.Min, a.Max = logBounds(lo, hi)
		return
	}
	a.Tick.Marker = LinearTicks{N: n}
	a.Min, a.Max = linearBounds(lo, hi, n)
}

// finiteRange is the smallest and largest finite value; ok is false with
// none.
func finiteRange(values ...[]float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, vs := range values {
		for _, v := range vs {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return lo, hi, lo <= hi
}

// canvas is a drawing surface of the file's kind (by path's extension)
// and the function that encodes it.
func canvas(path string, w, h vg.Length) (vg.CanvasSizer, func(io.Writer) error) {
	if strings.EqualFold(filepath.Ext(path), ".svg") {
		c := vgsvg.New(w, h)
		return c, func(out io.Writer) error { _, err := c.WriteTo(out); return err }
	}
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(DPI))
	return c, func(out io.Writer) error { _, err := vgimg.PngCanvas{Canvas: c}.WriteTo(out); return err }
}

// save draws with paint on a w × h canvas and writes it to out in the
// format of name's extension. Nothing is written when drawing fails.
func save(out io.Writer, name string, w, h vg.Length, paint func(dc draw.Canvas) error) error {
	if !Supported(name) {
		return fmt.Errorf("write plot %q: want a file ending in .png or .svg", name)
	}
	c, encode := canvas(name, w, h)
	dc := draw.New(c)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	if err := paint(dc); err != nil {
		return fmt.Errorf("write plot %q: %w", name, err)
	}
	if err := encode(out); err != nil {
		return fmt.Errorf("write plot %q: %w", name, err)
	}
	return nil
}

// crop is the part of c between x0 and x1 and between y0 and y1
// (absolute canvas coordinates).
func crop(c draw.Canvas, x0, y0, x1, y1 vg.Length) draw.Canvas {
	return draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}}
}

// drawTitle writes s centred at the top of c in size pt and returns the
// canvas below it.
func drawTitle(c draw.Canvas, s string, pt float64) draw.Canvas {
	sty := textStyle(pt)
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
	h := sty.Height(s) + vg.Millimeter*2
	c.FillText(sty, vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: c.Max.Y - vg.Millimeter}, s)
	return crop(c, c.Min.X, c.Min.Y, c.Max.X, c.Max.Y-h)
}

// legend is a plot.Legend in sans 9 pt with icons left of the names.
func legend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle = textStyle(9)
	l.Left, l.Top = true, true
	l.ThumbnailWidth = vg.Centimeter
	l.Padding = vg.Points(3)
	return l
}

// line is a plotter.Line of pts in colour c, 1.5 pt wide.
func line(pts plotter.XYs, c color.Color) (*plotter.Line, error) {
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.Color, l.Width = c, vg.Points(1.5)
	return l, nil
}

// drawPlots draws each plot into its canvas. plot lays out a centred
// y-axis label at the data value midway between the axis ends, which on a
// log axis sits near the top and shrinks the plot; so the label of a log
// y axis is swapped for a blank of the same height during layout and
// written afterwards, centred on the data area as plot would. It returns
// each plot's data area.
func drawPlots(plots [][]*plot.Plot, tiles draw.Tiles, area draw.Canvas) [][]draw.Canvas {
	held := map[*plot.Plot]string{}
	for _, row := range plots {
		for _, p := range row {
			if _, log := p.Y.Scale.(plot.LogScale); log && p.Y.Label.Text != "" {
				held[p], p.Y.Label.Text = p.Y.Label.Text, " "
			}
		}
	}
	cs := plot.Align(plots, tiles, area)
	data := make([][]draw.Canvas, len(plots))
	for i, row := range plots {
		for j, p := range row {
			p.Draw(cs[i][j])
			data[i] = append(data[i], p.DataCanvas(cs[i][j]))
			text, ok := held[p]
			if !ok {
				continue
			}
			sty := p.Y.Label.TextStyle
			sty.Rotation += math.Pi / 2
			x := cs[i][j].Min.X + sty.Height(text) - sty.FontExtents().Descent
			cs[i][j].FillText(sty, vg.Point{X: x, Y: data[i][j].Center().Y}, text)
			p.Y.Label.Text = text
		}
	}
	return data
}
