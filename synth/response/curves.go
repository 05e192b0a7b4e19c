package response

import (
	"math"

	"github.com/polewright/polewright/synth/zpk"
)

// MagnitudePhaseDelay returns [MagnitudeDB], [PhaseDeg] and [GroupDelayS]
// of h at each f in freqHz, computed together in one pass over the
// frequencies, in magDB, phaseDeg and delayS (each as dst in the package
// documentation). The three results are those of the three functions to
// within rounding, with the same conventions at jω-axis roots.
//
// A conjugate pair of poles or zeros σ ± jw left of the jω axis that
// stands next to each other in h (as a second-order section's roots do)
// is taken as one quadratic factor (jω)² − 2σ(jω) + σ² + w²: its argument
// lies in (0, π) for ω > 0, so the pair costs one complex product where
// the root-by-root sum costs two, and its two distances
// d± = σ² + (ω ∓ w)² serve the magnitude and the delay. Every other root
// is taken on its own, as by the three functions.
func MagnitudePhaseDelay(magDB, phaseDeg, delayS []float64, h zpk.ZPK, freqHz []float64) ([]float64, []float64, []float64) {
	n := len(freqHz)
	magDB, phaseDeg, delayS = resize(magDB, n), resize(phaseDeg, n), resize(delayS, n)
	var zbuf, pbuf [32]rootFactor
	zs := splitRoots(zbuf[:0], h.Zeros)
	ps := splitRoots(pbuf[:0], h.Poles)
	g := gainDB(h.Gain)
	neg := 0.0
	if h.Gain < 0 {
		neg = math.Pi
	}
	const deg = 180 / math.Pi
	i := 0
	// Four frequencies at a time: four independent chains of products.
	var l lanes
	for ; i+4 <= n; i += 4 {
		om := [4]float64{RadPerSec(freqHz[i]), RadPerSec(freqHz[i+1]), RadPerSec(freqHz[i+2]), RadPerSec(freqHz[i+3])}
		l.at(zs, &om)
		zm, zw, zd := l.m, l.w, l.delay
		l.at(ps, &om)
		for k := range 4 { // 10·log10(zm/pm) through logPos, as below
			magDB[i+k] = g + (10/math.Ln10)*(logPos(zm[k].m/l.m[k].m)+float64(zm[k].e-l.m[k].e)*math.Ln2)
			phaseDeg[i+k] = (zw[k].angle() - l.w[k].angle() + neg) * deg
			delayS[i+k] = l.delay[k] - zd[k]
		}
	}
	for ; i < n; i++ {
		f := freqHz[i]
		omega := RadPerSec(f)
		zm, zw, zd := factorsAt(zs, omega)
		pm, pw, pd := factorsAt(ps, omega)
		// 10·log10(zm/pm) through logPos (cheaper than math.Log10).
		magDB[i] = g + (10/math.Ln10)*(logPos(zm.m/pm.m)+float64(zm.e-pm.e)*math.Ln2)
		phaseDeg[i] = (zw.angle() - pw.angle() + neg) * deg
		delayS[i] = pd - zd
	}
	return magDB, phaseDeg, delayS
}

// rootFactor kinds.
const (
	factorSingle   = iota // one root off the jω axis
	factorAxis            // one root on the jω axis
	factorAxisPair        // a conjugate pair on the jω axis
	factorPair            // a conjugate pair left of the axis
)

// rootFactor is one root, or a conjugate pair σ ± jw (w > 0) left of the
// jω axis, of a transfer function.
type rootFactor struct {
	kind         int
	sigma, w, s2 float64 // s2 = σ²
}

// splitRoots appends the factors of roots to dst: adjacent conjugate
// pairs left of the jω axis and on it as pairs, every other root on its
// own.
func splitRoots(dst []rootFactor, roots []complex128) []rootFactor {
	for i := 0; i < len(roots); i++ {
		r := roots[i]
		sigma, w := real(r), imag(r)
		switch {
		case onAxis(sigma, w) && w != 0 && i+1 < len(roots) && roots[i+1] == complex(sigma, -w):
			dst = append(dst, rootFactor{kind: factorAxisPair, sigma: sigma, w: w, s2: sigma * sigma})
			i++
		case onAxis(sigma, w):
			dst = append(dst, rootFactor{kind: factorAxis, sigma: sigma, w: w, s2: sigma * sigma})
		case sigma < 0 && w != 0 && i+1 < len(roots) && roots[i+1] == complex(sigma, -w):
			dst = append(dst, rootFactor{kind: factorPair, sigma: sigma, w: math.Abs(w), s2: sigma * sigma})
			i++
		default:
			dst = append(dst, rootFactor{kind: factorSingle, sigma: sigma, w: w, s2: sigma * sigma})
		}
	}
	return dst
}

