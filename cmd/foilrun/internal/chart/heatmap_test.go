package chart

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"strings"
	"testing"
)

// ringStroke is how the SVG writer spells the points' ring colour
// (lineColors[1], #d55e00) and width in a path's style.
const ringStroke = "stroke:#D55E00;stroke-width:1.3"

// svgElements decodes an SVG completely (it must be well-formed XML) and
// counts the path elements whose style holds want.
func svgElements(t *testing.T, data []byte, want string) (paths int, texts []string) {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(data))
	inText := false
	for {
		tok, err := d.Token()
		if err == io.EOF {
			return paths, texts
		}
		if err != nil {
			t.Fatalf("the SVG is not well-formed XML: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			inText = e.Name.Local == "text"
			for _, a := range e.Attr {
				if e.Name.Local == "path" && a.Name.Local == "style" && strings.Contains(a.Value, want) {
					paths++
				}
			}
		case xml.CharData:
			if inText {
				texts = append(texts, string(e))
			}
		case xml.EndElement:
			inText = false
		}
	}
}

func TestHeatMapPoints(t *testing.T) {
	base := HeatMap{Title: "points", XLabel: "T (C)", YLabel: "CH4 (sccm)", ZLabel: "coverage (%)",
		X: []float64{950, 1000, 1050}, Y: []float64{1, 2}, Z: [][]float64{{0, 50, 70}, {20, 60, 100}}}
	// The cells span 925–1075 on x and 0.5–2.5 on y (half a cell beyond
	// the centres, as edges() puts them).
	tests := []struct {
		name   string
		points []MapPoint
		rings  int    // rings drawn on the map, plus one in the legend
		legend string // legend entry
	}{
		{"none", nil, 0, ""},
		{"all inside", []MapPoint{{960, 1.2}, {1040, 2.4}, {925, 0.5}}, 3, "logged runs: 3"},
		{"some outside or NaN", []MapPoint{{960, 1.2}, {900, 1.2}, {1000, 2.6}, {math.NaN(), 1}}, 1, "logged runs: 1, 3 off map"},
		{"all outside", []MapPoint{{1100, 1}}, 0, "logged runs: 0, 1 off map"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := base
			m.Points = tc.points
			var out bytes.Buffer
			if err := WriteHeatMap(&out, "map.svg", m); err != nil {
				t.Fatal(err)
			}
			paths, texts := svgElements(t, out.Bytes(), ringStroke)
			want := tc.rings
			if len(tc.points) > 0 {
				want++ // the legend's ring
			}
			if paths != want {
				t.Errorf("got %d ring paths, want %d", paths, want)
			}
			if got := m.Covered(tc.points); got != tc.rings {
				t.Errorf("Covered: got %d, want the %d rings drawn", got, tc.rings)
			}
			all := strings.Join(texts, "|")
			if tc.legend != "" && !strings.Contains(all, tc.legend) {
				t.Errorf("got texts %q, want the legend entry %q", all, tc.legend)
			}
			if tc.legend == "" && strings.Contains(all, "logged runs") {
				t.Errorf("got a points legend entry without points: %q", all)
			}
		})
	}
}
