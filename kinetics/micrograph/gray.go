package micrograph

import (
	"image"
	"image/color"
	"runtime"
	"sync"
)

// plane is a gray image held as 16-bit levels, row-major, stride = w.
// 8-bit inputs are scaled by 257 so that 255 maps to 65535.
type plane struct {
	w, h int
	pix  []uint16
}

func (p *plane) row(y int) []uint16 { return p.pix[y*p.w : (y+1)*p.w] }

// numWorkers is how many bands parallel splits n rows into.
func numWorkers(n int) int { return max(1, min(runtime.GOMAXPROCS(0), n)) }

// bandOf is the i-th of workers contiguous bands of [0, n).
func bandOf(n, i, workers int) (lo, hi int) { return n * i / workers, n * (i + 1) / workers }

// parallel splits [0, n) into numWorkers(n) contiguous bands (bandOf) and
// runs fn on each band in its own goroutine.
func parallel(n int, fn func(lo, hi int)) {
	parallelBands(n, numWorkers(n), func(_, lo, hi int) { fn(lo, hi) })
}

// parallelBands splits [0, n) into max(1, min(workers, n)) bands and runs
// fn on each, with the band's index, in its own goroutine.
func parallelBands(n, workers int, fn func(i, lo, hi int)) {
	workers = max(1, min(workers, n))
	if workers == 1 {
		fn(0, 0, n)
		return
	}
	var wg sync.WaitGroup
	for i := range workers {
		lo, hi := bandOf(n, i, workers)
		wg.Go(func() { fn(i, lo, hi) })
	}
	wg.Wait()
}

// luma16 is the ITU-R BT.601 luma of 16-bit linear components, with the
// weights and rounding of the standard library's color.Gray16Model.
func luma16(r, g, b uint32) uint16 {
	return uint16((19595*r + 38470*g + 7471*b + 1<<15) >> 16)
}

// toPlane converts any image to 16-bit luma, divided by the illumination
// bg when bg is not nil (prepare without smoothing). Common decoder
// outputs take fast paths in convertRow; others go through
// color.Gray16Model.
func toPlane(img image.Image, bg *background) *plane {
	p, _ := pass(img, bg, 0, numWorkers(img.Bounds().Dy()), false)
	return p
}

func convertRow(img image.Image, x0, y int, dst []uint16) {
	switch m := img.(type) {
	case *lumaImage:
		copy(dst, m.rowFrom(x0, y))
	case *image.Gray:
		src := m.Pix[m.PixOffset(x0, y):]
		for i := range dst {
			dst[i] = uint16(src[i]) * 257
		}
	case *image.Gray16:
		src := m.Pix[m.PixOffset(x0, y):]
		for i := range dst {
			dst[i] = uint16(src[2*i])<<8 | uint16(src[2*i+1])
		}
	case *image.YCbCr:
		src := m.Y[m.YOffset(x0, y):]
		for i := range dst {
			dst[i] = uint16(src[i]) * 257
		}
	case *image.RGBA:
		src := m.Pix[m.PixOffset(x0, y):]
		for i := range dst {
			s := src[4*i : 4*i+3]
			dst[i] = luma16(uint32(s[0])*257, uint32(s[1])*257, uint32(s[2])*257)
		}
	case *image.NRGBA:
		src := m.Pix[m.PixOffset(x0, y):]
		for i := range dst {
			s := src[4*i : 4*i+3]
			dst[i] = luma16(uint32(s[0])*257, uint32(s[1])*257, uint32(s[2])*257)
		}
	default:
		for i := range dst {
			dst[i] = color.Gray16Model.Convert(img.At(x0+i, y)).(color.Gray16).Y
		}
	}
}
