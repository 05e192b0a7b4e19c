package topology_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// ideal is the nullor op-amp model.
var ideal = circuit.Model{Ideal: true}

// pair returns the upper-first conjugate poles of ω0, Q (closed form of
// s² + s·ω0/Q + ω0²); for Q < 0.5 the two real roots.
func pair(w0, q float64) []complex128 {
	d := 1 - 1/(4*q*q)
	if d >= 0 {
		p := complex(-w0/(2*q), w0*math.Sqrt(d))
		return []complex128{p, cmplx.Conj(p)}
	}
	r := w0 * math.Sqrt(-d)
	return []complex128{complex(-w0/(2*q)+r, 0), complex(-w0/(2*q)-r, 0)}
}

func w(fHz float64) float64 { return 2 * math.Pi * fHz }

// Section constructors with reference gain g (see section.ReferenceGain).
func lp2(f0, q, g float64) section.Section {
	return section.Section{Poles: pair(w(f0), q), Gain: g * w(f0) * w(f0)}
}
func hp2(f0, q, g float64) section.Section {
	return section.Section{Poles: pair(w(f0), q), Zeros: []complex128{0, 0}, Gain: g}
}
func bp2(f0, q, g float64) section.Section {
	return section.Section{Poles: pair(w(f0), q), Zeros: []complex128{0}, Gain: g * w(f0) / q}
}

// notch2 has zeros at ±j·2π·fz; g is |H(0)| unless fz < f0 (highpass-notch,
// |H(∞)|).
func notch2(f0, q, fz, g float64) section.Section {
	wz := w(fz)
	s := section.Section{Poles: pair(w(f0), q), Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: g}
	if s.Kind() != section.HighpassNotch {
		s.Gain = g * w(f0) * w(f0) / (wz * wz)
	}
	return s
}
func lp1(f0, g float64) section.Section {
	return section.Section{Poles: []complex128{complex(-w(f0), 0)}, Gain: g * w(f0)}
}
func hp1(f0, g float64) section.Section {
	return section.Section{Poles: []complex128{complex(-w(f0), 0)}, Zeros: []complex128{0}, Gain: g}
}

// probe returns frequencies around f0 where the stage is compared.
func probe(sec section.Section) []float64 {
	f0 := sec.OmegaRadPerSec() / (2 * math.Pi)
	return []float64{0.013 * f0, 0.31 * f0, 0.77 * f0, 1.09 * f0, 1.9 * f0, 7.3 * f0, 61 * f0}
}

// maxRelDiff returns the largest |H_stage − want|/|want| over probe, with
// want the section's transfer function times sign·(1 + gainErr).
func maxRelDiff(t *testing.T, sec section.Section, r topology.Result, gainScale float64) float64 {
	t.Helper()
	sign := 1.0
	if r.Inverting {
		sign = -1
	}
	worst := 0.0
	for _, f := range probe(sec) {
		s := complex(0, w(f))
		got, err := r.Stage.SolveAt(ideal, s)
		require.NoError(t, err)
		want := complex(sign*gainScale, 0) * sec.ZPK().At(s)
		worst = math.Max(worst, cmplx.Abs(got-want)/cmplx.Abs(want))
	}
	return worst
}

// chebyshevPairs returns the pole-pair sections (f0, Q) of an even-order
// Chebyshev type I lowpass with the given passband ripple and edge fc:
// poles −sinh(v)·sin θk + j·cosh(v)·cos θk, θk = (2k − 1)π/(2n),
// v = asinh(1/ε)/n, ε = √(10^(r/10) − 1) (the textbook closed form, e.g.
// Williams & Taylor ch. 2), each with unit DC gain.
func chebyshevPairs(n int, rippleDB, fc float64) []section.Section {
	eps := math.Sqrt(math.Pow(10, rippleDB/10) - 1)
	v := math.Asinh(1/eps) / float64(n)
	var out []section.Section
	for k := 1; k <= n/2; k++ {
		th := float64(2*k-1) * math.Pi / float64(2*n)
		p := complex(-math.Sinh(v)*math.Sin(th), math.Cosh(v)*math.Cos(th)) * complex(w(fc), 0)
		w0 := cmplx.Abs(p)
		q := w0 / (-2 * real(p))
		out = append(out, lp2(w0/(2*math.Pi), q, 1))
	}
	return out
}

// butterworthQ returns the Q of the pole pairs of an even-order
// Butterworth filter, 1/(2·sin((2k − 1)π/(2n))) (closed form).
func butterworthQ(n int) []float64 {
	var q []float64
	for k := 1; k <= n/2; k++ {
		q = append(q, 1/(2*math.Sin(float64(2*k-1)*math.Pi/float64(2*n))))
	}
	return q
}
