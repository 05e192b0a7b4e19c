package section

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/zpk"
)

// Cascade returns the product of secs[:n] as one transfer function.
func Cascade(secs []Section) zpk.ZPK {
	h := zpk.ZPK{Gain: 1}
	for _, s := range secs {
		h.Poles = append(h.Poles, s.Poles...)
		h.Zeros = append(h.Zeros, s.Zeros...)
		h.Gain *= s.Gain
	}
	return h
}

// Distribute scales the gains of secs, which must be in signal order and
// normalised as [Factor] leaves them, so that their product has factored
// gain chainGain and passband maximum passbandMax (both linear, positive).
// It follows the rule of the package comment, finding each node's peak with
// [NodePeaks] on gridHz, and returns each stage's output peak in dB
// relative to passbandMax. The last entry is 0 dB up to rounding.
func Distribute(secs []Section, chainGain, passbandMax float64, gridHz []float64) ([]float64, error) {
	return DistributePeaks(secs, chainGain, passbandMax, NodePeaks(secs, gridHz))
}

// DistributePeaks is [Distribute] with the node peaks of the normalised
// sections already found (by [NodePeaks], in the same order); it panics if
// len(peaks) != len(secs).
func DistributePeaks(secs []Section, chainGain, passbandMax float64, peaks []float64) ([]float64, error) {
	if len(peaks) != len(secs) {
		panic("section: DistributePeaks needs one peak per section")
	}
	if !(chainGain > 0) || !(passbandMax > 0) || math.IsInf(chainGain, 0) || math.IsInf(passbandMax, 0) {
		return nil, fmt.Errorf("section: Distribute needs positive finite gains (got %g, %g)", chainGain, passbandMax)
	}
	n := len(secs)
	norm := 1.0
	for _, s := range secs {
		norm *= s.Gain
	}
	a := chainGain / norm
	out := make([]float64, n)
	prev := 1.0
	for j := range secs {
		c := a
		if j < n-1 {
			c = math.Min(a, passbandMax/peaks[j])
		}
		secs[j].Gain *= c / prev
		prev = c
		out[j] = 20 * math.Log10(c*peaks[j]/passbandMax)
	}
	return out, nil
}

// MagnitudeSquared returns |H(jω)|² of the cascade of secs, section by
// section in real arithmetic, so that no intermediate product overflows.
func MagnitudeSquared(secs []Section, omegaRadPerSec float64) float64 {
	m := 1.0
	for i := range secs {
		m *= secs[i].magSq(omegaRadPerSec)
	}
	return m
}

func (s *Section) magSq(w float64) float64 {
	v := s.Gain * s.Gain
	for _, z := range s.Zeros {
		dr, di := real(z), w-imag(z)
		v *= dr*dr + di*di
	}
	for _, p := range s.Poles {
		dr, di := real(p), w-imag(p)
		v /= dr*dr + di*di
	}
	return v
}

// NodePeaks returns, for each j, the peak over frequency of |H| of the
// cascade secs[:j+1]: the best points of gridHz (every grid local maximum
// within 0.01 dB of the best) refined by [Extremum], and the
// two ends of the axis, DC and infinite frequency, where lowpass, highpass
// and bandstop responses keep their passband. gridHz must resolve every
// resonance (see [response.Grid]).
func NodePeaks(secs []Section, gridHz []float64) []float64 {
	perm := make([]int, len(secs))
	for i := range perm {
		perm[i] = i
	}
	t := newTable(secs, gridHz)
	defer t.release()
	return t.nodePeaks(perm)
}
