package plotting

import (
	"bytes"
	"errors"
	"image/color"
	"io"
	"math"
	"slices"
	"strings"
	"sync"
	"weak"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/plotting/internal/svgcanvas"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// Default and limiting sizes of the plots, in points (1/72 inch). The
// SVG's viewBox has one unit per point, so these are also its user units.
const (
	// DefaultWidthPt is the width of every plot.
	DefaultWidthPt = 720
	// DefaultBodeHeightPt is the height of [Bode], both panels.
	DefaultBodeHeightPt = 460
	// DefaultHeightPt is the height of [GroupDelay], [Step] without its
	// settling panel, [Noise] and [Passband].
	DefaultHeightPt = 300
	// MinSizePt and MaxSizePt bound a width or height given in [Options].
	MinSizePt = 100
	MaxSizePt = 4000
)

// Text sizes, in points (the SVG's user units): a page that shows a plot
// w CSS px wide draws its text at size × w / [DefaultWidthPt] px.
const (
	// TickFontPt is the size of tick labels and legend names, the
	// smallest text of every plot.
	TickFontPt = 11
	// LabelFontPt is the size of the axis labels.
	LabelFontPt = 12
)

// PageFigureWidthPx is the width, in CSS px, at which the result page
// shows a plot in a 1440 px window: the page's content column, about
// 1100 px. At that width the smallest text of a plot at its default size
// is TickFontPt × 1100 / 720 ≈ 16.8 px.
const PageFigureWidthPx = 1100

// MinTextPx is the smallest height, in CSS px, of any text of a plot as
// the page shows it (the workbench's readability rule).
const MinTextPx = 11

// MinFigureWidthPx is the narrowest a page may show a plot at its default
// size with every text at least MinTextPx high:
// DefaultWidthPt × MinTextPx / TickFontPt = 720 px. A page that shows plots
// narrower than that (a phone) should let them keep this width and scroll,
// or show them enlarged on request.
const MinFigureWidthPx = DefaultWidthPt * MinTextPx / TickFontPt

// Options sets the size of a plot.
type Options struct {
	// WidthPt and HeightPt are the size of the SVG in points. 0, or any
	// value that is not finite and positive, selects the default for the
	// plot; other values are clamped to [MinSizePt, MaxSizePt].
	WidthPt, HeightPt float64
}

// ErrNilDesign is returned for a nil design.
var ErrNilDesign = errors.New("plotting: nil design")

func (o Options) size(defW, defH float64) (vg.Length, vg.Length) {
	pick := func(v, def float64) vg.Length {
		if !(v > 0) || math.IsInf(v, 1) {
			return vg.Points(def)
		}
		return vg.Points(min(max(v, MinSizePt), MaxSizePt))
	}
	return pick(o.WidthPt, defW), pick(o.HeightPt, defH)
}

// Bode writes the magnitude (top) and phase (bottom) responses of d as one
// SVG, the two panels aligned on a shared logarithmic frequency axis. The
// magnitude panel shades the regions the mask forbids (see the package
// documentation). It returns [ErrNilDesign] for a nil d and otherwise only
// the error of writing to w: missing or non-finite data are left out.
func Bode(w io.Writer, d *synth.Design, opt Options) error {
	if d == nil {
		return ErrNilDesign
	}
	return drawBode(w, d, designSweep(d), opt)
}

// GroupDelay writes the group delay of d in seconds (SI-prefixed) against
// frequency as SVG. Errors as for [Bode].
func GroupDelay(w io.Writer, d *synth.Design, opt Options) error {
	if d == nil {
		return ErrNilDesign
	}
	return drawGroupDelay(w, designSweep(d), opt)
}

// Step writes the unit-step response of d against time (SI-prefixed) as
// SVG, with a dashed line at the final value H(0) of the ideal filter.
// Errors as for [Bode].
func Step(w io.Writer, d *synth.Design, opt Options) error {
	if d == nil {
		return ErrNilDesign
	}
	return drawStep(w, stepData.get(d, func(d *synth.Design) *stepSeries { return newStepSeries(d, asBuilt(d)) }), opt)
}

// InlineSVG returns b without its XML prolog — the <?xml ...?>
// declaration, comments and white space before the <svg element — so that
// it can be placed inside an HTML page. The result shares b's memory. b is
// returned unchanged if it does not start with a prolog followed by <svg.
func InlineSVG(b []byte) []byte {
	rest := b
	for {
		rest = bytes.TrimLeft(rest, " \t\r\n")
		switch {
		case bytes.HasPrefix(rest, []byte("<svg")):
			return rest
		case bytes.HasPrefix(rest, []byte("<?")):
			end := bytes.Index(rest, []byte("?>"))
			if end < 0 {
				return b
			}
			rest = rest[end+2:]
		case bytes.HasPrefix(rest, []byte("<!--")):
			end := bytes.Index(rest, []byte("-->"))
			if end < 0 {
				return b
			}
			rest = rest[end+3:]
		default:
			return b
		}
	}
}

// asBuilt returns the design's chain as rational stages, or nil when the
// design has no circuit or the chain cannot be analysed. The stages of the
// last few designs are remembered (see builtMemo): a result page draws
// three plots of one design, and the nodal analysis behind them was a
// tenth of the time to draw them.
func asBuilt(d *synth.Design) circuit.Cascade {
	return builtStages.get(d, computeAsBuilt).tfs
}

// builtLoad returns the inter-stage loading of the design's chain (see
// circuit.Loading), empty when it has none or no circuit, remembered with
// asBuilt's stages.
func builtLoad(d *synth.Design) circuit.Loading {
	return builtStages.get(d, computeAsBuilt).load
}

// builtChain is what asBuilt and builtLoad remember of a design.
type builtChain struct {
	tfs  circuit.Cascade
	load circuit.Loading
}

// builtStages remembers asBuilt's and builtLoad's answers.
var builtStages = &designMemo[builtChain]{}

// memoEntries bounds the designs a designMemo remembers.
const memoEntries = 16

// designMemo remembers a value computed from each of the last memoEntries
// designs it was asked about, by weak pointer: it never keeps a design
// alive, and a synth.Design is not changed after synthesis, so the value
// of a pointer stays right while it lives. Callers share the values and
// must not change them. It is safe for concurrent use.
type designMemo[V any] struct {
	mu     sync.Mutex
	keys   []weak.Pointer[synth.Design] // oldest first
	values map[weak.Pointer[synth.Design]]V
}

// get returns the value of d, computing it when d is not remembered.
func (m *designMemo[V]) get(d *synth.Design, compute func(*synth.Design) V) V {
	k := weak.Make(d)
	m.mu.Lock()
	v, ok := m.values[k]
	m.mu.Unlock()
	if ok {
		return v
	}
	v = compute(d)
	m.mu.Lock()
	defer m.mu.Unlock()
	if _, ok := m.values[k]; ok {
		return v
	}
	if m.values == nil {
		m.values = map[weak.Pointer[synth.Design]]V{}
	}
	if len(m.keys) >= memoEntries {
		delete(m.values, m.keys[0])
		m.keys = append(m.keys[:0], m.keys[1:]...)
	}
	m.keys = append(m.keys, k)
	m.values[k] = v
	return v
}

// computeAsBuilt is asBuilt and builtLoad without the memo.
func computeAsBuilt(d *synth.Design) builtChain {
	ch, err := d.Chain()
	if err != nil {
		return builtChain{}
	}
	tfs, err := ch.TransferFunctions()
	if err != nil {
		return builtChain{}
	}
	load, err := ch.Loading()
	if err != nil {
		return builtChain{tfs: tfs}
	}
	return builtChain{tfs: tfs, load: load}
}

// usable returns tfs, or nil if a stage has a coefficient that is not
// finite, a scale that is not finite and positive, or no denominator: such
// a chain has no as-built curves.
func usable(tfs circuit.Cascade) circuit.Cascade {
	for _, r := range tfs {
		if !(r.ScaleRadPerSec > 0) || math.IsInf(r.ScaleRadPerSec, 1) || degree(r.Den) < 0 {
			return nil
		}
		for _, c := range [][]float64{r.Num, r.Den} {
			for _, v := range c {
				if !finite(v) {
					return nil
				}
			}
		}
	}
	return tfs
}

// The look of the plots.
var (
	sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

	idealStyle = draw.LineStyle{Color: color.NRGBA{R: 0x1d, G: 0x4e, B: 0x89, A: 0xff}, Width: vg.Points(1.6)}
	builtStyle = draw.LineStyle{
		Color:  color.NRGBA{R: 0xd9, G: 0x6c, B: 0x06, A: 0xff},
		Width:  vg.Points(1.2),
		Dashes: []vg.Length{vg.Points(5), vg.Points(2.5)},
	}
	maskFill   = color.NRGBA{R: 0xa8, G: 0x32, B: 0x3e, A: 0x30}
	maskEdge   = draw.LineStyle{Color: color.NRGBA{R: 0xa8, G: 0x32, B: 0x3e, A: 0xc0}, Width: vg.Points(0.8)}
	guideStyle = draw.LineStyle{
		Color:  color.NRGBA{R: 0x6b, G: 0x6b, B: 0x6b, A: 0xff},
		Width:  vg.Points(0.7),
		Dashes: []vg.Length{vg.Points(2), vg.Points(2)},
	}
	gridMajor  = draw.LineStyle{Color: color.NRGBA{R: 0xd0, G: 0xd4, B: 0xda, A: 0xff}, Width: vg.Points(0.5)}
	gridMinor  = draw.LineStyle{Color: color.NRGBA{R: 0xec, G: 0xee, B: 0xf1, A: 0xff}, Width: vg.Points(0.4)}
	frameStyle = draw.LineStyle{Color: color.NRGBA{R: 0x40, G: 0x40, B: 0x40, A: 0xff}, Width: vg.Points(0.6)}
)

// Legend names.
const (
	idealName = "ideal"
	builtName = "as built"
)

// newPlot returns a plot in the package's style: sans-serif text, no
// padding between the data and the frame, short ticks.
func newPlot() *plot.Plot {
	p := plot.New()
	p.BackgroundColor = nil // render fills the whole canvas
	p.TextHandler = textMeasure
	for _, sty := range []*text.Style{
		&p.Title.TextStyle, &p.X.Label.TextStyle, &p.Y.Label.TextStyle,
		&p.X.Tick.Label, &p.Y.Tick.Label,
	} {
		sty.Handler = textMeasure
	}
	p.X.Label.TextStyle.Font = font.From(sans, LabelFontPt)
	p.Y.Label.TextStyle.Font = font.From(sans, LabelFontPt)
	p.X.Tick.Label.Font = font.From(sans, TickFontPt)
	p.Y.Tick.Label.Font = font.From(sans, TickFontPt)
	p.X.Padding, p.Y.Padding = 0, 0
	p.X.Width, p.Y.Width = 0, 0 // the frame plotter draws the border
	p.X.Tick.Length, p.Y.Tick.Length = vg.Points(4), vg.Points(4)
	p.X.Tick.Width, p.Y.Tick.Width = vg.Points(0.6), vg.Points(0.6)
	p.X.Label.Padding, p.Y.Label.Padding = vg.Points(3), vg.Points(3)
	return p
}

// textMeasure is the text handler of every plot: gonum/plot's own, with
// the sizes of the texts remembered, since laying out a plot measures each
// tick label several times and each measurement allocates (font.Face.Width
// takes a new sfnt.Buffer): about a third of the memory a page's plots
// took. The sizes depend only on the text and the font.
var textMeasure = &measuringHandler{Plain: plot.DefaultTextHandler.(text.Plain)}

// maxMeasured bounds the texts measuringHandler remembers; texts beyond
// it are measured every time.
const maxMeasured = 4096

// measuringHandler is a text.Plain that remembers the boxes of the texts
// it has measured, up to maxMeasured of them. It is safe for concurrent
// use.
type measuringHandler struct {
	text.Plain
	mu    sync.RWMutex
	boxes map[measureKey][3]vg.Length
}

type measureKey struct {
	txt string
	fnt font.Font
}

// Box implements text.Handler.
func (h *measuringHandler) Box(txt string, fnt font.Font) (width, height, depth vg.Length) {
	k := measureKey{txt, fnt}
	h.mu.RLock()
	b, ok := h.boxes[k]
	h.mu.RUnlock()
	if ok {
		return b[0], b[1], b[2]
	}
	width, height, depth = h.Plain.Box(txt, fnt)
	h.mu.Lock()
	if h.boxes == nil {
		h.boxes = map[measureKey][3]vg.Length{}
	}
	if len(h.boxes) < maxMeasured {
		h.boxes[k] = [3]vg.Length{width, height, depth}
	}
	h.mu.Unlock()
	return width, height, depth
}

// Draw implements text.Handler: text.Plain's Draw, step for step, with
// each line's width from Box (remembered) rather than measured again.
func (h *measuringHandler) Draw(c vg.Canvas, txt string, sty text.Style, pt vg.Point) {
	txt = strings.TrimRight(txt, "\n")
	if len(txt) == 0 {
		return
	}
	fnt := h.Fonts.Lookup(sty.Font, sty.Font.Size)
	c.SetColor(sty.Color)
	if sty.Rotation != 0 {
		c.Push()
		c.Rotate(sty.Rotation)
	}
	sin64, cos64 := math.Sincos(sty.Rotation)
	cos := vg.Length(cos64)
	sin := vg.Length(sin64)
	pt.X, pt.Y = pt.Y*sin+pt.X*cos, pt.Y*cos-pt.X*sin
	lines := h.Lines(txt)
	ht := sty.Height(txt)
	pt.Y += ht*vg.Length(sty.YAlign) - fnt.Extents().Ascent
	for i, line := range lines {
		w, _, _ := h.Box(line, sty.Font)
		xoffs := vg.Length(sty.XAlign) * w
		n := vg.Length(len(lines) - i)
		c.FillString(fnt, pt.Add(vg.Point{X: xoffs, Y: n * sty.Font.Size}), line)
	}
	if sty.Rotation != 0 {
		c.Pop()
	}
}

// legendEntry is one name of a figure's legend with its sample.
type legendEntry struct {
	name  string
	thumb plot.Thumbnailer
}

// legend is the key of a figure, drawn by render in a strip above the top
// panel, outside every data area, so that it never covers data.
type legend []legendEntry

// add appends an entry.
func (l *legend) add(name string, t plot.Thumbnailer) { *l = append(*l, legendEntry{name, t}) }

// The legend's layout, in points: the sample's width, the gap between the
// sample and its name, between two entries, and between the strip and the
// top panel.
const (
	legendThumbPt = 24
	legendGapPt   = 5
	legendSpacePt = 18
	legendBelowPt = 6
)

// legendText is the style of the legend's names.
var legendText = text.Style{Color: color.Black, Font: font.From(sans, TickFontPt), Handler: textMeasure, YAlign: draw.YCenter}

// rowHeight is the height of one row of the legend.
func (l legend) rowHeight() vg.Length { return vg.Length(TickFontPt) * 1.45 }

// rows lays the entries out in rows no wider than width, left to right,
// and returns the index of the first entry of each row.
func (l legend) rows(width vg.Length) []int {
	if len(l) == 0 {
		return nil
	}
	starts := []int{0}
	x := vg.Length(0)
	for i, e := range l {
		w := legendThumbPt + legendGapPt + legendText.Width(e.name)
		if x > 0 && x+w > width {
			starts = append(starts, i)
			x = 0
		}
		x += w + legendSpacePt
	}
	return starts
}

// The padding of a figure round its panels, in points.
var figureTiles = draw.Tiles{
	Cols:   1,
	PadTop: vg.Points(8), PadBottom: vg.Points(4),
	PadLeft: vg.Points(4), PadRight: vg.Points(14),
	PadY: vg.Points(10),
}

// render writes the plots, stacked in one column and aligned, as SVG, with
// the legend lg in a strip above them, aligned with the data area's left
// edge.
func render(w io.Writer, width, height vg.Length, lg legend, plots ...*plot.Plot) error {
	var c *svgcanvas.Canvas
	if bw, ok := w.(*bytes.Buffer); ok {
		c = svgcanvas.NewOn(bw, width, height) // drawn in place, no copy
	} else {
		c = svgcanvas.New(width, height)
	}
	defer c.Release()
	dc := draw.New(c)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	tiles := figureTiles
	tiles.Rows = len(plots)
	grid := make([][]*plot.Plot, len(plots))
	for i, p := range plots {
		grid[i] = []*plot.Plot{p}
	}
	area := dc
	var starts []int
	var canvases [][]draw.Canvas
	// The strip's height depends on the rows, the rows on where the data
	// area starts, and that on the strip: lay out with one row, and again
	// if the names need more.
	for nRows := min(len(lg), 1); ; {
		area.Max.Y = dc.Max.Y - vg.Length(nRows)*lg.rowHeight()
		if nRows > 0 {
			area.Max.Y -= legendBelowPt
		}
		canvases = plot.Align(grid, tiles, area)
		if len(lg) == 0 {
			break
		}
		da := plots[0].DataCanvas(canvases[0][0])
		starts = lg.rows(dc.Max.X - tiles.PadRight - da.Min.X)
		if len(starts) <= nRows {
			drawLegend(dc, lg, starts, da.Min.X, dc.Max.Y-tiles.PadTop)
			break
		}
		nRows = len(starts)
	}
	for i, p := range plots {
		p.Draw(canvases[i][0])
	}
	_, err := c.WriteTo(w)
	return err
}

// drawLegend draws the entries of lg in the rows that start at starts,
// from x0, the first row's top at top.
func drawLegend(dc draw.Canvas, lg legend, starts []int, x0, top vg.Length) {
	rh := lg.rowHeight()
	for r, first := range starts {
		end := len(lg)
		if r+1 < len(starts) {
			end = starts[r+1]
		}
		mid := top - rh*vg.Length(r) - rh/2
		x := x0
		for _, e := range lg[first:end] {
			th := vg.Length(TickFontPt) * 0.8
			tc := dc
			tc.Min = vg.Point{X: x, Y: mid - th/2}
			tc.Max = vg.Point{X: x + legendThumbPt, Y: mid + th/2}
			e.thumb.Thumbnail(&tc)
			x += legendThumbPt + legendGapPt
			dc.FillText(legendText, vg.Point{X: x, Y: mid}, e.name)
			x += legendText.Width(e.name) + legendSpacePt
		}
	}
}

// finite reports whether v is neither NaN nor infinite.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// curve is a line on a plot, with its legend name. It hides the
// GlyphBoxes and DataRange methods of plotter.Line: the axis ranges are
// set explicitly, and plot.Plot would otherwise ask for one glyph box per
// point on every layout pass (about half the time of drawing a plot).
type curve struct {
	line *plotter.Line
	name string
	src  *series // the points, computed as they are drawn (nil: line.XYs)
}

// series is a curve's data as drawn, computed as the curve is drawn
// rather than kept as plotter.XYs: the pairs (xs[i]·xk, ys[i]·yk) with x finite and y not NaN, y clamped to
// [lo, hi] and dropped unless finite, then log10 of y when log10 is set.
// A multiplier of 0 stands for none.
type series struct {
	xs, ys []float64
	xk, yk float64
	lo, hi float64
	log10  bool
}

// each calls fn with the points of s in order until fn returns false.
func (s *series) each(fn func(x, y float64) bool) {
	for i, x := range s.xs {
		if i >= len(s.ys) {
			return
		}
		y := s.ys[i]
		if s.xk != 0 {
			x *= s.xk
		}
		if s.yk != 0 {
			y *= s.yk
		}
		if !finite(x) || math.IsNaN(y) {
			continue
		}
		if y = min(max(y, s.lo), s.hi); !finite(y) {
			continue
		}
		if s.log10 {
			y = math.Log10(y)
		}
		if !fn(x, y) {
			return
		}
	}
}

// atLeast reports whether c has at least n points.
func (c curve) atLeast(n int) bool {
	if c.src == nil {
		return len(c.line.XYs) >= n
	}
	k := 0
	c.src.each(func(float64, float64) bool { k++; return k < n })
	return k >= n
}

// seriesCurve returns the curve through the points of s, styled sty.
func seriesCurve(s *series, sty draw.LineStyle, name string) curve {
	return curve{line: &plotter.Line{LineStyle: sty}, name: name, src: s}
}

// Plot implements plot.Plotter. It draws the line as plotter.Line does
// (transformed, clipped to the data area, stroked), but first drops the
// points that the drawing cannot show: the line is simplified in canvas
// coordinates so that no dropped point lies farther than simplifyTolPt
// from the line drawn (a smooth curve of 1,500 samples keeps a few dozen
// to a few hundred), which is what most of the SVG's size and of the time
// to write it had gone to. The simplified line is clipped as the whole
// one would be, within the same distance.
func (c curve) Plot(dc draw.Canvas, p *plot.Plot) {
	sty := c.line.LineStyle
	if sty.Width == 0 || !c.atLeast(1) {
		return
	}
	trX, trY := newAxisMap(p.X, dc.Min.X, dc.Max.X), newAxisMap(p.Y, dc.Min.Y, dc.Max.Y)
	sc := scratchPool.Get().(*scratch)
	defer scratchPool.Put(sc)
	var ps []vg.Point
	if c.src != nil {
		ps = slices.Grow(sc.pts[:0], len(c.src.xs))
		c.src.each(func(x, y float64) bool {
			ps = append(ps, vg.Point{X: trX.at(x), Y: trY.at(y)})
			return true
		})
	} else {
		ps = slices.Grow(sc.pts[:0], len(c.line.XYs))
		for _, pt := range c.line.XYs {
			ps = append(ps, vg.Point{X: trX.at(pt.X), Y: trY.at(pt.Y)})
		}
	}
	sc.pts = ps
	ps = sc.simplified(ps, simplifyTolPt)
	var lines [][]vg.Point
	if inside(dc, ps) {
		// What clipping returns for a line inside the area: the line.
		sc.one[0] = ps
		lines = sc.one[:]
	} else {
		lines = sc.clip.clip(dc, ps)
	}
	dc.SetLineStyle(sty)
	strokeLines(dc, lines)
	sc.one[0] = nil
}

// strokeLines strokes each line of lines in the canvas's current style:
// as a polyline where the canvas takes one, else as a vg.Path (as
// draw.Canvas.StrokeLines does, without setting the style).
func strokeLines(dc draw.Canvas, lines [][]vg.Point) {
	pl, direct := polylinerOf(dc.Canvas)
	for _, l := range lines {
		if len(l) == 0 {
			continue
		}
		if direct {
			pl.StrokePolyline(l)
			continue
		}
		path := make(vg.Path, 0, len(l))
		path.Move(l[0])
		for _, pt := range l[1:] {
			path.Line(pt)
		}
		dc.Stroke(path)
	}
}

// polyliner is a canvas that strokes a polyline without a vg.Path
// (svgcanvas.Canvas, with the same output as Stroke of the path).
type polyliner interface {
	StrokePolyline([]vg.Point)
	FillPolygons([][]vg.Point)
}

// polylinerOf returns the polyliner under the canvases that gonum/plot
// wraps around the one drawn on.
func polylinerOf(c vg.Canvas) (polyliner, bool) {
	for {
		switch cv := c.(type) {
		case polyliner:
			return cv, true
		case draw.Canvas:
			c = cv.Canvas
		case *draw.Canvas:
			c = cv.Canvas
		default:
			return nil, false
		}
	}
}

// inside reports whether every point of l lies in dc's rectangle, edges
// included, where gonum/plot's clipping keeps a line whole.
func inside(dc draw.Canvas, l []vg.Point) bool {
	for _, pt := range l {
		if !(pt.X >= dc.Min.X && pt.X <= dc.Max.X && pt.Y >= dc.Min.Y && pt.Y <= dc.Max.Y) {
			return false
		}
	}
	return true
}

// axisMap maps data values along an axis to canvas coordinates with the
// same arithmetic as plot.Plot.Transforms, without its closures and
// interface calls for the two scales the plots use.
type axisMap struct {
	a           plot.Axis
	lin         bool
	log         *logScale
	cMin, cSpan vg.Length
}

func newAxisMap(a plot.Axis, cMin, cMax vg.Length) axisMap {
	m := axisMap{a: a, cMin: cMin, cSpan: cMax - cMin}
	switch sc := a.Scale.(type) {
	case plot.LinearScale:
		m.lin = true
	case *logScale:
		m.log = sc
	}
	return m
}

// at returns the canvas coordinate of the data value x.
func (m *axisMap) at(x float64) vg.Length {
	var v float64
	switch {
	case m.lin:
		v = (x - m.a.Min) / (m.a.Max - m.a.Min)
	case m.log != nil:
		v = m.log.Normalize(m.a.Min, m.a.Max, x)
	default:
		v = m.a.Norm(x)
	}
	return vg.Length(v)*m.cSpan + m.cMin
}

// scratch is the memory curve.Plot works in, pooled in scratchPool: the
// canvas points of a curve and simplify's marks. Nothing drawn keeps it
// (the SVG canvas writes a path out when it is stroked).
type scratch struct {
	pts     []vg.Point
	keep    []bool
	one     [1][]vg.Point // the one line of a curve inside its area
	clip    clipper
	rings   [][]vg.Point // a shape's rings
	ringPts []vg.Point   // their points
}

var scratchPool = sync.Pool{New: func() any { return new(scratch) }}

// simplified returns the points of l that [simplify] keeps, in l's memory.
func simplified(l []vg.Point, tol vg.Length) []vg.Point {
	return (&scratch{}).simplified(l, tol)
}

// simplified is the function simplified with its marks in sc.
func (sc *scratch) simplified(l []vg.Point, tol vg.Length) []vg.Point {
	if len(l) < 3 {
		return l
	}
	sc.keep = simplify(sc.keep, l, tol)
	keep := sc.keep
	out := l[:0]
	for i, pt := range l {
		if keep[i] {
			out = append(out, pt)
		}
	}
	return out
}

// simplifyTolPt is the largest distance, in points, of a dropped point of
// a curve from the line drawn: a tenth of a point, a small fraction of the
// thinnest curve's width and below what a screen or a print shows.
const simplifyTolPt = 0.25

// simplifyWindow is the length of the runs that simplify simplifies
// alone.
const simplifyWindow = 64

// simplify marks the points of l to keep (Ramer–Douglas–Peucker): the
// ends, and every point without which some point of l would lie farther
// than tol from the polyline through the kept ones. It reuses keep's
// memory and returns the marks, one per point of l.
func simplify(keep []bool, l []vg.Point, tol vg.Length) []bool {
	n := len(l)
	keep = slices.Grow(keep[:0], n)[:n]
	clear(keep)
	type span struct{ a, b int }
	// RDP costs up to the square of a run's length where nearly every
	// point is kept (a ringing step's error on a log axis), so the line is
	// simplified in windows of simplifyWindow points, their ends kept.
	stack := make([]span, 0, 64)
	for a := 0; a < n-1; a += simplifyWindow {
		b := min(a+simplifyWindow, n-1)
		keep[a], keep[b] = true, true
		stack = append(stack, span{a, b})
	}
	keep[0], keep[n-1] = true, true
	tol2 := float64(tol * tol)
	for len(stack) > 0 {
		s := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if s.b-s.a < 2 {
			continue
		}
		a, b := l[s.a], l[s.b]
		dx, dy := float64(b.X-a.X), float64(b.Y-a.Y)
		seg2 := dx*dx + dy*dy
		worst, at := -1.0, -1
		for i := s.a + 1; i < s.b; i++ {
			px, py := float64(l[i].X-a.X), float64(l[i].Y-a.Y)
			var d2 float64
			if seg2 == 0 {
				d2 = px*px + py*py
			} else {
				// The distance from the segment (not its line), so that a
				// curve that turns back on itself keeps its turning point.
				t := min(max((px*dx+py*dy)/seg2, 0), 1)
				ex, ey := px-t*dx, py-t*dy
				d2 = ex*ex + ey*ey
			}
			if d2 > worst {
				worst, at = d2, i
			}
		}
		if worst > tol2 || math.IsNaN(worst) {
			keep[at] = true
			stack = append(stack, span{s.a, at}, span{at, s.b})
		}
	}
	return keep
}

// Thumbnail implements plot.Thumbnailer.
func (c curve) Thumbnail(dc *draw.Canvas) { c.line.Thumbnail(dc) }

// addCurves adds the lines through the points of each curve with at least
// two points to p and, if lg is not nil, their names to lg.
func addCurves(p *plot.Plot, lg *legend, curves ...curve) {
	for _, c := range curves {
		if !c.atLeast(2) {
			continue
		}
		p.Add(c)
		if lg != nil {
			lg.add(c.name, c)
		}
	}
}

// idealCurve and builtCurve style the two curves of every plot.
func idealCurve(s *series) curve { return seriesCurve(s, idealStyle, idealName) }

func builtCurve(s *series) curve { return seriesCurve(s, builtStyle, builtName) }

// setRanges sets the axis ranges of p. It must come after the last p.Add,
// which widens them to the data ranges of the plotters.
func setRanges(p *plot.Plot, xLo, xHi, yLo, yHi float64) {
	p.X.Min, p.X.Max = xLo, xHi
	p.Y.Min, p.Y.Max = yLo, yHi
}

// frame draws the border of the data area.
type frame struct{}

// Plot implements plot.Plotter.
func (frame) Plot(c draw.Canvas, _ *plot.Plot) {
	c.StrokeLines(frameStyle, []vg.Point{
		{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y},
		{X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Min.Y},
	})
}

// grid draws the grid lines at the given ticks: labelled ticks in the major
// style, the others in the minor style, each style as one path.
type grid struct{ x, y []plot.Tick }

// Plot implements plot.Plotter.
func (g grid) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	var major, minor vg.Path
	add := func(t plot.Tick, a, b vg.Point) {
		pa := &minor
		if t.Label != "" {
			pa = &major
		}
		pa.Move(a)
		pa.Line(b)
	}
	for _, t := range g.x {
		if x := trX(t.Value); x > c.Min.X && x < c.Max.X {
			add(t, vg.Point{X: x, Y: c.Min.Y}, vg.Point{X: x, Y: c.Max.Y})
		}
	}
	for _, t := range g.y {
		if y := trY(t.Value); y > c.Min.Y && y < c.Max.Y {
			add(t, vg.Point{X: c.Min.X, Y: y}, vg.Point{X: c.Max.X, Y: y})
		}
	}
	for _, s := range []struct {
		path vg.Path
		sty  draw.LineStyle
	}{{minor, gridMinor}, {major, gridMajor}} {
		if len(s.path) > 0 {
			c.SetLineStyle(s.sty)
			c.Stroke(s.path)
		}
	}
}

