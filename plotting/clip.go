package plotting

import (
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// clipSlop is gonum/plot's tolerance for a point on a clipping edge.
const clipSlop = 3e-8

// clipper clips polylines to a rectangle exactly as gonum/plot's
// draw.Canvas.ClipLinesXY does (the same four passes, the same
// intersection arithmetic, the same tolerance), in memory it keeps for
// the next line: ClipLinesXY allocates each pass's lines anew, which was
// a fifth of the allocation of a result page.
type clipper struct {
	buf   [2][]vg.Point
	spans [2][][2]int
	lines [2][][]vg.Point
}

// clip returns the parts of pts inside dc's rectangle, in c's memory
// (valid until the next call).
func (c *clipper) clip(dc draw.Canvas, pts []vg.Point) [][]vg.Point {
	passes := [4]struct {
		edge     int // 0 left of, 1 right of, 2 above, 3 below the clip point
		at, norm vg.Point
	}{
		{0, vg.Point{X: dc.Max.X, Y: dc.Min.Y}, vg.Point{X: -1, Y: 0}},
		{1, vg.Point{X: dc.Min.X, Y: dc.Min.Y}, vg.Point{X: 1, Y: 0}},
		{2, vg.Point{X: dc.Min.X, Y: dc.Min.Y}, vg.Point{X: 0, Y: -1}},
		{3, vg.Point{X: dc.Min.X, Y: dc.Max.Y}, vg.Point{X: 0, Y: 1}},
	}
	src := [][]vg.Point{pts}
	for k, p := range passes {
		d := k % 2
		c.buf[d], c.spans[d] = c.buf[d][:0], c.spans[d][:0]
		for _, line := range src {
			c.clipLine(d, p.edge, p.at, p.norm, line)
		}
		c.lines[d] = c.lines[d][:0]
		for _, s := range c.spans[d] {
			c.lines[d] = append(c.lines[d], c.buf[d][s[0]:s[1]:s[1]])
		}
		src = c.lines[d]
	}
	return src
}

// clipLine is gonum/plot's clipLine, its lines appended to buffer d.
func (c *clipper) clipLine(d, edge int, at, norm vg.Point, pts []vg.Point) {
	in := func(p vg.Point) bool {
		switch edge {
		case 0:
			return p.X <= at.X+clipSlop
		case 1:
			return p.X >= at.X-clipSlop
		case 2:
			return p.Y >= at.Y-clipSlop
		default:
			return p.Y <= at.Y+clipSlop
		}
	}
	isect := func(p0, p1 vg.Point) vg.Point {
		t := p0.Sub(at).Dot(norm) / p0.Sub(p1).Dot(norm)
		return p1.Sub(p0).Scale(t).Add(p0)
	}
	start := len(c.buf[d])
	for i := 1; i < len(pts); i++ {
		cur, next := pts[i-1], pts[i]
		curIn, nextIn := in(cur), in(next)
		switch {
		case curIn && nextIn:
			c.buf[d] = append(c.buf[d], cur)
		case curIn && !nextIn:
			c.buf[d] = append(c.buf[d], cur, isect(cur, next))
			c.spans[d] = append(c.spans[d], [2]int{start, len(c.buf[d])})
			start = len(c.buf[d])
		case !curIn && !nextIn:
		default:
			c.buf[d] = append(c.buf[d], isect(cur, next))
		}
		if nextIn && i == len(pts)-1 {
			c.buf[d] = append(c.buf[d], next)
		}
	}
	if len(c.buf[d])-start > 1 {
		c.spans[d] = append(c.spans[d], [2]int{start, len(c.buf[d])})
	} else {
		c.buf[d] = c.buf[d][:start]
	}
}
