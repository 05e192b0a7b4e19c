package plotting

import (
	"image/color"
	"io"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// Layout of the magnitude axis (see the package documentation).
const (
	stopMarginDB   = 30  // axis floor below the stopband floor
	noStopDepthDB  = 80  // axis depth without a stopband
	maxDepthDB     = 300 // deepest axis
	defaultAmaxDB  = 3   // ripple assumed for a spec without a usable one
	maxPeakAboveDB = 40  // highest the axis goes above the gain
)

func bode(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
	return drawBode(w, d, newSweep(d, usable(tfs)), opt)
}

// drawBode writes the Bode plot of d from its sweep sw, which it does not
// change.
func drawBode(w io.Writer, d *synth.Design, sw *sweep, opt Options) error {
	var lg legend
	mag := magnitudePlot(d, sw, &lg)
	ph := phasePlot(sw)
	width, height := opt.size(DefaultWidthPt, DefaultBodeHeightPt)
	return render(w, width, height, lg, mag, ph)
}

// specLosses returns the gain in dB, Amax, and Amin with whether the spec
// has a usable stopband, all finite.
func specLosses(d *synth.Design, sw *sweep) (gainDB, amax, amin float64, stop bool) {
	gainDB = 20 * math.Log10(d.Gain)
	if !finite(gainDB) {
		gainDB = 0
		if _, hi, ok := dataRange(sw.idealDB); ok && hi > -maxDepthDB {
			gainDB = hi
		}
	}
	amax = d.Spec.PassbandRippleDB
	if !(amax > 0) || !finite(amax) {
		amax = defaultAmaxDB
	}
	amin = d.Spec.StopbandAttenDB
	stop = d.Spec.HasStopband() && amin > 0 && finite(amin)
	return gainDB, amax, amin, stop
}

// magAxis is the layout of the magnitude axis: linear in dB from lo to
// hi, one scale throughout (the passband's ripple has a plot of its own,
// [Passband]).
type magAxis struct {
	lo, hi float64
}

// newMagAxis returns the axis for a response whose passband gain is gainDB
// and whose curves peak at peakDB (NaN: unknown): from 30 dB below the
// stopband floor (80 dB below the gain without a stopband, at most 300 dB)
// to 5 % of the span (at least 1 dB) above the higher of the gain and the
// peak, the peak taken at most 40 dB above the gain.
func newMagAxis(gainDB, amin float64, stop bool, peakDB float64) magAxis {
	lo := gainDB - noStopDepthDB
	if stop {
		lo = gainDB - amin - stopMarginDB
	}
	lo = max(lo, gainDB-maxDepthDB)
	top := gainDB
	if finite(peakDB) && peakDB > top {
		top = min(peakDB, gainDB+maxPeakAboveDB)
	}
	return magAxis{lo: lo, hi: top + max(0.05*(top-lo), 1)}
}

// ticks returns the labelled ticks of the axis.
func (a magAxis) ticks() []plot.Tick {
	return linTicks(a.lo, a.hi, niceStep(a.hi-a.lo, 8))
}

// region is a forbidden rectangle of the mask over [x0, x1] Hz: below the
// limit (passband) or above it (stopband).
type region struct {
	x0, x1, limit float64
	below         bool
}

// maskRegions returns the forbidden regions of the spec; band edges out of
// the view extend beyond it. Missing or invalid edges give no region.
func maskRegions(s synth.Spec, gainDB, amax, amin float64, stop bool, fLo, fHi float64) []region {
	far0, far1 := fLo/4, fHi*4
	valid := func(e []float64, n int) bool {
		if len(e) != n {
			return false
		}
		for i, f := range e {
			if !(f > 0) || math.IsInf(f, 1) || (i > 0 && !(f > e[i-1])) {
				return false
			}
		}
		return true
	}
	pl, sl := gainDB-amax, gainDB-amin
	var out []region
	p, st := s.PassbandHz, s.StopbandHz
	band := s.Response.IsBand()
	n := 1
	if band {
		n = 2
	}
	okP, okS := valid(p, n), stop && valid(st, n)
	switch s.Response {
	case synth.Highpass:
		if okP {
			out = append(out, region{p[0], far1, pl, true})
		}
		if okS {
			out = append(out, region{far0, st[0], sl, false})
		}
	case synth.Bandpass:
		if okP {
			out = append(out, region{p[0], p[1], pl, true})
		}
		if okS {
			out = append(out, region{far0, st[0], sl, false}, region{st[1], far1, sl, false})
		}
	case synth.Bandstop:
		if okP {
			out = append(out, region{far0, p[0], pl, true}, region{p[1], far1, pl, true})
		}
		if okS {
			out = append(out, region{st[0], st[1], sl, false})
		}
	default: // lowpass
		if okP {
			out = append(out, region{far0, p[0], pl, true})
		}
		if okS {
			out = append(out, region{st[0], far1, sl, false})
		}
	}
	return out
}

// maskName is the legend name of the mask's shading.
const maskName = "forbidden by the mask"

// addMask adds the shaded regions and their limit lines to p, whose Y range
// is [lo, hi], and, when there is a region, their name to lg.
func addMask(p *plot.Plot, lg *legend, regions []region, lo, hi float64) {
	span := hi - lo
	for i, r := range regions {
		far := hi + span
		if r.below {
			far = lo - span
		}
		poly, err := plotter.NewPolygon(plotter.XYs{{X: r.x0, Y: far}, {X: r.x1, Y: far}, {X: r.x1, Y: r.limit}, {X: r.x0, Y: r.limit}})
		if err != nil {
			continue // only for non-finite input, which the callers exclude
		}
		poly.Color = maskFill
		poly.LineStyle.Width = 0
		edge := curve{line: &plotter.Line{
			XYs:       plotter.XYs{{X: r.x0, Y: far}, {X: r.x0, Y: r.limit}, {X: r.x1, Y: r.limit}, {X: r.x1, Y: far}},
			LineStyle: maskEdge,
		}}
		p.Add(shape{poly: poly}, edge)
		if i == 0 && lg != nil {
			lg.add(maskName, maskSample{})
		}
	}
}

// maskSample is the legend sample of the mask: a shaded box with its
// limit line on top.
type maskSample struct{}

// Thumbnail implements plot.Thumbnailer.
func (maskSample) Thumbnail(c *draw.Canvas) {
	c.FillPolygon(maskFill, []vg.Point{c.Min, {X: c.Max.X, Y: c.Min.Y}, c.Max, {X: c.Min.X, Y: c.Max.Y}})
	c.StrokeLine2(maskEdge, c.Min.X, c.Max.Y, c.Max.X, c.Max.Y)
}

// shape is a polygon without its DataRange method (see curve). Its one
// ring comes from ring when that is set (poly.XYs is then empty).
type shape struct {
	poly *plotter.Polygon
	ring *bandRing
}

// bandRing is the ring of a Monte Carlo envelope band: the upper edge
// (clamped to [lo, hi]) at the usable frequencies left to right, then the
// lower edge back, n points each, made as the band is drawn rather than
// kept as plotter.XYs.
type bandRing struct {
	f, upper, lower []float64
	lo, hi          float64
	n               int
}

// ok reports whether frequency i has a finite frequency and both edges.
func (r *bandRing) ok(i int) bool {
	f := r.f[i]
	return i < len(r.lower) && i < len(r.upper) && f > 0 && finite(f) && !math.IsNaN(r.lower[i]) && !math.IsNaN(r.upper[i])
}

// infinite reports whether a clamped edge is infinite at a usable
// frequency.
func (r *bandRing) infinite() bool {
	for i := range r.f {
		if r.ok(i) && (math.IsInf(min(max(r.upper[i], r.lo), r.hi), 0) || math.IsInf(min(max(r.lower[i], r.lo), r.hi), 0)) {
			return true
		}
	}
	return false
}

// points writes the ring's 2n points, mapped by trX and trY, into out.
func (r *bandRing) points(out []vg.Point, trX, trY *axisMap) {
	k := 0
	for i, f := range r.f {
		if !r.ok(i) {
			continue
		}
		x := trX.at(f)
		out[k] = vg.Point{X: x, Y: trY.at(min(max(r.upper[i], r.lo), r.hi))}
		out[2*r.n-1-k] = vg.Point{X: x, Y: trY.at(min(max(r.lower[i], r.lo), r.hi))}
		k++
	}
}

// Plot implements plot.Plotter. It draws the polygon as plotter.Polygon
// does (each ring transformed and clipped, filled, its edge stroked), each
// ring simplified before it is clipped, as a curve's line is (see
// curve.Plot): the Monte Carlo envelope's bands have two points per
// frequency of the analysis.
func (s shape) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := newAxisMap(p.X, c.Min.X, c.Max.X), newAxisMap(p.Y, c.Min.Y, c.Max.Y)
	sc := scratchPool.Get().(*scratch)
	defer scratchPool.Put(sc)
	rings := sc.rings[:0]
	n := 0
	// The rings' points in one piece of scratch memory, each ring with room
	// for the point that closes its edge (and no more: appending must not
	// run into the next ring).
	total := 0
	for _, xys := range s.poly.XYs {
		total += len(xys) + 1
	}
	if s.ring != nil {
		total += 2*s.ring.n + 1
	}
	mem := slices.Grow(sc.ringPts[:0], total)[:total]
	sc.ringPts = mem
	nRings := len(s.poly.XYs)
	if s.ring != nil {
		nRings = 1
	}
	for k := range nRings {
		var ring []vg.Point
		if s.ring != nil {
			ring = mem[: 2*s.ring.n : 2*s.ring.n+1]
			s.ring.points(ring, &trX, &trY)
		} else {
			xys := s.poly.XYs[k]
			ring = mem[: len(xys) : len(xys)+1]
			for j, pt := range xys {
				ring[j] = vg.Point{X: trX.at(pt.X), Y: trY.at(pt.Y)}
			}
		}
		mem = mem[cap(ring):]
		ring = sc.simplified(ring, simplifyTolPt)
		if !inside(c, ring) {
			// (a ring inside the area is its own clipped ring)
			ring = c.ClipPolygonXY(ring)
		}
		if len(ring) > 0 {
			rings = append(rings, ring)
			n += len(ring) + 1
		}
	}
	sc.rings = rings
	defer clear(sc.rings)
	pl, direct := polylinerOf(c.Canvas)
	if s.poly.Color != nil && len(rings) > 0 {
		c.SetColor(s.poly.Color)
		if direct {
			pl.FillPolygons(rings)
		} else {
			pa := make(vg.Path, 0, n)
			for _, ring := range rings {
				pa.Move(ring[0])
				for _, pt := range ring[1:] {
					pa.Line(pt)
				}
				pa.Close()
			}
			c.Fill(pa)
		}
	}
	for _, ring := range rings {
		if ring[len(ring)-1] != ring[0] {
			ring = append(ring, ring[0])
		}
		var lines [][]vg.Point
		if inside(c, ring) {
			if len(ring) > 1 {
				sc.one[0] = ring
				lines = sc.one[:]
			}
		} else {
			lines = sc.clip.clip(c, ring)
		}
		// draw.Canvas.StrokeLines, without a path for an invisible edge.
		if len(lines) == 0 {
			continue
		}
		c.SetLineStyle(s.poly.LineStyle)
		if s.poly.LineStyle.Width > 0 || !direct { // (the canvas strokes nothing of zero width)
			strokeLines(c, lines)
		}
		sc.one[0] = nil
	}
}