// hline is a horizontal line across the data area at y.
type hline struct {
	y   float64
	sty draw.LineStyle
}

// Thumbnail implements plot.Thumbnailer.
func (h hline) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(h.sty, c.Min.X, y, c.Max.X, y)
}

// Plot implements plot.Plotter.
func (h hline) Plot(c draw.Canvas, plt *plot.Plot) {
	_, trY := plt.Transforms(&c)
	if y := trY(h.y); y >= c.Min.Y && y <= c.Max.Y {
		c.StrokeLine2(h.sty, c.Min.X, y, c.Max.X, y)
	}
}

// log10Axis maps the ticks of a logarithmic axis onto a linear axis of
// log10 values. A logarithmic value axis is drawn this way, linear in
// log10(y), because gonum/plot reserves room for the axis label at the
// arithmetic mean of the range (the FIXME in verticalAxis.GlyphBoxes),
// which on a log scale lies near the top and pushes the data area down.
func log10Axis(ticks []plot.Tick) []plot.Tick {
	out := make([]plot.Tick, len(ticks))
	for i, t := range ticks {
		out[i] = plot.Tick{Value: math.Log10(t.Value), Label: t.Label}
	}
	return out
}

// log10Points returns pts with Y replaced by log10(Y).
func log10Points(pts plotter.XYs) plotter.XYs {
	out := make(plotter.XYs, len(pts))
	for i, p := range pts {
		out[i] = plotter.XY{X: p.X, Y: math.Log10(p.Y)}
	}
	return out
}

// logScale is gonum/plot's LogScale with the logarithms of the axis's
// ends kept between calls: Normalize runs for every point drawn, and the
// library's takes three logarithms each time. The result is the same to
// the bit. Each axis needs its own (it remembers its range).
type logScale struct {
	min, max, logMin, span float64
}

// Normalize returns the fractional distance of x between min and max on a
// logarithmic scale; it panics, as plot.LogScale does, for a value ≤ 0.
func (s *logScale) Normalize(min, max, x float64) float64 {
	if min <= 0 || max <= 0 || x <= 0 {
		panic("Values must be greater than 0 for a log scale.")
	}
	if min != s.min || max != s.max || s.span == 0 {
		s.min, s.max = min, max
		s.logMin = math.Log(min)
		s.span = math.Log(max) - s.logMin
	}
	return (math.Log(x) - s.logMin) / s.span
}