// factorsAt returns, at ω, the product of the squared distances |jω − r|²
// over the factors' roots, the product of the factors jω − r with its
// turns (see winding), and the sum of d/dω arg(jω − r) over the roots off
// the axis.
func factorsAt(fs []rootFactor, omega float64) (m scaled, w winding, delay float64) {
	m.m, w.re = 1, 1
	for k := range fs {
		f := &fs[k]
		switch f.kind {
		case factorPair:
			a, b := omega-f.w, omega+f.w
			dm, dp := f.s2+a*a, f.s2+b*b
			if d := dm * dp; d < 0x1p500 && d > 0x1p-500 {
				// The common case: one product and one division for both.
				m.mul(d)
				delay -= f.sigma * (dm + dp) / d
			} else {
				m.mul(dm)
				m.mul(dp)
				delay -= f.sigma/dm + f.sigma/dp
			}
			// (jω − σ − jw)(jω − σ + jw) = σ² + w² − ω² − 2jσω, whose
			// argument lies in (0, π): multiplied in as one factor, with
			// winding.mul's arithmetic written out (it does not inline).
			fr, fi := f.s2-a*b, -2*f.sigma*omega
			re := w.re*fr - w.im*fi
			im := w.re*fi + w.im*fr
			if fi >= 0 {
				if w.im >= 0 && (im < 0 || (im == 0 && re > 0 && w.re < 0)) {
					w.turns++
				}
			} else if w.im < 0 && im >= 0 {
				w.turns--
			}
			w.re, w.im = re, im
			if s := math.Abs(re) + math.Abs(im); s > 0x1p500 || s < 0x1p-500 {
				w.renorm()
			}
		case factorAxisPair:
			a, b := omega-f.w, omega+f.w
			dm, dp := f.s2+a*a, f.s2+b*b
			if d := dm * dp; d < 0x1p500 && d > 0x1p-500 {
				m.mul(d)
			} else {
				m.mul(dm)
				m.mul(dp)
			}
			for _, wr := range [2]float64{f.w, -f.w} {
				if omega > wr {
					w.halfPis++
				} else if omega < wr {
					w.halfPis--
				}
			}
		case factorAxis:
			d := omega - f.w
			m.mul(f.s2 + d*d)
			if omega > f.w {
				w.halfPis++
			} else if omega < f.w {
				w.halfPis--
			}
		default:
			d := omega - f.w
			dd := f.s2 + d*d
			m.mul(dd)
			delay -= f.sigma / dd
			w.factor(f.sigma, f.w, omega, false)
		}
	}
	return m, w, delay
}

// lanes holds the results of factorsAt at four frequencies.
type lanes struct {
	m     [4]scaled
	w     [4]winding
	delay [4]float64
}

// at sets l to factorsAt(fs, ω) for the four ω in om, the arithmetic of
// the pair factors written out across the four so that their chains of
// products overlap.
func (l *lanes) at(fs []rootFactor, om *[4]float64) {
	for k := range 4 {
		l.m[k] = scaled{m: 1}
		l.w[k] = winding{re: 1}
		l.delay[k] = 0
	}
	for i := range fs {
		f := &fs[i]
		switch f.kind {
		case factorPair:
			for k, omega := range om {
				a, b := omega-f.w, omega+f.w
				dm, dp := f.s2+a*a, f.s2+b*b
				m := &l.m[k]
				if d := dm * dp; d < 0x1p500 && d > 0x1p-500 {
					m.mul(d)
					l.delay[k] -= f.sigma * (dm + dp) / d
				} else {
					m.mul(dm)
					m.mul(dp)
					l.delay[k] -= f.sigma/dm + f.sigma/dp
				}
				w := &l.w[k]
				fr, fi := f.s2-a*b, -2*f.sigma*omega
				re := w.re*fr - w.im*fi
				im := w.re*fi + w.im*fr
				if fi >= 0 {
					if w.im >= 0 && (im < 0 || (im == 0 && re > 0 && w.re < 0)) {
						w.turns++
					}
				} else if w.im < 0 && im >= 0 {
					w.turns--
				}
				w.re, w.im = re, im
				if s := math.Abs(re) + math.Abs(im); s > 0x1p500 || s < 0x1p-500 {
					w.renorm()
				}
			}
		case factorAxisPair:
			for k, omega := range om {
				a, b := omega-f.w, omega+f.w
				dm, dp := f.s2+a*a, f.s2+b*b
				if d := dm * dp; d < 0x1p500 && d > 0x1p-500 {
					l.m[k].mul(d)
				} else {
					l.m[k].mul(dm)
					l.m[k].mul(dp)
				}
				h := 0
				if omega > f.w {
					h++
				} else if omega < f.w {
					h--
				}
				if omega > -f.w {
					h++
				} else if omega < -f.w {
					h--
				}
				l.w[k].halfPis += h
			}
		default:
			one := fs[i : i+1]
			for k, omega := range om {
				m, w, d := factorsAt(one, omega)
				l.m[k].mul(m.m)
				l.m[k].e += m.e
				l.w[k].mulWinding(w)
				l.delay[k] += d
			}
		}
	}
}

// mulWinding multiplies w by the product v, turns and half-π steps
// included.
func (w *winding) mulWinding(v winding) {
	w.mul(v.re, v.im)
	w.turns += v.turns
	w.halfPis += v.halfPis
}
