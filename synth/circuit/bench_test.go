package circuit_test

import (
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/internal/benchchain"
)

func BenchmarkChainResponse(b *testing.B) {
	freq := benchchain.FreqHz()
	for _, tc := range []struct {
		name string
		m    circuit.Model
	}{
		{"sallen-key-8th/single-pole/1000pt", benchchain.SinglePole},
		{"sallen-key-8th/ideal/1000pt", ideal},
	} {
		ch := benchchain.Chain(tc.m)
		dst := make([]complex128, len(freq))
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := ch.Response(dst, freq); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	ch := benchchain.Chain(benchchain.SinglePole)
	tfs, err := ch.TransferFunctions()
	if err != nil {
		b.Fatal(err)
	}
	dst := make([]complex128, len(freq))
	b.Run("sallen-key-8th/single-pole/sweep-only-1000pt", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			tfs.Response(dst, freq)
		}
	})
}

func BenchmarkTransferFunction(b *testing.B) {
	st := benchchain.Chain(benchchain.SinglePole).Stages[3]
	for _, tc := range []struct {
		name string
		m    circuit.Model
	}{
		{"sallen-key/single-pole", benchchain.SinglePole},
		{"sallen-key/ideal", ideal},
		{"sallen-key/parasitics", withParasiticsModel(benchchain.SinglePole)},
	} {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := st.TransferFunction(tc.m); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// withParasiticsModel returns m with 3 pF of input capacitance and 50 Ω
// of output resistance.
func withParasiticsModel(m circuit.Model) circuit.Model {
	m.InputCapacitanceFarad, m.OutputResistanceOhm = 3e-12, 50
	return m
}

func BenchmarkSolveAt(b *testing.B) {
	st := benchchain.Chain(benchchain.SinglePole).Stages[3]
	s := complex(0, 2*3.141592653589793*benchchain.F0Hz)
	b.Run("sallen-key/single-pole", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := st.SolveAt(benchchain.SinglePole, s); err != nil {
				b.Fatal(err)
			}
		}
	})
}
