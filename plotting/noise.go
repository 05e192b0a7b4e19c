package plotting

import (
	"errors"
	"image/color"
	"io"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/synth"
)

// ErrNoNoise is returned by [Noise] for a design without a noise analysis
// (Design.Noise is nil: a design without circuits).
var ErrNoNoise = errors.New("plotting: the design has no noise analysis")

// noiseDecades is the most decades the noise axis spans below the curve's
// peak.
const noiseDecades = 6

// Legend names of the noise plot.
const (
	noiseName = "output noise"
	quantName = "LSB/\u221a12 over fs/2"
)

// The look of the noise plot's curves.
var (
	noiseStyle = draw.LineStyle{Color: idealStyle.Color, Width: vg.Points(1.4)}
	quantStyle = draw.LineStyle{
		Color:  color.NRGBA{R: 0xa8, G: 0x32, B: 0x3e, A: 0xff},
		Width:  vg.Points(1.1),
		Dashes: []vg.Length{vg.Points(6), vg.Points(3)},
	}
)

// Noise writes the output noise spectral density of d as built
// (Design.Noise.OutputVPerRtHz, in V/√Hz with an SI prefix) against
// frequency as SVG, both axes logarithmic. When the spec names a
// converter, a dashed line marks the density of its quantisation noise
// spread evenly over 0 to fs/2, LSB/√12/√(fs/2): a density below it adds
// less noise than the converter's own steps. The contributors' shares are
// not drawn (the result page lists them). It returns [ErrNilDesign] for a
// nil d, [ErrNoNoise] without a noise analysis, and otherwise only the
// error of writing to w.
func Noise(w io.Writer, d *synth.Design, opt Options) error {
	if d == nil {
		return ErrNilDesign
	}
	n := d.Noise
	if n == nil {
		return ErrNoNoise
	}
	// The points with a finite, positive frequency and density.
	var pts plotter.XYs
	for i, f := range n.FreqHz {
		if i < len(n.OutputVPerRtHz) && f > 0 && finite(f) && n.OutputVPerRtHz[i] > 0 && finite(n.OutputVPerRtHz[i]) {
			pts = append(pts, plotter.XY{X: f, Y: n.OutputVPerRtHz[i]})
		}
	}
	ref := math.NaN()
	if c := d.Spec.Converter; c != nil && n.QuantizationRMSV != nil && c.SampleRateHz > 0 {
		ref = *n.QuantizationRMSV / math.Sqrt(c.SampleRateHz/2)
	}

	fLo, fHi := 10.0, 1e4
	if len(pts) >= 2 && pts[0].X < pts[len(pts)-1].X {
		fLo, fHi = pts[0].X, pts[len(pts)-1].X
	} else if b := n.BandHz; b[0] > 0 && b[1] > b[0] && finite(b[1]) {
		fLo, fHi = b[0], b[1]
	}
	ys := make([]float64, 0, len(pts)+1)
	for _, p := range pts {
		ys = append(ys, p.Y)
	}
	if finite(ref) && ref > 0 {
		ys = append(ys, ref)
	}
	lo, hi, ok := dataRange(ys)
	if !ok || !(lo > 0) {
		lo, hi = 1e-9, 1e-8
	}
	lo = math.Max(lo, hi*math.Pow(10, -noiseDecades))
	// A factor 2 of room on either side, and at least one decade, so that
	// a decade's label never sits at the very top of the axis (it would
	// stand out and shift the legend).
	lo, hi = lo/2, hi*2
	if hi < 10*lo {
		c := math.Sqrt(lo * hi)
		lo, hi = c/math.Sqrt(10), c*math.Sqrt(10)
	}
	scale, prefix := siPrefix(hi / 2)
	lo, hi = lo/scale, hi/scale

	p := newPlot()
	xt := freqTicks(fLo, fHi)
	p.X.Scale = &logScale{}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Frequency (Hz)"
	yt := log10Axis(logTicks(lo, hi))
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Output noise (" + prefix + "V/\u221aHz)"

	p.Add(grid{x: xt, y: yt})
	scaledPts := make(plotter.XYs, 0, len(pts))
	for _, pt := range pts {
		scaledPts = append(scaledPts, plotter.XY{X: pt.X, Y: math.Min(math.Max(pt.Y/scale, lo/2), hi*2)})
	}
	curves := []curve{{line: &plotter.Line{XYs: log10Points(scaledPts), LineStyle: noiseStyle}, name: noiseName}}
	if finite(ref) && ref > 0 {
		r := math.Log10(ref / scale)
		curves = append(curves, curve{line: &plotter.Line{XYs: plotter.XYs{{X: fLo, Y: r}, {X: fHi, Y: r}}, LineStyle: quantStyle}, name: quantName})
	}
	var lg legend
	addCurves(p, &lg, curves...)
	p.Add(frame{})
	setRanges(p, fLo, fHi, math.Log10(lo), math.Log10(hi))
	width, height := opt.size(DefaultWidthPt, DefaultHeightPt)
	return render(w, width, height, lg, p)
}

// logTicks returns the ticks of a logarithmic axis over [lo, hi] as
// plain numbers (0.01, 0.1, 1, 10): [decadeTicks] with plainNumber labels.
func logTicks(lo, hi float64) []plot.Tick { return decadeTicks(lo, hi, plainNumber) }

// plainNumber writes v with up to three significant digits and no
// exponent: 0.01, 2.5, 1000.
func plainNumber(v float64) string {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 3, 64), 64)
	return strconv.FormatFloat(r, 'f', -1, 64)
}