// Thumbnail implements plot.Thumbnailer.
func (s shape) Thumbnail(c *draw.Canvas) { s.poly.Thumbnail(c) }

// The Monte Carlo envelope's shading: the min–max band light, the
// 1st–99th percentile band darker, in the as-built curve's colour.
var (
	envelopeOuterFill = color.NRGBA{R: 0xd9, G: 0x6c, B: 0x06, A: 0x30}
	envelopeInnerFill = color.NRGBA{R: 0xd9, G: 0x6c, B: 0x06, A: 0x60}
)

// Legend names of the envelope's bands.
const (
	envelopeOuterName = "Monte Carlo min–max"
	envelopeInnerName = "Monte Carlo 1–99 %"
)

// band is one shaded band of the envelope with its legend name.
type band struct {
	shape shape
	name  string
}

// envelopeBands returns the shaded bands of the Monte Carlo envelope of
// mc (none for a nil mc or an envelope without two usable points),
// values clamped to [lo, hi].
func envelopeBands(mc *synth.MonteCarloReport, lo, hi float64) []band {
	if mc == nil {
		return nil
	}
	e := mc.Envelope
	var out []band
	for _, b := range []struct {
		lower, upper []float64
		fill         color.Color
		name         string
	}{{e.MinDB, e.MaxDB, envelopeOuterFill, envelopeOuterName}, {e.P01DB, e.P99DB, envelopeInnerFill, envelopeInnerName}} {
		probe := bandRing{f: e.FreqHz, upper: b.upper, lower: b.lower}
		m := 0
		for i := range e.FreqHz {
			if probe.ok(i) {
				m++
			}
		}
		if m < 2 {
			continue
		}
		// The upper edge left to right, then the lower edge back: one
		// ring, made as it is drawn (see bandRing).
		r := &bandRing{f: e.FreqHz, upper: b.upper, lower: b.lower, lo: lo, hi: hi, n: m}
		if r.infinite() {
			continue // as plotter.NewPolygon would refuse it
		}
		poly := &plotter.Polygon{LineStyle: plotter.DefaultLineStyle}
		poly.Color = b.fill
		poly.LineStyle.Width = 0
		out = append(out, band{shape{poly: poly, ring: r}, b.name})
	}
	return out
}

