package svgcanvas

import (
	"bytes"
	"image"
	"image/color"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// drawing is one sequence of canvas operations, drawn on both canvases.
type drawing func(c vg.Canvas)

func face(t *testing.T, size vg.Length) font.Face {
	t.Helper()
	return font.DefaultCache.Lookup(font.Font{Typeface: "Liberation", Variant: "Sans"}, size)
}

// TestSameBytesAsVgsvg draws the same operations on this canvas and on
// gonum/plot's own SVG canvas (the reference) and requires the documents
// to be equal byte for byte.
func TestSameBytesAsVgsvg(t *testing.T) {
	var rng *rand.Rand
	randomPath := func(n int) vg.Path {
		var p vg.Path
		p.Move(vg.Point{X: vg.Length(rng.Float64() * 700), Y: vg.Length(rng.Float64() * 400)})
		for range n {
			p.Line(vg.Point{X: vg.Length(rng.Float64()*700 - 1e-3), Y: vg.Length(rng.NormFloat64() * 1e3)})
		}
		return p
	}
	cases := []struct {
		name string
		draw drawing
	}{
		{"lines", func(c vg.Canvas) {
			c.SetColor(color.RGBA{R: 0x1D, G: 0x4E, B: 0x89, A: 0xFF})
			c.SetLineWidth(1.6)
			c.Stroke(randomPath(300))
			c.SetLineWidth(1)
			c.Stroke(randomPath(3))
			c.SetLineWidth(0) // not drawn
			c.Stroke(randomPath(3))
		}},
		{"dashes and translucent colours", func(c vg.Canvas) {
			c.SetLineWidth(1.1)
			c.SetLineDash([]vg.Length{6, 3}, 0)
			c.SetColor(color.NRGBA{R: 0xA8, G: 0x32, B: 0x3E, A: 0x80})
			c.Stroke(randomPath(10))
			c.SetLineDash([]vg.Length{2.5, 1.25, 0.3333333}, 1.5)
			c.SetColor(nil)
			c.Stroke(randomPath(4))
		}},
		{"fills", func(c vg.Canvas) {
			for _, clr := range []color.Color{nil, color.Black, color.White, color.NRGBA{R: 200, A: 40}, color.Transparent, color.Gray{Y: 0x80}} {
				c.SetColor(clr)
				var p vg.Path
				p.Move(vg.Point{X: 1, Y: 2})
				p.Line(vg.Point{X: 10, Y: 2})
				p.Line(vg.Point{X: 10, Y: 20.123456})
				p.Close()
				c.Fill(p)
			}
		}},
		{"arcs and curves", func(c vg.Canvas) {
			c.SetLineWidth(0.7)
			for _, a := range []float64{math.Pi / 3, -math.Pi / 2, 2 * math.Pi, -2 * math.Pi, 2.5 * math.Pi, 1.5 * math.Pi} {
				var p vg.Path
				p.Move(vg.Point{X: 50, Y: 50})
				p.Arc(vg.Point{X: 60, Y: 55}, 4.25, 0.3, a)
				p.QuadTo(vg.Point{X: 70, Y: 80}, vg.Point{X: 90, Y: 10})
				p.CubeTo(vg.Point{X: 1, Y: 2}, vg.Point{X: 3, Y: 4}, vg.Point{X: 5, Y: 6})
				p.Close()
				c.Stroke(p)
				c.Fill(p)
			}
		}},
		{"text and transforms", func(c vg.Canvas) {
			f := face(t, 11)
			c.FillString(f, vg.Point{X: 84.06, Y: 438.92}, "ideal")
			c.Push()
			c.Translate(vg.Point{X: 12.5, Y: -3.000001})
			c.Rotate(math.Pi / 2)
			c.SetColor(color.RGBA{R: 0x40, G: 0x40, B: 0x40, A: 0xFF})
			c.FillString(face(t, 9.5), vg.Point{X: 1, Y: 2}, `gain <dB> & "phase" 'x'`)
			c.Scale(2, 0.5)
			c.Stroke(randomPath(5))
			c.Pop()
			c.Push()
			c.Rotate(-0.1234)
			c.Push() // left open: WriteTo closes it
			c.Translate(vg.Point{X: 1e-7, Y: 123456789})
		}},
		{"image", func(c vg.Canvas) {
			img := image.NewRGBA(image.Rect(0, 0, 2, 2))
			img.Set(1, 1, color.White)
			c.DrawImage(vg.Rectangle{Min: vg.Point{X: 1, Y: 2}, Max: vg.Point{X: 3.5, Y: 7}}, img)
		}},
		{"a whole plot", func(c vg.Canvas) {
			p := plot.New()
			p.Title.Text = "step response"
			p.X.Label.Text = "time (ms)"
			p.Y.Label.Text = "output (V)"
			p.X.Scale = plot.LogScale{}
			p.X.Tick.Marker = plot.LogTicks{}
			pts := make(plotter.XYs, 200)
			for i := range pts {
				pts[i].X = math.Pow(10, float64(i)/50)
				pts[i].Y = math.Sin(float64(i) / 7)
			}
			l, err := plotter.NewLine(pts)
			require.NoError(t, err)
			s, err := plotter.NewScatter(pts[:20])
			require.NoError(t, err)
			p.Add(l, s, plotter.NewGrid())
			p.Legend.Add("curve", l)
			p.Draw(draw.New(c.(vg.CanvasSizer)))
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var want, got bytes.Buffer
			rng = rand.New(rand.NewPCG(1, 2))
			ref := vgsvg.New(720, 460)
			tc.draw(ref)
			_, err := ref.WriteTo(&want)
			require.NoError(t, err)

			rng = rand.New(rand.NewPCG(1, 2)) // the same random paths
			c := New(720, 460)
			tc.draw(c)
			_, err = c.WriteTo(&got)
			require.NoError(t, err)
			c.Release()
			require.Equal(t, want.String(), got.String())
		})
	}
}

// BenchmarkStroke compares stroking a 500-point path on this canvas and
// on vgsvg's.
func BenchmarkStroke(b *testing.B) {
	var p vg.Path
	p.Move(vg.Point{X: 1, Y: 1})
	for i := range 500 {
		p.Line(vg.Point{X: vg.Length(i) * 1.37, Y: vg.Length(math.Sin(float64(i)) * 200)})
	}
	b.Run("svgcanvas", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			c := New(720, 460)
			c.Stroke(p)
			_, _ = c.WriteTo(&bytes.Buffer{})
			c.Release()
		}
	})
	b.Run("vgsvg", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			c := vgsvg.New(720, 460)
			c.Stroke(p)
			_, _ = c.WriteTo(&bytes.Buffer{})
		}
	})
}

