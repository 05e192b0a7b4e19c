package static_test

import (
	"bytes"
	"encoding/binary"
	"image/png"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/web/static"
)

// TestFavicon reads the icon back as the ICO format lays it out
// (ICONDIR, one ICONDIRENTRY, the image; Microsoft's "Icons" article in
// the Win32 documentation, typed from memory) and decodes its PNG with
// the standard library.
func TestFavicon(t *testing.T) {
	t.Parallel()
	ico := static.FaviconICO()
	require.GreaterOrEqual(t, len(ico), 22)
	le := binary.LittleEndian
	require.Equal(t, uint16(0), le.Uint16(ico[0:]), "reserved")
	require.Equal(t, uint16(1), le.Uint16(ico[2:]), "type: icon")
	require.Equal(t, uint16(1), le.Uint16(ico[4:]), "one image")
	require.Equal(t, byte(static.FaviconSizePx), ico[6], "width")
	require.Equal(t, byte(static.FaviconSizePx), ico[7], "height")
	size, offset := le.Uint32(ico[14:]), le.Uint32(ico[18:])
	require.Equal(t, uint32(22), offset)
	require.Equal(t, len(ico), int(offset+size))
	img, err := png.Decode(bytes.NewReader(ico[offset:]))
	require.NoError(t, err)
	require.Equal(t, static.FaviconSizePx, img.Bounds().Dx())
	require.Equal(t, static.FaviconSizePx, img.Bounds().Dy())
	require.Equal(t, static.FaviconPNG(), ico[offset:])
	// Drawn: the corners clear, the middle coloured, and some white.
	_, _, _, a := img.At(0, 0).RGBA()
	require.Zero(t, a, "a rounded corner")
	white := 0
	for y := range static.FaviconSizePx {
		for x := range static.FaviconSizePx {
			if r, g, b, _ := img.At(x, y).RGBA(); r == 0xffff && g == 0xffff && b == 0xffff {
				white++
			}
		}
	}
	require.Greater(t, white, 30, "the curve is drawn")
}
