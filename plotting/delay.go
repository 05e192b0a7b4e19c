package plotting

import (
	"io"
	"math"

	"gonum.org/v1/plot"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

func groupDelay(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
	return drawGroupDelay(w, newSweep(d, usable(tfs)), opt)
}

// drawGroupDelay writes the group delay plot of the sweep sw, which it does
// not change.
func drawGroupDelay(w io.Writer, sw *sweep, opt Options) error {
	p := newPlot()
	fLo, fHi := sw.f[0], sw.f[len(sw.f)-1]
	xt := freqTicks(fLo, fHi)
	p.X.Scale = &logScale{}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Frequency (Hz)"

	lo, hi := extendRange(sw.idealGD, sw.builtGD, 1e-3)
	lo = math.Min(lo, 0)
	scale, prefix := siPrefix(math.Max(math.Abs(lo), math.Abs(hi)))
	lo, hi = lo/scale, hi/scale
	lo, hi = padPositive(lo, hi)
	yt := linTicks(lo, hi, niceStep(hi-lo, 6))
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Group delay (" + prefix + "s)"

	span := hi - lo
	p.Add(grid{x: xt, y: yt})
	var lg legend
	addCurves(p, &lg,
		idealCurve(&series{xs: sw.f, ys: sw.idealGD, yk: 1 / scale, lo: lo - span, hi: hi + span}),
		builtCurve(&series{xs: sw.f, ys: sw.builtGD, yk: 1 / scale, lo: lo - span, hi: hi + span}))
	p.Add(frame{})
	setRanges(p, fLo, fHi, lo, hi)
	width, height := opt.size(DefaultWidthPt, DefaultHeightPt)
	return render(w, width, height, lg, p)
}

// extendRange returns the range of the finite values of ideal, widened to
// take in those of built by at most half the ideal range's span on either
// side
// (so that a spike of the as-built curve, near a zero just off the jω axis,
// or a diverging as-built response does not flatten the ideal one). def is
// the span used when ideal has no finite value.
func extendRange(ideal, built []float64, def float64) (float64, float64) {
	lo, hi, ok := dataRange(ideal)
	bLo, bHi, bOK := dataRange(built)
	switch {
	case !ok && bOK:
		return bLo, bHi
	case !ok:
		return 0, def
	}
	if bOK {
		span := math.Max(hi-lo, 1e-12*math.Max(math.Abs(lo), math.Abs(hi)))
		hi = math.Max(hi, math.Min(bHi, hi+span/2))
		lo = math.Min(lo, math.Max(bLo, lo-span/2))
	}
	return lo, hi
}

// padPositive pads [lo, hi] by 6 %, but keeps a lower bound of 0 at 0, and
// gives an empty range a span.
func padPositive(lo, hi float64) (float64, float64) {
	minSpan := 0.1 * math.Max(math.Abs(lo), math.Abs(hi))
	if minSpan == 0 {
		minSpan = 1
	}
	l, h := padRange(lo, hi, 0.06, minSpan)
	if lo == 0 && l < 0 {
		l = 0
	}
	return l, h
}

// scaled returns v·k, or nil for nil v.
func scaled(v []float64, k float64) []float64 {
	if v == nil {
		return nil
	}
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = x * k
	}
	return out
}
