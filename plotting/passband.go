package plotting

import (
	"io"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg/draw"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/response"
)

// The passband plot's frequency range: an open passband (a lowpass's from
// 0 Hz, a highpass's up to infinity) is shown over passbandDecades decades
// from its edge; every edge is shown with edgeRoomFactor of room beyond
// it, so that the response's turn at the edge is seen.
const (
	passbandDecades = 1
	edgeRoomFactor  = 1.25
	// passbandPoints is the number of log-spaced frequencies the ideal
	// and as-built curves are computed at over the view, besides the
	// design's own grid points there.
	passbandPoints = 240
)

// tolLowName is the legend name of the line at gain − gain_tolerance_db.
const tolLowName = "gain − tolerance: the least passband maximum"

// Passband writes the magnitude of d over its passband as SVG: the ideal
// and as-built curves, the Monte Carlo envelope when the design has one,
// and the mask's passband limits, on a dB axis zoomed to the ripple. The
// frequency axis is logarithmic: a lowpass from a decade below its edge, a
// highpass to a decade above it, a bandpass over its band, a bandstop from
// a decade below its lower pass edge to a decade above its upper one; each
// edge with a quarter of its frequency of room beyond it (a bandpass
// narrower than 4.4:1 with 15 % of its width, on the logarithmic axis). Shaded is what
// the mask forbids there: a loss of more than passband_ripple_db below the
// gain over the passband and, with gain_tolerance_db, anything above
// gain + tolerance; a dashed line marks gain − tolerance, which the
// passband maximum must reach (rule 3 of the acceptance rule). Errors as
// for [Bode].
func Passband(w io.Writer, d *synth.Design, opt Options) error {
	if d == nil {
		return ErrNilDesign
	}
	return drawPassband(w, d, designSweep(d), usable(asBuilt(d)), opt)
}

func passband(w io.Writer, d *synth.Design, tfs circuit.Cascade, opt Options) error {
	tfs = usable(tfs)
	return drawPassband(w, d, newSweep(d, tfs), tfs, opt)
}

// passbandView returns the frequency range of the passband plot of s and
// the passband's own intervals in it, or ok = false when the spec's edges
// are not usable.
func passbandView(s synth.Spec) (lo, hi float64, bands [][2]float64, ok bool) {
	p := s.PassbandHz
	n := 1
	if s.Response.IsBand() {
		n = 2
	}
	if len(p) != n {
		return 0, 0, nil, false
	}
	for i, f := range p {
		if !(f > 0) || math.IsInf(f, 1) || (i > 0 && !(f > p[i-1])) {
			return 0, 0, nil, false
		}
	}
	dec := math.Pow(10, passbandDecades)
	switch s.Response {
	case synth.Highpass:
		lo, hi = p[0]/edgeRoomFactor, p[0]*dec
		bands = [][2]float64{{p[0], hi}}
	case synth.Bandpass:
		// A narrow band gets room in proportion to its width.
		room := min(edgeRoomFactor, math.Pow(p[1]/p[0], 0.15))
		lo, hi = p[0]/room, p[1]*room
		bands = [][2]float64{{p[0], p[1]}}
	case synth.Bandstop:
		lo, hi = p[0]/dec, p[1]*dec
		bands = [][2]float64{{lo, p[0]}, {p[1], hi}}
	default:
		lo, hi = p[0]/dec, p[0]*edgeRoomFactor
		bands = [][2]float64{{lo, p[0]}}
	}
	return lo, hi, bands, true
}

// inBands reports whether f lies in one of bands.
func inBands(f float64, bands [][2]float64) bool {
	for _, b := range bands {
		if f >= b[0] && f <= b[1] {
			return true
		}
	}
	return false
}

// passbandCurves returns the frequencies of the passband plot over
// [lo, hi] and the ideal and as-built magnitudes there: computed from the
// design's poles and zeros and from tfs on passbandPoints log-spaced
// frequencies and the sweep's own points in the range, or, for a design
// without poles, the sweep's points alone.
func passbandCurves(d *synth.Design, sw *sweep, tfs circuit.Cascade, lo, hi float64) (f, ideal, built []float64) {
	h := d.TransferFunction()
	if len(h.Poles) == 0 || !finite(h.Gain) || h.Gain == 0 {
		for i, x := range sw.f {
			if x >= lo && x <= hi {
				f = append(f, x)
				ideal = append(ideal, at(sw.idealDB, i))
				if sw.builtDB != nil {
					built = append(built, at(sw.builtDB, i))
				}
			}
		}
		return f, ideal, built
	}
	f = response.LogSpaceHz(make([]float64, 0, passbandPoints+len(sw.f)), lo, hi, passbandPoints)
	for _, x := range sw.f {
		if x > lo && x < hi {
			f = append(f, x)
		}
	}
	slices.Sort(f)
	f = slices.Compact(f)
	ideal = response.MagnitudeDB(nil, h, f)
	switch {
	case tfs != nil:
		built = tfs.MagnitudeDB(nil, f)
		builtLoad(d).ApplyDB(built, f)
	case sw.builtDB != nil:
		// No circuit to evaluate, only its curve on the sweep's grid.
		var bf, bv []float64
		for i, x := range sw.f {
			if x >= lo && x <= hi {
				bf, bv = append(bf, x), append(bv, at(sw.builtDB, i))
			}
		}
		return f, ideal, resample(bf, bv, f)
	}
	return f, ideal, built
}

