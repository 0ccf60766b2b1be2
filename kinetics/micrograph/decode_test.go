package micrograph

import (
	"bytes"
	"encoding/binary"
	"errors"
	"hash/crc32"
	"image"
	"image/png"
	"math"
	"strings"
	"testing"
)

// pngHeader builds a PNG signature and IHDR chunk for a w×h 8-bit gray
// image with no pixel data (PNG specification, ISO/IEC 15948, sections
// 5.2 and 11.2.2; the CRC is CRC-32 over the chunk type and data).
func pngHeader(w, h uint32) []byte {
	var b bytes.Buffer
	b.WriteString("\x89PNG\r\n\x1a\n")
	data := make([]byte, 13)
	binary.BigEndian.PutUint32(data[0:], w)
	binary.BigEndian.PutUint32(data[4:], h)
	data[8] = 8 // bit depth
	data[9] = 0 // colour type gray
	chunk := append([]byte("IHDR"), data...)
	binary.Write(&b, binary.BigEndian, uint32(len(data)))
	b.Write(chunk)
	binary.Write(&b, binary.BigEndian, crc32.ChecksumIEEE(chunk))
	return b.Bytes()
}

func encodePNG(t testing.TB, img image.Image) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func TestDecodeRefusesGigapixelHeader(t *testing.T) {
	t.Parallel()
	data := pngHeader(40000, 25000) // 1e9 pixels, a 58-byte file
	_, _, err := Decode(bytes.NewReader(data), Limits{})
	var tl *TooLargeError
	if !errors.As(err, &tl) || !errors.Is(err, ErrTooLarge) {
		t.Fatalf("got %v, want a *TooLargeError", err)
	}
	if tl.Width != 40000 || tl.Height != 25000 || tl.MaxPixels != DefaultMaxPixels {
		t.Errorf("got %d×%d limit %d, want 40000×25000 limit %d", tl.Width, tl.Height, tl.MaxPixels, DefaultMaxPixels)
	}
	if !strings.Contains(err.Error(), "40000×25000") {
		t.Errorf("message %q does not quote the size", err)
	}
	// A configurable limit: 100×100 passes the header check at 10 000 pixels
	// and then fails on the missing pixel data; at 9 999 it is refused.
	if _, _, err := Decode(bytes.NewReader(pngHeader(100, 100)), Limits{MaxPixels: 9999}); !errors.Is(err, ErrTooLarge) {
		t.Errorf("limit 9999: got %v, want ErrTooLarge", err)
	}
	if _, _, err := Decode(bytes.NewReader(pngHeader(100, 100)), Limits{MaxPixels: 10000}); !errors.Is(err, ErrUnreadable) {
		t.Errorf("limit 10000: got %v, want ErrUnreadable (no pixel data)", err)
	}
}

func TestDecodeByteLimit(t *testing.T) {
	t.Parallel()
	s, _ := baseSynth(0.75, 3)
	img, _ := s.gray8()
	data := encodePNG(t, img)
	_, _, err := Decode(bytes.NewReader(data), Limits{MaxBytes: int64(len(data) - 1)})
	var tl *TooLargeError
	if !errors.As(err, &tl) || !tl.Bytes {
		t.Fatalf("got %v, want a byte-limit *TooLargeError", err)
	}
	if _, _, err := Decode(bytes.NewReader(data), Limits{MaxBytes: int64(len(data))}); err != nil {
		t.Fatalf("exact byte limit: %v", err)
	}
}

func TestBadInput(t *testing.T) {
	t.Parallel()
	s, _ := baseSynth(0.75, 5)
	good, _ := s.gray8()
	full := encodePNG(t, good)
	one := image.NewGray(image.Rect(0, 0, 1, 1))
	black := image.NewGray(image.Rect(0, 0, 64, 64))
	cases := []struct {
		name  string
		data  []byte      // decoded first when not nil
		img   image.Image // else analysed directly
		pixel float64
		want  error
		text  string // part of the message
	}{
		{"truncated png", full[:len(full)/2], nil, testPixel, ErrUnreadable, "decode png image"},
		{"png signature only", full[:8], nil, testPixel, ErrUnreadable, "decode image header"},
		{"not an image", []byte("time,temperature\n0,25\n"), nil, testPixel, ErrUnreadable, "unknown format"},
		{"empty file", []byte{}, nil, testPixel, ErrUnreadable, "decode image header"},
		{"zero pixel size", nil, good, 0, ErrSettings, "pixel size 0 m"},
		{"negative pixel size", nil, good, -0.25e-6, ErrSettings, "pixel size -2.5e-07 m"},
		{"NaN pixel size", nil, good, math.NaN(), ErrSettings, "pixel size NaN"},
		{"infinite pixel size", nil, good, math.Inf(1), ErrSettings, "pixel size +Inf"},
		{"1x1 image", encodePNG(t, one), nil, testPixel, ErrTooSmall, "1×1 pixels"},
		{"all black", encodePNG(t, black), nil, testPixel, ErrUniform, "every pixel is gray 0 of 255"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			img := c.img
			var err error
			if c.data != nil {
				img, _, err = Decode(bytes.NewReader(c.data), Limits{})
			}
			if err == nil {
				_, err = Analyze(img, Settings{PixelSize: c.pixel})
			}
			if !errors.Is(err, c.want) {
				t.Fatalf("got %v, want %v", err, c.want)
			}
			if !strings.Contains(err.Error(), c.text) {
				t.Errorf("message %q does not contain %q", err, c.text)
			}
		})
	}
}

func TestBadSettings(t *testing.T) {
	t.Parallel()
	s, _ := baseSynth(0.75, 5)
	img, _ := s.gray8()
	neg := -1.0
	cases := []struct {
		name string
		s    Settings
		text string
	}{
		{"polarity", Settings{Polarity: 7}, "polarity 7"},
		{"degree", Settings{BackgroundDegree: 9}, "background degree 9"},
		{"smoothing", Settings{SmoothRadius: 20}, "smoothing radius 20"},
		{"min area", Settings{MinAreaPixels: -3}, "minimum area -3"},
		{"valley", Settings{MaxValleyRatio: 1.5}, "valley ratio 1.5"},
		{"bare gray", Settings{BareGray: &neg}, "bare gray level -1"},
		{"bare region outside", Settings{BareRegion: image.Rect(1000, 1000, 1100, 1100)}, "outside the image"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			c.s.PixelSize = testPixel
			_, err := Analyze(img, c.s)
			if !errors.Is(err, ErrSettings) || !strings.Contains(err.Error(), c.text) {
				t.Fatalf("got %v, want ErrSettings containing %q", err, c.text)
			}
		})
	}
}

func TestParsePolarity(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		in   string
		want Polarity
	}{{"auto", PolarityAuto}, {"Darker", DomainsDarker}, {" brighter ", DomainsBrighter}, {"bright", DomainsBrighter}} {
		got, err := ParsePolarity(c.in)
		if err != nil || got != c.want {
			t.Errorf("ParsePolarity(%q): got %v, %v want %v", c.in, got, err, c.want)
		}
		if back, _ := ParsePolarity(got.String()); back != got {
			t.Errorf("round trip %v: got %v", got, back)
		}
	}
	if _, err := ParsePolarity("sideways"); !errors.Is(err, ErrSettings) {
		t.Errorf("sideways: got %v, want ErrSettings", err)
	}
}
