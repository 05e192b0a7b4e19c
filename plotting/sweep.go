package plotting

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/zpk"
)

// fallbackPoints is the number of points of the grid used for a design
// without a response grid.
const fallbackPoints = 400

// axisSnap is the relative distance |Re z|/|z| within which a complex
// zero of the circuit as built is taken to lie on the jω axis for its
// phase and group delay (see cascadeZPK).
const axisSnap = 1e-3

// sweep is the frequency-domain data of a plot on one ascending grid of
// finite, positive frequencies. A curve is nil when it is not available;
// NaN marks a missing point.
type sweep struct {
	f                []float64
	idealDB, builtDB []float64
	idealPh, builtPh []float64
	idealGD, builtGD []float64
}

// sweepData remembers the sweeps of the last designs drawn by [Bode],
// [GroupDelay] and [Passband], with the design's own circuit: the three
// share the as-built phase and delay, computed once.
var sweepData = &designMemo[*sweep]{}

// designSweep returns the sweep of d with its circuit as built, from
// sweepData. Callers must not change it.
func designSweep(d *synth.Design) *sweep {
	return sweepData.get(d, func(d *synth.Design) *sweep { return newSweep(d, usable(asBuilt(d))) })
}

// newSweep collects the curves of d and, when tfs is not nil, of the
// circuit as built. The as-built phase is put on the ideal one's branch
// (see alignPhase).
func newSweep(d *synth.Design, tfs circuit.Cascade) *sweep {
	r := d.Response
	idx := make([]int, 0, len(r.FreqHz))
	for i, f := range r.FreqHz {
		if f > 0 && !math.IsInf(f, 1) {
			idx = append(idx, i)
		}
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(r.FreqHz[a], r.FreqHz[b]) })
	var sw sweep
	if len(idx) >= 2 && r.FreqHz[idx[0]] < r.FreqHz[idx[len(idx)-1]] {
		pick := func(v []float64) []float64 {
			if len(v) == 0 {
				return nil
			}
			out := make([]float64, len(idx))
			for k, i := range idx {
				out[k] = math.NaN()
				if i < len(v) {
					out[k] = v[i]
				}
			}
			return out
		}
		sw.f = pick(r.FreqHz)
		sw.idealDB, sw.idealPh, sw.idealGD = pick(r.IdealDB), pick(r.PhaseDeg), pick(r.GroupDelayS)
		sw.builtDB = pick(r.RealizedDB)
	} else {
		h := d.TransferFunction()
		sw.f = fallbackGrid(d.Spec, h)
		sw.idealDB = response.MagnitudeDB(nil, h, sw.f)
		sw.idealPh = response.PhaseDeg(nil, h, sw.f)
		sw.idealGD = response.GroupDelayS(nil, h, sw.f)
	}
	if tfs != nil {
		if sw.builtDB == nil {
			sw.builtDB = tfs.MagnitudeDB(nil, sw.f)
			builtLoad(d).ApplyDB(sw.builtDB, sw.f)
		}
		if h, ok := cascadeZPK(tfs); ok {
			sw.builtPh = response.PhaseDeg(nil, h, sw.f)
			sw.builtGD = response.GroupDelayS(nil, h, sw.f)
		} else {
			sw.builtPh = unwrapDeg(tfs.Response(nil, sw.f))
		}
		if sw.idealPh != nil {
			sw.builtPh = alignPhase(sw.builtPh, sw.idealPh, sw.f, notchesHz(d))
		}
	}
	return &sw
}

// notchRel is the half width, relative to its frequency, of the stretch
// round a notch of the ideal filter over which alignPhase keeps the
// as-built phase on its branch from before the notch.
const notchRel = 0.05

// notchesHz returns the frequencies of the ideal filter's zeros on the jω
// axis (w > 0), ascending.
func notchesHz(d *synth.Design) []float64 {
	var out []float64
	for _, z := range d.Zeros {
		if z[1] > 0 && math.Abs(z[0]) <= 1e-9*math.Hypot(z[0], z[1]) {
			out = append(out, z[1]/(2*math.Pi))
		}
	}
	slices.Sort(out)
	return out
}

