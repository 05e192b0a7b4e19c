package plotting

import (
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// Layout of the magnitude axis (see the package documentation).
const (
	zoomFrac       = 0.4 // share of the axis given to the passband ripple
	stopMarginDB   = 30  // axis floor below the stopband floor
	noStopDepthDB  = 80  // axis depth without a stopband
	maxDepthDB     = 300 // deepest axis
	defaultAmaxDB  = 3   // ripple assumed for a spec without a usable one
	maxPeakAboveDB = 40  // highest the axis goes above the gain
)

func bode(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
	sw := newSweep(d, usable(tfs))
	mag := magnitudePlot(d, sw)
	ph := phasePlot(sw)
	width, height := opt.size(DefaultWidthPt, DefaultBodeHeightPt)
	return render(w, width, height, mag, ph)
}

// specLosses returns the gain in dB, Amax, and Amin with whether the spec
// has a usable stopband, all finite.
func specLosses(d *synth.Design, sw sweep) (gainDB, amax, amin float64, stop bool) {
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

// magAxis is the layout of the magnitude axis.
type magAxis struct {
	lo, hi, pivot float64
	split         bool
}

func newMagAxis(gainDB, amax, amin float64, stop bool, peakDB float64) magAxis {
	depth := min(max(2*amax, 0.5), 12)
	pivot := gainDB - depth
	hi := gainDB + depth/4
	if finite(peakDB) && peakDB+depth/8 > hi {
		hi = min(peakDB+depth/8, gainDB+maxPeakAboveDB)
	}
	lo := gainDB - noStopDepthDB
	if stop {
		lo = gainDB - amin - stopMarginDB
	}
	lo = max(lo, gainDB-maxDepthDB)
	if lo > pivot-10 {
		lo = pivot - 10
	}
	return magAxis{lo: lo, hi: hi, pivot: pivot, split: (hi-pivot)/(hi-lo) < zoomFrac}
}

// ticks returns the labelled ticks of the axis: a step of its own for each
// segment, the lower ones kept clear of the pivot's label.
func (a magAxis) ticks() []plot.Tick {
	if !a.split {
		return linTicks(a.lo, a.hi, niceStep(a.hi-a.lo, 8))
	}
	upper := linTicks(a.pivot, a.hi, niceStep(a.hi-a.pivot, 4))
	var out []plot.Tick
	for _, t := range linTicks(a.lo, a.pivot, niceStep(a.pivot-a.lo, 5)) {
		if t.Value < a.pivot-0.12*(a.pivot-a.lo) {
			out = append(out, t)
		}
	}
	return append(out, upper...)
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

// addMask adds the shaded regions and their limit lines to p, whose Y range
// is [lo, hi].
func addMask(p *plot.Plot, regions []region, lo, hi float64) {
	span := hi - lo
	for _, r := range regions {
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
		p.Add(shape{poly}, edge)
	}
}

// shape is a polygon without its DataRange method (see curve).
type shape struct{ poly *plotter.Polygon }

// Plot implements plot.Plotter. It draws the polygon as plotter.Polygon
// does (each ring transformed and clipped, filled, its edge stroked), each
// ring simplified before it is clipped, as a curve's line is (see
// curve.Plot): the Monte Carlo envelope's bands have two points per
// frequency of the analysis.
func (s shape) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	rings := make([][]vg.Point, 0, len(s.poly.XYs))
	n := 0
	for _, xys := range s.poly.XYs {
		ring := make([]vg.Point, len(xys))
		for j, pt := range xys {
			ring[j] = vg.Point{X: trX(pt.X), Y: trY(pt.Y)}
		}
		if ring = c.ClipPolygonXY(simplified(ring, simplifyTolPt)); len(ring) > 0 {
			rings = append(rings, ring)
			n += len(ring) + 1
		}
	}
	if s.poly.Color != nil && len(rings) > 0 {
		c.SetColor(s.poly.Color)
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
	for _, ring := range rings {
		if ring[len(ring)-1] != ring[0] {
			ring = append(ring, ring[0])
		}
		c.StrokeLines(s.poly.LineStyle, c.ClipLinesXY(ring)...)
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
		var top, bottom plotter.XYs
		for i, f := range e.FreqHz {
			if i >= len(b.lower) || i >= len(b.upper) || !(f > 0) || !finite(f) || math.IsNaN(b.lower[i]) || math.IsNaN(b.upper[i]) {
				continue
			}
			top = append(top, plotter.XY{X: f, Y: min(max(b.upper[i], lo), hi)})
			bottom = append(bottom, plotter.XY{X: f, Y: min(max(b.lower[i], lo), hi)})
		}
		if len(top) < 2 {
			continue
		}
		ring := make(plotter.XYs, 0, 2*len(top))
		ring = append(ring, top...)
		for i := len(bottom) - 1; i >= 0; i-- {
			ring = append(ring, bottom[i])
		}
		poly, err := plotter.NewPolygon(ring)
		if err != nil {
			continue
		}
		poly.Color = b.fill
		poly.LineStyle.Width = 0
		out = append(out, band{shape{poly}, b.name})
	}
	return out
}

// magnitudePlot returns the top panel of the Bode plot.
func magnitudePlot(d *synth.Design, sw sweep) *plot.Plot {
	p := newPlot()
	fLo, fHi := sw.f[0], sw.f[len(sw.f)-1]
	xt := freqTicks(fLo, fHi)
	p.X.Scale = plot.LogScale{}
	p.HideX()

	gainDB, amax, amin, stop := specLosses(d, sw)
	_, peak, ok := dataRange(sw.idealDB, sw.builtDB)
	if !ok {
		peak = math.NaN()
	}
	ax := newMagAxis(gainDB, amax, amin, stop, peak)
	yt := ax.ticks()
	if ax.split {
		p.Y.Scale = splitScale{pivot: ax.pivot, frac: 1 - zoomFrac}
	}
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Magnitude (dB)"

	p.Add(grid{x: xt, y: yt})
	addMask(p, maskRegions(d.Spec, gainDB, amax, amin, stop, fLo, fHi), ax.lo, ax.hi)
	if ax.split {
		p.Add(hline{y: ax.pivot, sty: guideStyle})
	}
	// Clamp just outside the axis so that a curve leaves it cleanly.
	cLo, cHi := ax.lo-0.05*(ax.hi-ax.lo), ax.hi+0.05*(ax.hi-ax.lo)
	bands := envelopeBands(d.MonteCarlo, cLo, cHi)
	for _, b := range bands {
		p.Add(b.shape)
	}
	drawn := addCurves(p, true,
		idealCurve(points(sw.f, sw.idealDB, cLo, cHi)),
		builtCurve(points(sw.f, sw.builtDB, cLo, cHi)))
	for _, b := range bands {
		p.Legend.Add(b.name, b.shape)
	}
	p.Add(frame{})
	setRanges(p, fLo, fHi, ax.lo, ax.hi)
	placeLegend(p, drawn...)
	return p
}

// phasePlot returns the bottom panel of the Bode plot.
func phasePlot(sw sweep) *plot.Plot {
	p := newPlot()
	fLo, fHi := sw.f[0], sw.f[len(sw.f)-1]
	xt := freqTicks(fLo, fHi)
	p.X.Scale = plot.LogScale{}
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
	addCurves(p, false,
		idealCurve(points(sw.f, sw.idealPh, math.Inf(-1), math.Inf(1))),
		builtCurve(points(sw.f, sw.builtPh, math.Inf(-1), math.Inf(1))))
	p.Add(frame{})
	setRanges(p, fLo, fHi, lo, hi)
	return p
}