// TestStrokePolylineAsPath requires StrokePolyline to write what vgsvg
// writes for Stroke of the path through the same points.
func TestStrokePolylineAsPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, n := range []int{1, 2, 17, 600} {
		pts := make([]vg.Point, n)
		for i := range pts {
			pts[i] = vg.Point{X: vg.Length(rng.Float64() * 720), Y: vg.Length(rng.NormFloat64() * 300)}
		}
		var path vg.Path
		path.Move(pts[0])
		for _, pt := range pts[1:] {
			path.Line(pt)
		}
		var want, got bytes.Buffer
		ref := vgsvg.New(720, 460)
		ref.SetLineWidth(1.2)
		ref.SetLineDash([]vg.Length{5, 2.5}, 0)
		ref.Stroke(path)
		_, err := ref.WriteTo(&want)
		require.NoError(t, err)
		c := New(720, 460)
		c.SetLineWidth(1.2)
		c.SetLineDash([]vg.Length{5, 2.5}, 0)
		c.StrokePolyline(pts)
		_, err = c.WriteTo(&got)
		require.NoError(t, err)
		c.Release()
		require.Equal(t, want.String(), got.String(), "%d points", n)
	}
}

// TestNewOnWritesInPlace requires a canvas made on a buffer to leave what
// the buffer held and write the same document as New's after it.
func TestNewOnWritesInPlace(t *testing.T) {
	draw := func(c vg.Canvas) {
		c.SetLineWidth(2)
		var p vg.Path
		p.Move(vg.Point{X: 1, Y: 2})
		p.Line(vg.Point{X: 30.5, Y: 4.25})
		c.Stroke(p)
		c.Push()
		c.Translate(vg.Point{X: 3, Y: 4})
	}
	var want bytes.Buffer
	c := New(100, 50)
	draw(c)
	_, err := c.WriteTo(&want)
	require.NoError(t, err)
	c.Release()

	dst := bytes.NewBufferString("prefix\n")
	on := NewOn(dst, 100, 50)
	draw(on)
	n, err := on.WriteTo(dst)
	require.NoError(t, err)
	on.Release()
	require.Equal(t, "prefix\n"+want.String(), dst.String())
	require.Equal(t, int64(want.Len()), n)

	var other bytes.Buffer // written elsewhere: copied
	on2 := NewOn(bytes.NewBufferString("x"), 100, 50)
	draw(on2)
	_, err = on2.WriteTo(&other)
	require.NoError(t, err)
	require.Equal(t, want.String(), other.String())
}

// TestFillPolygonsAsPath requires FillPolygons to write what vgsvg writes
// for Fill of the path through the same rings, each closed.
func TestFillPolygonsAsPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for _, sizes := range [][]int{{1}, {3}, {4, 7}, {300, 2, 5}} {
		var rings [][]vg.Point
		var path vg.Path
		for _, n := range sizes {
			ring := make([]vg.Point, n)
			for i := range ring {
				ring[i] = vg.Point{X: vg.Length(rng.Float64() * 720), Y: vg.Length(rng.Float64() * 460)}
			}
			rings = append(rings, ring)
			path.Move(ring[0])
			for _, pt := range ring[1:] {
				path.Line(pt)
			}
			path.Close()
		}
		clr := color.NRGBA{R: 0xd9, G: 0x6c, B: 0x06, A: 0x30}
		var want, got bytes.Buffer
		ref := vgsvg.New(720, 460)
		ref.SetColor(clr)
		ref.Fill(path)
		_, err := ref.WriteTo(&want)
		require.NoError(t, err)
		c := New(720, 460)
		c.SetColor(clr)
		c.FillPolygons(rings)
		_, err = c.WriteTo(&got)
		require.NoError(t, err)
		c.Release()
		require.Equal(t, want.String(), got.String(), "rings %v", sizes)
	}
}