// alignPhase returns the as-built phase built (degrees, equal to the
// circuit's phase modulo 360°) moved by whole turns onto the branch of the
// ideal phase ideal on the same grid fHz, so that the two are drawn alike:
//
//   - at the lowest frequency, the difference built − ideal is taken in
//     (−180°, 180°] (one anchor, one branch for both);
//   - from point to point it changes by less than 180° (it is unwrapped
//     along the grid, as the phase itself would be), so that a real
//     difference that grows (the op-amps' lag far above the passband) is
//     shown as it grows;
//   - within notchRel of an ideal notch (a zero on the jω axis, listed in
//     notchesHz), and on leaving that stretch, the difference is taken
//     within 180° of its value just before it. The ideal phase steps by
//     +180° at such a zero; the circuit's zero lies a little off the axis,
//     and when it lies to the right its phase turns by −180° instead, so
//     that the two curves would part by 360° per notch. The as-built
//     curve's turn at the notch therefore goes the same way as the ideal
//     one's.
//
// Points where either phase is not finite are left as they are and do not
// move the reference.
func alignPhase(built, ideal, fHz, notches []float64) []float64 {
	out := make([]float64, len(built))
	prev, before := math.NaN(), 0.0 // the last difference; the one before the current notch
	inNotch := false
	for i, b := range built {
		out[i] = b
		if i >= len(ideal) || i >= len(fHz) || !finite(b) || !finite(ideal[i]) {
			continue
		}
		near := false
		for _, n := range notches {
			if math.Abs(fHz[i]/n-1) < notchRel {
				near = true
				break
			}
		}
		ref := prev
		switch {
		case math.IsNaN(prev):
			ref = 0
		case near && !inNotch:
			before = prev
			ref = before
		case near || inNotch:
			ref = before
		}
		inNotch = near
		diff := b - ideal[i]
		diff -= 360 * math.Round((diff-ref)/360)
		out[i] = ideal[i] + diff
		prev = diff
	}
	return out
}

// fallbackGrid returns log-spaced frequencies a decade beyond the spec's
// band edges, or else beyond the poles and zeros of h, or else 1 Hz–10 kHz.
func fallbackGrid(s synth.Spec, h zpk.ZPK) []float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	add := func(f float64) {
		if f > 0 && !math.IsInf(f, 1) {
			lo, hi = math.Min(lo, f), math.Max(hi, f)
		}
	}
	for _, f := range append(slices.Clone(s.PassbandHz), s.StopbandHz...) {
		add(f)
	}
	if lo > hi {
		for _, r := range append(slices.Clone(h.Poles), h.Zeros...) {
			add(cmplx.Abs(r) / (2 * math.Pi))
		}
	}
	if lo > hi {
		lo, hi = 10, 1000
	}
	lo, hi = math.Max(lo/10, 1e-6), math.Min(hi*10, 1e12)
	if !(lo < hi) {
		lo = hi / 100
	}
	return response.LogSpaceHz(nil, lo, hi, fallbackPoints)
}

// cascadeZPK returns the poles and zeros of every stage of tfs, in rad/s,
// with the sign of the overall gain (its size does not matter for phase or
// delay), and false if a stage's roots cannot all be found.
//
// A notch's zeros, on the jω axis in the ideal filter, leave it by a
// fraction of a per cent in a circuit with finite op-amp gain, and just as
// likely into the right half plane. Their phase then turns by −180° across
// the notch in a band as narrow as that offset, where the ideal one steps
// by +180°, and the curves would differ by 360° per zero pair from the
// notch on, and the group delay would spike to 1/|Re z|. Zeros within
// axisSnap of the axis are therefore put on it, as the ideal ones are: the
// phase then differs from the exact one by a multiple of 360° except
// within a few |Re z| of the notch, deep in the stopband.
func cascadeZPK(tfs circuit.Cascade) (zpk.ZPK, bool) {
	h := zpk.ZPK{Gain: 1}
	for _, r := range tfs {
		dn, dd := degree(r.Num), degree(r.Den)
		if dn < 0 || dd < 0 {
			return h, false
		}
		z, p := r.Zeros(), r.Poles()
		if len(z) != dn || len(p) != dd {
			return h, false
		}
		for _, v := range append(slices.Clone(z), p...) {
			if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || cmplx.IsInf(v) {
				return h, false
			}
		}
		for i, v := range z {
			if imag(v) != 0 && math.Abs(real(v)) <= axisSnap*cmplx.Abs(v) {
				z[i] = complex(0, imag(v))
			}
		}
		h.Zeros = append(h.Zeros, z...)
		h.Poles = append(h.Poles, p...)
		// H = (Num[dn]/Den[dd])·scale^(dd−dn)·∏(s−z)/∏(s−p), scale > 0.
		if r.Num[dn]/r.Den[dd] < 0 {
			h.Gain = -h.Gain
		}
	}
	return h, true
}

// degree returns the degree of c ignoring trailing zeros (−1 for none).
func degree(c []float64) int {
	n := len(c) - 1
	for n >= 0 && c[n] == 0 {
		n--
	}
	return n
}

// unwrapDeg returns the phase of h in degrees, unwrapped along the grid
// (each point within 180° of the previous one).
func unwrapDeg(h []complex128) []float64 {
	out := make([]float64, len(h))
	prev := math.NaN()
	for i, v := range h {
		ph := cmplx.Phase(v) * 180 / math.Pi
		if !math.IsNaN(prev) && finite(ph) {
			ph -= 360 * math.Round((ph-prev)/360)
		}
		out[i] = ph
		if finite(ph) {
			prev = ph
		}
	}
	return out
}
