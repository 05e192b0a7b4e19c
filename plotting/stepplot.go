package plotting

import (
	"image/color"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// The number of times of the step response: at least minStepPoints, and
// stepPointsPerCycle per period of the fastest ringing pole pair of the
// ideal filter, up to maxStepPoints.
const (
	minStepPoints      = 500
	maxStepPoints      = 1500
	stepPointsPerCycle = 16
)

// stepPoints returns the number of times for a response over [0, span]
// of a filter with the given poles.
func stepPoints(poles [][2]float64, span float64) int {
	fMax := 0.0
	for _, p := range poles {
		fMax = math.Max(fMax, math.Abs(p[1])/(2*math.Pi))
	}
	n := span * fMax * stepPointsPerCycle
	if !(n > minStepPoints) {
		return minStepPoints
	}
	return int(math.Min(math.Ceil(n), maxStepPoints))
}

// stepSeries is what the step plot draws of a design: the stages of the
// ideal filter and of the circuit as built, the times, both responses and
// the final value, and the settling figures (nil without). [Step]
// remembers it per design (stepData): the responses were an eighth of the
// time to draw a result page.
type stepSeries struct {
	ideal, built       []step.Stage
	ts, yIdeal, yBuilt []float64
	final              float64
	st                 *settling
}

// stepData remembers the step series of the last designs drawn by [Step].
var stepData = &designMemo[*stepSeries]{}

func stepPlot(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
	return drawStep(w, newStepSeries(d, tfs), opt)
}

// newStepSeries computes the step series of d, with tfs as built.
func newStepSeries(d *synth.Design, tfs circuit.Cascade) *stepSeries {
	var ideal, built []step.Stage
	for _, s := range d.Cascade() {
		ideal = append(ideal, step.FromSection(s))
	}
	for _, r := range usable(tfs) {
		built = append(built, step.FromRational(r))
	}
	timing := ideal
	if len(timing) == 0 {
		timing = built
	}
	st := settlingOf(d)
	var ts, yIdeal, yBuilt []float64
	final := math.NaN()
	if len(timing) > 0 {
		if st != nil {
			ts = settlingTimes(timing, d.Poles, st)
		} else {
			ts = step.TimeGrid(timing, stepPoints(d.Poles, step.Span(timing)))
		}
	}
	if len(ideal) > 0 {
		yIdeal, _ = step.Response(ideal, ts) // nil on error: no curve
		final = step.DCGain(ideal)
	}
	if len(built) > 0 {
		yBuilt, _ = step.Response(built, ts)
	}
	return &stepSeries{ideal: ideal, built: built, ts: ts, yIdeal: yIdeal, yBuilt: yBuilt, final: final, st: st}
}

// drawStep writes the step plot of the series s, which it does not
// change.
func drawStep(w io.Writer, s *stepSeries, opt Options) error {
	ideal, built, st := s.ideal, s.built, s.st
	ts, yIdeal, yBuilt, final := s.ts, s.yIdeal, s.yBuilt, s.final
	p := newPlot()
	end := 1e-3
	if len(ts) > 0 && ts[len(ts)-1] > 0 {
		end = ts[len(ts)-1]
	}
	scale, prefix := siPrefix(end)
	xt := linTicks(0, end/scale, niceStep(end/scale, 8))
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Time (" + prefix + "s)"

	withFinal := append([]float64{0}, yIdeal...)
	if finite(final) {
		withFinal = append(withFinal, final)
	}
	lo, hi := extendRange(withFinal, yBuilt, 1)
	lo, hi = padRange(lo, hi, 0.06, 1e-9*math.Max(1, math.Max(math.Abs(lo), math.Abs(hi))))
	yt := linTicks(lo, hi, niceStep(hi-lo, 6))
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Step response (V/V)"

	span := hi - lo
	x := scaled(ts, 1/scale)
	p.Add(grid{x: xt, y: yt})
	if finite(final) {
		p.Add(hline{y: final, sty: guideStyle})
	}
	var lg legend
	addCurves(p, &lg,
		idealCurve(&series{xs: ts, xk: 1 / scale, ys: yIdeal, lo: lo - span, hi: hi + span}),
		builtCurve(&series{xs: ts, xk: 1 / scale, ys: yBuilt, lo: lo - span, hi: hi + span}))
	var errPlot *plot.Plot
	if st != nil {
		// Each response's distance from its own final value, relative to
		// its reference, as synth measures the settling.
		eIdeal, eBuilt := settlingError(yIdeal, ideal), settlingError(yBuilt, built)
		ys, stages := yBuilt, built
		if eBuilt == nil {
			ys, stages = yIdeal, ideal
		}
		if fin, ref, ok := finalAndRef(ys, stages); ok && (eIdeal != nil || eBuilt != nil) {
			band := st.frac * ref
			errSt := st // the error plot's threshold, relative to ref
			if st.bandAbs > 0 && ref > 0 {
				// synth's own band: ±½ LSB of full scale, or ±0.1 % of the
				// peak; the legend keeps naming it as synth does.
				band = st.bandAbs
				rel := *st
				rel.frac = band / ref
				errSt = &rel
			}
			if finite(st.at) {
				p.Add(bandRect{x0: st.at / scale, x1: end / scale, y0: fin - band, y1: fin + band})
				m := vline{x: st.at / scale, sty: settleStyle}
				p.Add(m)
				lg.add(st.markerName(), m)
			}
			p.HideX()
			p.X.Label.Text = ""
			errPlot = settlingErrorPlot(errSt, x, eIdeal, eBuilt, end/scale, xt, prefix, scale)
		}
	}
	p.Add(frame{})
	setRanges(p, 0, end/scale, lo, hi)
	if errPlot == nil {
		width, height := opt.size(DefaultWidthPt, DefaultHeightPt)
		return render(w, width, height, lg, p)
	}
	width, height := opt.size(DefaultWidthPt, DefaultStepSettlingHeightPt)
	return render(w, width, height, lg, p, errPlot)
}

// DefaultStepSettlingHeightPt is the height of [Step] with its settling
// panel (a design with Design.Step).
const DefaultStepSettlingHeightPt = 480

// settling is what the step plot marks of Design.Step: the band as a
// fraction of the final value, the as-built settling time (NaN when
// undefined) and whether the band is ±½ LSB of a converter.
type settling struct {
	frac, at, idealAt float64
	lsb               bool
	// bandAbs is synth's settling band half-width (Step.SettlingBand), 0
	// when the design carries none; the plot then uses frac of its
	// reference.
	bandAbs float64
}

// settlingOf returns the settling figures of d, or nil when d has none
// or they are unusable.
func settlingOf(d *synth.Design) *settling {
	st := d.Step
	if st == nil || !(st.SettlingFrac > 0 && st.SettlingFrac < 1) {
		return nil
	}
	out := &settling{frac: st.SettlingFrac, at: math.NaN(), idealAt: math.NaN(), lsb: d.Spec.Converter != nil}
	if finite(st.SettlingBand) && st.SettlingBand > 0 {
		out.bandAbs = st.SettlingBand
	}
	if st.SettlingS != nil && finite(*st.SettlingS) && *st.SettlingS >= 0 {
		out.at = *st.SettlingS
	}
	if st.IdealSettlingS != nil && finite(*st.IdealSettlingS) && *st.IdealSettlingS >= 0 {
		out.idealAt = *st.IdealSettlingS
	}
	return out
}

// bandName names the settling band: "±½ LSB" or "±0.1 %".
func (s *settling) bandName() string {
	if s.lsb {
		return "±½ LSB"
	}
	return "±" + strconv.FormatFloat(100*s.frac, 'g', 3, 64) + " %"
}

// markerName is the legend name of the settling time's marker.
func (s *settling) markerName() string {
	return "settled to " + s.bandName() + ": " + formatSeconds(s.at)
}

// formatSeconds writes a time with an SI prefix: "828 µs".
func formatSeconds(t float64) string {
	scale, prefix := siPrefix(t)
	if t == 0 {
		scale, prefix = 1, ""
	}
	return strconv.FormatFloat(t/scale, 'g', 3, 64) + " " + prefix + "s"
}

// settlingTimes returns the times of a step plot that shows the settling
// of st: [step.SettlingGrid]'s span, widened to take in both settling
// times with a margin, at the plot's usual density.
func settlingTimes(timing []step.Stage, poles [][2]float64, st *settling) []float64 {
	end := step.SettlingGrid(timing, 2, st.frac)[1]
	for _, t := range []float64{st.at, st.idealAt} {
		if finite(t) && t*settleMargin > end {
			end = t * settleMargin
		}
	}
	n := stepPoints(poles, end)
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = end * float64(i) / float64(n-1)
	}
	return ts
}

