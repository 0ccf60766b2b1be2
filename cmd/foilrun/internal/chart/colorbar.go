package chart

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// sampled is a palette of colours sampled from a colour map.
type sampled []color.Color

// Colors returns the palette's colours, lowest value first.
func (p sampled) Colors() []color.Color { return p }

// samplePalette returns n colours of cm at evenly spaced values from its
// Min to its Max, each from cm.At. (gonum's palette of a reversed
// luminance map leaves a nil colour in the middle, which the heat map
// drew as a white cell; At gives every value its colour.)
func samplePalette(cm palette.ColorMap, n int) (palette.Palette, error) {
	lo, hi := cm.Min(), cm.Max()
	out := make(sampled, n)
	for i := range out {
		v := lo + (hi-lo)*float64(i)/float64(n-1)
		c, err := cm.At(min(max(v, lo), hi))
		if err != nil {
			return nil, fmt.Errorf("colour scale at %g: %w", v, err)
		}
		out[i] = c
	}
	return out, nil
}

// colourBar draws a palette as a vertical bar of stacked filled
// rectangles from lo to hi on the y axis and 0 to 1 on the x axis. Vector
// shapes keep the bar's width in an SVG, where gonum's ColorBar, an image
// one pixel wide, shrinks to a line in a browser that keeps the image's
// aspect ratio.
type colourBar struct {
	colors []color.Color
	lo, hi float64
}

// Plot draws the bar on the plot's data area.
func (b colourBar) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := float64(len(b.colors))
	for i, col := range b.colors {
		y0 := trY(b.lo + (b.hi-b.lo)*float64(i)/n)
		// Each band but the last reaches up into the next, which covers
		// it: no anti-aliased seams between the bands.
		y1 := trY(b.lo + (b.hi-b.lo)*math.Min(float64(i+2), n)/n)
		var path vg.Path
		path.Move(vg.Point{X: trX(0), Y: y0})
		path.Line(vg.Point{X: trX(1), Y: y0})
		path.Line(vg.Point{X: trX(1), Y: y1})
		path.Line(vg.Point{X: trX(0), Y: y1})
		path.Close()
		c.SetColor(col)
		c.Fill(path)
	}
}

// DataRange is the bar's extent: 0 to 1 across, lo to hi along.
func (b colourBar) DataRange() (xmin, xmax, ymin, ymax float64) { return 0, 1, b.lo, b.hi }