// at returns v[i], or NaN beyond v.
func at(v []float64, i int) float64 {
	if i < len(v) {
		return v[i]
	}
	return math.NaN()
}

// resample returns the values v at fs interpolated onto f (linear in
// log f), NaN outside fs.
func resample(fs, v, f []float64) []float64 {
	out := make([]float64, len(f))
	for i, x := range f {
		out[i] = math.NaN()
		j, found := slices.BinarySearch(fs, x)
		switch {
		case found:
			out[i] = v[j]
		case j > 0 && j < len(fs):
			t := math.Log(x/fs[j-1]) / math.Log(fs[j]/fs[j-1])
			out[i] = v[j-1] + t*(v[j]-v[j-1])
		}
	}
	return out
}

// drawPassband writes the passband plot of d from its sweep sw and its
// stages as built tfs (nil: none), which it does not change.
func drawPassband(w io.Writer, d *synth.Design, sw *sweep, tfs circuit.Cascade, opt Options) error {
	gainDB, amax, _, _ := specLosses(d, sw)
	lo, hi, bands, ok := passbandView(d.Spec)
	if !ok {
		lo, hi = sw.f[0], sw.f[len(sw.f)-1]
		bands = [][2]float64{{lo, hi}}
	}
	f, ideal, built := passbandCurves(d, sw, tfs, lo, hi)

	// The axis: the limits and the curves over the passband itself, with
	// room round them.
	tol := math.NaN()
	if t := d.Spec.GainToleranceDB; t != nil && *t > 0 && finite(*t) {
		tol = *t
	}
	ys := []float64{gainDB, gainDB - amax}
	if finite(tol) {
		ys = append(ys, gainDB+tol, gainDB-tol)
	}
	for i, x := range f {
		if inBands(x, bands) {
			ys = append(ys, at(ideal, i), at(built, i))
		}
	}
	yLo, yHi, _ := dataRange(ys)
	// At most 40 dB above the gain and 3·Amax + 10 dB below it: a
	// diverging circuit does not flatten the ripple.
	yHi = min(yHi, gainDB+maxPeakAboveDB)
	yLo = max(yLo, gainDB-3*amax-10)
	yLo, yHi = padRange(yLo, yHi, 0.12, 0.2)

	p := newPlot()
	xt := zoomFreqTicks(lo, hi)
	p.X.Scale = &logScale{}
	p.X.Tick.Marker = plot.ConstantTicks(xt)
	p.X.Label.Text = "Frequency (Hz)"
	yt := linTicks(yLo, yHi, niceStep(yHi-yLo, 6))
	p.Y.Tick.Marker = plot.ConstantTicks(yt)
	p.Y.Label.Text = "Magnitude (dB), passband"
	p.Add(grid{x: xt, y: yt})

	span := yHi - yLo
	cLo, cHi := yLo-span, yHi+span
	var lg legend
	envelope := envelopeBands(d.MonteCarlo, cLo, cHi)
	for _, b := range envelope {
		p.Add(b.shape)
	}
	var regions []region
	for _, b := range bands {
		regions = append(regions, region{x0: b[0], x1: b[1], limit: gainDB - amax, below: true})
		if finite(tol) {
			regions = append(regions, region{x0: b[0], x1: b[1], limit: gainDB + tol})
		}
	}
	// An open band's far end reaches past the view, as on the Bode plot.
	for i := range regions {
		if regions[i].x0 <= lo {
			regions[i].x0 = lo / 4
		}
		if regions[i].x1 >= hi {
			regions[i].x1 = hi * 4
		}
	}
	var mask legend
	addMask(p, &mask, regions, yLo, yHi)
	if finite(tol) {
		for _, b := range bands {
			p.Add(limitLine{x0: b[0], x1: b[1], y: gainDB - tol, sty: guideStyle})
		}
	}
	addCurves(p, &lg,
		idealCurve(&series{xs: f, ys: ideal, lo: cLo, hi: cHi}),
		builtCurve(&series{xs: f, ys: built, lo: cLo, hi: cHi}))
	for _, b := range envelope {
		lg.add(b.name, b.shape)
	}
	lg = append(lg, mask...)
	if finite(tol) {
		lg.add(tolLowName, limitLine{sty: guideStyle})
	}
	p.Add(frame{})
	setRanges(p, lo, hi, yLo, yHi)
	width, height := opt.size(DefaultWidthPt, DefaultHeightPt)
	return render(w, width, height, lg, p)
}

// limitLine is a horizontal line at y over [x0, x1] in data coordinates,
// clipped to the data area.
type limitLine struct {
	x0, x1, y float64
	sty       draw.LineStyle
}

// Plot implements plot.Plotter.
func (l limitLine) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	y := trY(l.y)
	if y < c.Min.Y || y > c.Max.Y {
		return
	}
	x0, x1 := max(trX(l.x0), c.Min.X), min(trX(l.x1), c.Max.X)
	if x1 > x0 {
		c.StrokeLine2(l.sty, x0, y, x1, y)
	}
}

// Thumbnail implements plot.Thumbnailer.
func (l limitLine) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(l.sty, c.Min.X, y, c.Max.X, y)
}
