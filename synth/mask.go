package synth

import (
	"math"
	"slices"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
)

// maskPoints is the number of log-spaced points per band region on which
// the mask is checked before each local extremum is refined.
const maskPoints = 120

// maskDecades is how far beyond its edge an open band (the passband of a
// lowpass, say) is checked, in decades.
const maskDecades = 4

// checkMask fills d.Mask's margins and d.MeetsMask from the ideal response.
func (d *Design) checkMask() {
	s := d.Spec
	p, st := s.PassbandHz, s.StopbandHz
	ref := d.Gain * d.Gain
	secs := make([]section.Section, len(d.Sections))
	for i := range d.Sections {
		secs[i] = d.Sections[i].sec
	}
	// The searches below work on the power loss ratio G²/|H|² in linear
	// terms: they need no logarithms, only their results are turned into
	// dB.
	wide := math.Pow(10, maskDecades)
	var pass, stop [][2]float64
	switch s.Response {
	case Lowpass:
		pass = [][2]float64{{p[0] / wide, p[0]}}
		if s.HasStopband() {
			stop = [][2]float64{{st[0], st[0] * wide}}
		}
	case Highpass:
		pass = [][2]float64{{p[0], p[0] * wide}}
		if s.HasStopband() {
			stop = [][2]float64{{st[0] / wide, st[0]}}
		}
	case Bandpass:
		pass = [][2]float64{{p[0], p[1]}}
		if s.HasStopband() {
			stop = [][2]float64{{st[0] / wide, st[0]}, {st[1], st[1] * wide}}
		}
	case Bandstop:
		pass = [][2]float64{{p[0] / wide, p[0]}, {p[1], p[1] * wide}}
		if s.HasStopband() {
			stop = [][2]float64{{st[0], st[1]}}
		}
	}
	worstPass := math.Inf(-1)
	for _, r := range pass {
		worstPass = math.Max(worstPass, extremum(secs, ref, r[0], r[1], true))
	}
	d.Mask.PassbandMarginDB = s.PassbandRippleDB - 10*math.Log10(worstPass)
	d.Mask.PassbandMet = d.Mask.PassbandMarginDB >= -MaskToleranceDB
	d.Mask.StopbandMet = true
	if len(stop) > 0 {
		var zerosHz []float64 // the loss is unimodal between transmission zeros
		for _, sec := range secs {
			if wz, ok := sec.ZeroOmegaRadPerSec(); ok {
				zerosHz = append(zerosHz, wz/(2*math.Pi))
			}
		}
		least := math.Inf(1)
		for _, r := range stop {
			least = math.Min(least, extremum(secs, ref, r[0], r[1], false))
			cuts := []float64{r[0]}
			for _, z := range zerosHz {
				if z > r[0] && z < r[1] {
					cuts = append(cuts, z)
				}
			}
			cuts = append(cuts, r[1])
			slices.Sort(cuts)
			for i := 1; i < len(cuts); i++ {
				lo, hi := response.RadPerSec(cuts[i-1]), response.RadPerSec(cuts[i])
				least = math.Min(least, ref/section.Extremum(secs, lo, hi, math.Sqrt(lo*hi), true))
			}
		}
		m := 10*math.Log10(least) - s.StopbandAttenDB
		if math.IsInf(m, 1) {
			m = math.MaxFloat64
		}
		d.Mask.StopbandMarginDB = &m
		d.Mask.StopbandMet = m >= -MaskToleranceDB
	}
	d.MeetsMask = d.Mask.PassbandMet && d.Mask.StopbandMet
}

// extremum returns the largest (max true) or smallest value of the loss
// ratio ref/|H|² of the cascade secs over [loHz, hiHz]: a log grid of
// maskPoints, the two ends, and a refinement ([section.Extremum]) of
// every interior local extremum of the grid that could be the answer.
func extremum(secs []section.Section, ref, loHz, hiHz float64, max bool) float64 {
	g := func(fHz float64) float64 { // maximised
		v := ref / section.MagnitudeSquared(secs, response.RadPerSec(fHz))
		if !max {
			v = 1 / v
		}
		if math.IsNaN(v) {
			return math.Inf(-1)
		}
		return v
	}
	// The grid is log-spaced, each point the one before times a constant
	// ratio (no exponential per point); the ends are exactly loHz and hiHz.
	n := maskPoints
	var fs, vs [maskPoints]float64
	ratio := math.Pow(hiHz/loHz, 1/float64(n-1))
	f := loHz
	for i := range n - 1 {
		fs[i] = f
		f *= ratio
	}
	fs[n-1] = hiHz
	for i, f := range fs {
		vs[i] = g(f)
	}
	top := slices.Max(vs[:])
	best := top
	for i := 1; i < n-1; i++ {
		// A grid this fine is within hundredths of a dB of every smooth
		// extremum, so those more than 0.05 dB (a factor 0.9886 in power)
		// from the best are skipped. A largest loss is a least |H|².
		if vs[i] > vs[i-1] && vs[i] >= vs[i+1] && vs[i] > top*0.9886 {
			w := response.RadPerSec
			m := section.Extremum(secs, w(fs[i-1]), w(fs[i+1]), w(fs[i]), !max)
			if max {
				best = math.Max(best, ref/m)
			} else {
				best = math.Max(best, m/ref)
			}
		}
	}
	if !max {
		return 1 / best
	}
	return best
}
