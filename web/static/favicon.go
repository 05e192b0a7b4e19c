package static

import (
	"bytes"
	"encoding/binary"
	"image"
	"image/color"
	"image/png"
	"math"
	"sync"
)

// FaviconSizePx is the width and height of the icon.
const FaviconSizePx = 32

// FaviconPNG returns the workbench's icon as a PNG of FaviconSizePx
// square: a lowpass magnitude curve, flat and then falling, in white on a
// dark blue rounded square. It is drawn once, on first use; the caller
// must not modify the slice.
func FaviconPNG() []byte { return favicon().png }

// FaviconICO returns the icon as an ICO file holding the PNG (the ICO
// format allows a PNG image in place of a bitmap), as served at
// /favicon.ico. The caller must not modify the slice.
func FaviconICO() []byte { return favicon().ico }

var favicon = sync.OnceValue(func() struct{ png, ico []byte } {
	const n = FaviconSizePx
	img := image.NewNRGBA(image.Rect(0, 0, n, n))
	bg := color.NRGBA{0x1d, 0x4e, 0x89, 0xff}
	fg := color.NRGBA{0xff, 0xff, 0xff, 0xff}
	const radius = 6.0
	for y := range n {
		for x := range n {
			// Rounded corners: outside the corner circles stays clear.
			cx := math.Max(radius, math.Min(float64(n)-radius, float64(x)+0.5))
			cy := math.Max(radius, math.Min(float64(n)-radius, float64(y)+0.5))
			if math.Hypot(float64(x)+0.5-cx, float64(y)+0.5-cy) <= radius {
				img.SetNRGBA(x, y, bg)
			}
		}
	}
	// |H| of a fourth-order Butterworth lowpass on a log frequency axis,
	// in dB from 0 down to −48, drawn 2.5 px thick.
	level := func(x float64) float64 {
		f := math.Pow(10, (x-14)/7) // the corner at x = 14
		db := -10 * math.Log10(1+math.Pow(f, 8))
		return 9 + math.Min(48, -db)*16/48 // y: 9 (0 dB) to 25 (−48 dB)
	}
	for y := range n {
		for x := range n {
			if x < 4 || x > n-5 {
				continue
			}
			// Distance to the curve, sampled finely around x.
			d := math.Inf(1)
			for s := -3.0; s <= 3; s += 0.1 {
				px := float64(x) + 0.5 + s
				d = math.Min(d, math.Hypot(s, float64(y)+0.5-level(px)))
			}
			if d <= 1.25 {
				img.SetNRGBA(x, y, fg)
			}
		}
	}
	var p bytes.Buffer
	if err := png.Encode(&p, img); err != nil {
		panic("static: " + err.Error()) // unreachable: an in-memory image
	}
	// ICONDIR (reserved, type 1 = icon, one image) and one ICONDIRENTRY
	// (width, height, colours, reserved, planes, bits per pixel, size,
	// offset), little-endian, then the PNG.
	var ico bytes.Buffer
	for _, v := range []any{uint16(0), uint16(1), uint16(1),
		uint8(n), uint8(n), uint8(0), uint8(0), uint16(1), uint16(32), uint32(p.Len()), uint32(6 + 16)} {
		_ = binary.Write(&ico, binary.LittleEndian, v)
	}
	ico.Write(p.Bytes())
	return struct{ png, ico []byte }{p.Bytes(), ico.Bytes()}
})