// magnitudePlot returns the top panel of the Bode plot; the names it
// shows go to lg.
func magnitudePlot(d *synth.Design, sw *sweep, lg *legend) *plot.Plot {
	p := newPlot()
	fLo, fHi := sw.f[0], sw.f[len(sw.f)-1]
	xt := freqTicks(fLo, fHi)
	p.X.Scale = &logScale{}
	p.HideX()

	gainDB, amax, amin, stop := specLosses(d, sw)
	_, peak, ok := dataRange(sw.idealDB, sw.builtDB)
	if !ok {
		peak = math.NaN()
	}
	ax := newMagAxis(gainDB, amin, stop, peak)
	yt := ax.ticks()
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Magnitude (dB)"

	p.Add(grid{x: xt, y: yt})
	// Clamp just outside the axis so that a curve leaves it cleanly.
	cLo, cHi := ax.lo-0.05*(ax.hi-ax.lo), ax.hi+0.05*(ax.hi-ax.lo)
	// The Monte Carlo bands go under the mask's shading, so that the
	// forbidden regions keep their colour where a band crosses them.
	bands := envelopeBands(d.MonteCarlo, cLo, cHi)
	for _, b := range bands {
		p.Add(b.shape)
	}
	var mask legend
	addMask(p, &mask, maskRegions(d.Spec, gainDB, amax, amin, stop, fLo, fHi), ax.lo, ax.hi)
	addCurves(p, lg,
		idealCurve(&series{xs: sw.f, ys: sw.idealDB, lo: cLo, hi: cHi}),
		builtCurve(&series{xs: sw.f, ys: sw.builtDB, lo: cLo, hi: cHi}))
	for _, b := range bands {
		lg.add(b.name, b.shape)
	}
	*lg = append(*lg, mask...)
	p.Add(frame{})
	setRanges(p, fLo, fHi, ax.lo, ax.hi)
	return p
}

// phasePlot returns the bottom panel of the Bode plot.
func phasePlot(sw *sweep) *plot.Plot {
	p := newPlot()
	fLo, fHi := sw.f[0], sw.f[len(sw.f)-1]
	xt := freqTicks(fLo, fHi)
	p.X.Scale = &logScale{}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Frequency (Hz)"

	lo, hi, ok := dataRange(sw.idealPh, sw.builtPh)
	if !ok {
		lo, hi = -90, 90
	}
	lo, hi = padRange(lo, hi, 0.06, 20)
	yt := degreeTicks(lo, hi)
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Phase (\u00b0)"

	p.Add(grid{x: xt, y: yt})
	// The names are in the magnitude panel's legend.
	addCurves(p, nil,
		idealCurve(&series{xs: sw.f, ys: sw.idealPh, lo: math.Inf(-1), hi: math.Inf(1)}),
		builtCurve(&series{xs: sw.f, ys: sw.builtPh, lo: math.Inf(-1), hi: math.Inf(1)}))
	p.Add(frame{})
	setRanges(p, fLo, fHi, lo, hi)
	return p
}
