package plotting

import (
	"io"
	"math"

	"gonum.org/v1/plot"

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

func stepPlot(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
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
	var ts, yIdeal, yBuilt []float64
	final := math.NaN()
	if len(timing) > 0 {
		ts = step.TimeGrid(timing, stepPoints(d.Poles, step.Span(timing)))
	}
	if len(ideal) > 0 {
		yIdeal, _ = step.Response(ideal, ts) // nil on error: no curve
		final = step.DCGain(ideal)
	}
	if len(built) > 0 {
		yBuilt, _ = step.Response(built, ts)
	}

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
	drawn := addCurves(p, true,
		idealCurve(points(x, yIdeal, lo-span, hi+span)),
		builtCurve(points(x, yBuilt, lo-span, hi+span)))
	p.Add(frame{})
	setRanges(p, 0, end/scale, lo, hi)
	placeLegend(p, drawn...)
	width, height := opt.size(DefaultWidthPt, DefaultHeightPt)
	return render(w, width, height, p)
}
