package micrograph_test

import (
	"fmt"
	"image"

	"github.com/foilrun/foilrun/kinetics/micrograph"
)

// Two dark 20×20 domains on a bright 80×60 field, one of them cut by the
// right border: 800 of 4800 pixels are covered. Smoothing and flattening
// are off so the numbers can be checked by hand: the interior domain has
// d = 2·√(400 µm²/π) = 22.57 µm, and the field of 4.8e-3 mm² holds one
// counted domain (the one on the right border is not counted).
func ExampleAnalyze() {
	img := image.NewGray(image.Rect(0, 0, 80, 60))
	for i := range img.Pix {
		img.Pix[i] = 200
	}
	for y := 20; y < 40; y++ {
		for x := 10; x < 30; x++ {
			img.Pix[y*80+x] = 60
		}
		for x := 60; x < 80; x++ {
			img.Pix[y*80+x] = 60
		}
	}
	res, err := micrograph.Analyze(img, micrograph.Settings{
		PixelSize: 1e-6, Polarity: micrograph.DomainsDarker, SmoothRadius: -1, BackgroundDegree: -1})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("coverage %.4f, %d interior + %d at the edge, counted %d\n", res.Coverage, res.Interior, res.Edge, res.Counted)
	fmt.Printf("density %.0f /mm², median diameter %.2f µm\n", res.DensityPerMM2(), res.Sizes.Median*1e6)
	// Output:
	// coverage 0.1667, 1 interior + 1 at the edge, counted 1
	// density 208 /mm², median diameter 22.57 µm
}
