package plotting

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestClipperAsGonum compares clipper.clip with gonum/plot's
// draw.Canvas.ClipLinesXY (the reference) on random polylines that wander
// in and out of the rectangle, touch its edges and stay inside.
func TestClipperAsGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	dc := draw.Canvas{Rectangle: vg.Rectangle{Min: vg.Point{X: 40, Y: 30}, Max: vg.Point{X: 700, Y: 440}}}
	var c clipper
	for trial := range 3000 {
		n := 1 + rng.IntN(300)
		pts := make([]vg.Point, n)
		for i := range pts {
			switch rng.IntN(6) {
			case 0: // on an edge
				pts[i] = vg.Point{X: dc.Min.X, Y: vg.Length(rng.Float64() * 500)}
			case 1:
				pts[i] = vg.Point{X: vg.Length(rng.Float64() * 800), Y: dc.Max.Y}
			default:
				spread := []float64{1, 1.2, 3}[trial%3]
				pts[i] = vg.Point{X: vg.Length(rng.Float64() * 740 * spread), Y: vg.Length(rng.Float64() * 470 * spread)}
			}
		}
		want := dc.ClipLinesXY(pts)
		got := c.clip(dc, pts)
		require.Equal(t, len(want), len(got), "trial %d", trial)
		for i := range want {
			require.Equal(t, want[i], got[i], "trial %d line %d", trial, i)
		}
	}
}