// settleMargin is how far the time axis reaches past the later settling
// time.
const settleMargin = 1.15

// The look of the settling marks.
var (
	settleColor = color.NRGBA{R: 0x2e, G: 0x7d, B: 0x32, A: 0xff}
	settleStyle = draw.LineStyle{Color: settleColor, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(2)}}
	settleFill  = color.NRGBA{R: 0x2e, G: 0x7d, B: 0x32, A: 0x28}
)

// finalAndRef returns the final value of a step response ys of stages,
// their DC gain, and the reference of its settling band: |final|, or the
// largest |y| when that is 0 (a highpass or bandpass), as [step.Analyze]
// takes it.
func finalAndRef(ys []float64, stages []step.Stage) (final, ref float64, ok bool) {
	if ys == nil || len(stages) == 0 {
		return 0, 0, false
	}
	final = step.DCGain(stages)
	ref = math.Abs(final)
	if !(ref > 0) {
		for _, v := range ys {
			if finite(v) {
				ref = math.Max(ref, math.Abs(v))
			}
		}
	}
	return final, ref, finite(final) && ref > 0 && finite(ref)
}

// settlingError returns |y − final|/ref of the step response ys of
// stages (see finalAndRef), or nil.
func settlingError(ys []float64, stages []step.Stage) []float64 {
	final, ref, ok := finalAndRef(ys, stages)
	if !ok {
		return nil
	}
	out := make([]float64, len(ys))
	for i, y := range ys {
		out[i] = math.Abs(y-final) / ref
	}
	return out
}

