package noise_test

import (
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// butterworth8 is circuittest's 8th-order Sallen-Key Butterworth chain
// with op-amp model m.
func butterworth8(f0Hz float64, m circuit.Model) circuit.Chain {
	return circuit.Chain{Stages: circuittest.Butterworth8(f0Hz), Model: m}
}

// Test values (package circuit's test circuits).
const (
	rcR, rcC               = 10e3, 10e-9
	skR1, skR2, skC1, skC2 = 10e3, 22e3, 22e-9, 10e-9
	mfR1, mfR2, mfR3       = 10e3, 10e3, 4.7e3
	mfC1, mfC2             = 47e-9, 2.2e-9
)

// logspace returns n log-spaced frequencies from lo to hi inclusive.
func logspace(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return f
}

// The textbook stages of package circuittest, under the short names the
// tests use.
var (
	res         = circuittest.Res
	capa        = circuittest.Cap
	rcBuffer    = circuittest.RCBuffer
	sallenKeyLP = circuittest.SallenKeyLP
	sallenKeyHP = circuittest.SallenKeyHP
	mfbLP       = circuittest.MFBLP
	inverting   = circuittest.Inverting
	ideal       = circuittest.Ideal
	singlePole  = circuittest.SinglePole
)