// settlingErrorPlot returns the lower panel of the step plot: each
// response's distance from its final value, as a fraction of its
// reference, on a logarithmic axis, with the settling band shaded and the
// settling time marked. x is in the time unit of the top panel.
func settlingErrorPlot(st *settling, x, eIdeal, eBuilt []float64, end float64, xt []plot.Tick, prefix string, scale float64) *plot.Plot {
	p := newPlot()
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Time (" + prefix + "s)"
	_, peak, ok := dataRange(eIdeal, eBuilt)
	if !ok || !(peak > 0) {
		peak = 1
	}
	// Half a decade of room above the top decade, for the curves' start.
	hi := 3 * math.Pow(10, math.Ceil(math.Log10(math.Min(math.Max(peak, 10*st.frac), 10))))
	lo := math.Pow(10, math.Floor(math.Log10(st.frac))-2)
	yt := log10Axis(errorTicks(lo, hi))
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Distance from final (shaded: " + st.bandName() + ")"

	p.Add(grid{x: xt, y: yt})
	p.Add(bandRect{x0: 0, x1: end, y0: math.Log10(lo) - 1, y1: math.Log10(st.frac)})
	p.Add(hline{y: math.Log10(st.frac), sty: settleStyle})
	// Below the axis floor a curve is clamped just under it, so that it
	// leaves the panel cleanly (the axis is logarithmic: no zeros).
	floor, ceil := lo/2, hi*2
	addCurves(p, nil,
		idealCurve(&series{xs: x, ys: eIdeal, lo: floor, hi: ceil, log10: true}),
		builtCurve(&series{xs: x, ys: eBuilt, lo: floor, hi: ceil, log10: true}))
	if finite(st.at) {
		m := vline{x: st.at / scale, sty: settleStyle}
		p.Add(m)
	}
	p.Add(frame{})
	setRanges(p, 0, end, math.Log10(lo), math.Log10(hi))
	return p
}

// errorTicks returns decade ticks over [lo, hi] labelled as percentages
// down to 0.1 % and in ppm below, every other decade labelled when there
// are more than six; the 2…9 multiples are minor ticks.
func errorTicks(lo, hi float64) []plot.Tick {
	d0, d1 := int(math.Ceil(math.Log10(lo)-1e-9)), int(math.Floor(math.Log10(hi)+1e-9))
	every, minor := 1, d1-d0 <= 4
	if d1-d0 > 6 {
		every = 2
	}
	var ticks []plot.Tick
	for d := d0; d <= d1; d++ {
		v := math.Pow(10, float64(d))
		t := plot.Tick{Value: v}
		if (d1-d)%every == 0 {
			t.Label = errorLabel(v)
		}
		ticks = append(ticks, t)
		for m := 2; minor && m <= 9 && float64(m)*v <= hi; m++ {
			ticks = append(ticks, plot.Tick{Value: float64(m) * v})
		}
	}
	return ticks
}

// errorLabel writes a fraction as "10 %", "0.1 %", "100 ppm" or
// "0.01 ppm".
func errorLabel(v float64) string {
	if v >= 1e-3*(1-1e-9) {
		return strconv.FormatFloat(100*v, 'g', 3, 64) + " %"
	}
	return strconv.FormatFloat(1e6*v, 'g', 3, 64) + " ppm"
}

// vline is a vertical line across the data area at x; its legend
// thumbnail is a short vertical stroke.
type vline struct {
	x   float64
	sty draw.LineStyle
}

// Plot implements plot.Plotter.
func (v vline) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, _ := plt.Transforms(&c)
	if x := trX(v.x); x >= c.Min.X && x <= c.Max.X {
		c.StrokeLine2(v.sty, x, c.Min.Y, x, c.Max.Y)
	}
}

// Thumbnail implements plot.Thumbnailer.
func (v vline) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(v.sty, x, c.Min.Y, x, c.Max.Y)
}

// bandRect is a shaded rectangle in data coordinates, clipped to the data
// area: the settling band.
type bandRect struct{ x0, x1, y0, y1 float64 }

// Plot implements plot.Plotter.
func (b bandRect) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	x0, x1 := max(trX(b.x0), c.Min.X), min(trX(b.x1), c.Max.X)
	y0, y1 := max(trY(b.y0), c.Min.Y), min(trY(b.y1), c.Max.Y)
	if !(x1 > x0) || !(y1 >= y0) {
		return
	}
	if y1-y0 < 0.5 {
		// A band thinner than half a point is still shown as a hairline.
		mid := (y0 + y1) / 2
		y0, y1 = mid-0.25, mid+0.25
	}
	c.FillPolygon(settleFill, []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
}
