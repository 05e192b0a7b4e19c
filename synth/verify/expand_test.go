package verify_test

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify"
)

// TestStageTrialMatchesNodalSolve checks the per-trial analysis (the
// multi-affine fast path and the generic path) against the circuit
// package's direct nodal solve of the perturbed stage at every grid
// frequency (circuit.Stage.SolveAt, LU with iterative refinement: the
// reference of the circuit package) and against its rational form's
// DominantPair for f0 and Q.
func TestStageTrialMatchesNodalSolve(t *testing.T) {
	t.Parallel()
	type tc struct {
		name  string
		st    circuit.Stage
		fast  bool // the fast path is expected
		model circuit.Model
	}
	var cases []tc
	for _, m := range []struct {
		name string
		m    circuit.Model
	}{{"ideal", ideal}, {"single-pole", singlePole}, {"slow-op-amp", circuit.Model{GBWHz: 2e4, DCGainDB: 80}},
		// The op-amp model's parasitic parts (input capacitance, output
		// resistance) join the expansion as untoleranced variables.
		{"parasitics", circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 3e-12, OutputResistanceOhm: 50}},
		{"ideal-parasitics", circuit.Model{Ideal: true, InputCapacitanceFarad: 10e-12, OutputResistanceOhm: 100}}} {
		for _, s := range []struct {
			name string
			st   circuit.Stage
		}{
			{"sallen-key-lp", sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9)},
			{"sallen-key-hp", sallenKeyHP(10e-9, 10e-9, 33e3, 4.7e3)},
			{"mfb-lp", mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9)},
			{"rc-buffer", rcBuffer(15e3, 10e-9)},
			{"inverting", inverting(10e3, 47e3)},
		} {
			cases = append(cases, tc{s.name + "/" + m.name, s.st, true, m.m})
		}
	}
	for name, ch := range exampleChains(t) {
		for k, st := range ch.Stages {
			vars := len(st.Parts) + len(st.OpAmps)
			// A differential stage always takes the generic path.
			cases = append(cases, tc{fmt.Sprintf("%s/stage%d-%s", name, k+1, st.Topology), st, vars <= 16 && !st.Differential(), ch.Model})
		}
	}
	for _, c := range cases {
		for _, generic := range []bool{false, true} {
			name := c.name
			if generic {
				name += "/generic"
			}
			t.Run(name, func(t *testing.T) {
				t.Parallel()
				nom, err := c.st.TransferFunction(c.model)
				require.NoError(t, err)
				f0n, _, okn := nom.DominantPair()
				centre := 1e3
				if okn {
					centre = f0n
				}
				freq := make([]float64, 61)
				for i := range freq {
					freq[i] = centre * math.Pow(10, -3+float64(i)/10)
				}
				rng := rand.New(rand.NewPCG(1, uint64(len(name))))
				for trial := range 5 {
					fac := make([]float64, len(c.st.Parts))
					pert := c.st
					pert.Parts = slices.Clone(c.st.Parts)
					for j := range fac {
						fac[j] = 1 + 0.1*(2*rng.Float64()-1)
						if trial == 0 {
							fac[j] = 1
						}
						pert.Parts[j].Value *= fac[j]
					}
					m := c.model
					var gbw []float64
					if !m.Ideal {
						g := 1 + 0.3*(2*rng.Float64()-1)
						for range c.st.OpAmps {
							gbw = append(gbw, g) // one GBW for the reference's single model
						}
						m.GBWHz *= g
					}
					db, f0, q, ok, fast, err := verify.StageTrial(c.st, c.model, fac, gbw, freq, generic)
					require.NoError(t, err)
					require.Equal(t, c.fast && !generic, fast, "path")
					for i, f := range freq {
						h, err := pert.SolveAt(m, complex(0, 2*math.Pi*f))
						require.NoError(t, err)
						want := 20 * math.Log10(cmplx.Abs(h))
						require.InDelta(t, want, db[i], 1e-8*math.Max(1, math.Abs(want)), "trial %d f %g Hz", trial, f)
					}
					r, err := pert.TransferFunction(m)
					require.NoError(t, err)
					wf0, wq, wok := r.DominantPair()
					require.Equal(t, wok, ok)
					require.InDelta(t, wf0, f0, 1e-9*wf0, "f0, trial %d", trial)
					require.InDelta(t, wq, q, 1e-9*math.Max(1, math.Abs(wq)), "Q, trial %d", trial)
				}
			})
		}
	}
}

// TestCompiledMatchesExpansion checks the trials' layout of the
// multi-affine expansions (monomials grouped by op-amp set and power of
// p, products from subset tables) against the term-by-term sum it
// replaced, on every stage of the example designs (state-variable notches
// of four single-pole op-amps among them) and the textbook stages, for
// random part and GBW spreads: the same polynomial, so the coefficients
// agree to rounding (1e-12 relative, coefficient by coefficient; a
// structural zero is exactly zero both ways).
func TestCompiledMatchesExpansion(t *testing.T) {
	t.Parallel()
	type tc struct {
		name string
		st   circuit.Stage
		m    circuit.Model
	}
	cases := []tc{
		{"sallen-key-lp/single-pole", sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9), singlePole},
		{"mfb-lp/parasitics", mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9), circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 3e-12, OutputResistanceOhm: 50}},
		{"sallen-key-hp/ideal", sallenKeyHP(10e-9, 10e-9, 33e3, 4.7e3), ideal},
	}
	for name, ch := range exampleChains(t) {
		for k, st := range ch.Stages {
			cases = append(cases, tc{fmt.Sprintf("%s/stage%d-%s", name, k+1, st.Topology), st, ch.Model})
		}
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			rng := rand.New(rand.NewPCG(2, uint64(len(c.name))))
			for trial := range 20 {
				fac := make([]float64, len(c.st.Parts))
				for j := range fac {
					fac[j] = 1 + 0.1*(2*rng.Float64()-1)
				}
				gbw := make([]float64, len(c.st.OpAmps))
				for u := range gbw {
					gbw[u] = 1 + 0.3*(2*rng.Float64()-1)
				}
				refNum, refDen, num, den, expanded, err := verify.ExpansionBothWays(c.st, c.m, fac, gbw)
				require.NoError(t, err)
				if !expanded {
					t.Skip("generic path: no expansion")
				}
				for _, p := range []struct {
					name     string
					ref, got []float64
				}{{"num", refNum, num}, {"den", refDen, den}} {
					require.Len(t, p.got, len(p.ref))
					for j, v := range p.ref {
						require.InDelta(t, v, p.got[j], 1e-12*math.Abs(v), "trial %d %s[%d]", trial, p.name, j)
					}
				}
			}
		})
	}
}

// TestExpansionMatchesFullSystem checks the expansion, computed on the
// nodal system without the input's voltage and the source's current
// (two fewer unknowns), against the same expansion from the whole
// system's determinants at every vertex (the computation it replaced):
// every coefficient of both polynomials the same, exactly, as they are
// integers. The stages are the textbook ones, every stage of the example
// designs and the first stages of the costliest admitted design (an
// order-20 bandstop of state-variable notch stages, sixteen variables).
func TestExpansionMatchesFullSystem(t *testing.T) {
	t.Parallel()
	type tc struct {
		name string
		st   circuit.Stage
		m    circuit.Model
	}
	cases := []tc{
		{"sallen-key-lp/single-pole", sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9), singlePole},
		{"mfb-lp/parasitics", mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9), circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 3e-12, OutputResistanceOhm: 50}},
		{"sallen-key-hp/ideal", sallenKeyHP(10e-9, 10e-9, 33e3, 4.7e3), ideal},
		{"inverting/single-pole", inverting(10e3, 47e3), singlePole},
	}
	for name, ch := range exampleChains(t) {
		for k, st := range ch.Stages {
			cases = append(cases, tc{fmt.Sprintf("%s/stage%d-%s", name, k+1, st.Topology), st, ch.Model})
		}
	}
	spec, err := synth.ParseSpecBytes([]byte(`{"response": "bandstop", "approximation": "butterworth", "order": 20,
		"passband_hz": [900, 1100], "topology": "state-variable"}`))
	require.NoError(t, err)
	d, err := synth.SynthesizeTo(context.Background(), spec, synth.Circuits)
	require.NoError(t, err)
	heavy, err := d.Chain()
	require.NoError(t, err)
	for k, st := range heavy.Stages[:2] {
		cases = append(cases, tc{fmt.Sprintf("notch20/stage%d", k+1), st, heavy.Model})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			terms, expanded, err := verify.ExpansionMatchesFull(c.st, c.m)
			require.NoError(t, err)
			if !expanded {
				t.Skip("generic path: no expansion")
			}
			require.Positive(t, terms)
		})
	}
}

// TestExpansionCache checks that stages of one structure share one
// expansion within a run, and that the shared expansion is term for term
// the one each stage gives alone: on every example design and on the
// order-20 bandstop of state-variable notch stages, whose twenty stages
// have one structure (nineteen of them take the first's expansion).
func TestExpansionCache(t *testing.T) {
	t.Parallel()
	chains := exampleChains(t)
	spec, err := synth.ParseSpecBytes([]byte(`{"response": "bandstop", "approximation": "butterworth", "order": 20,
		"passband_hz": [900, 1100], "topology": "state-variable"}`))
	require.NoError(t, err)
	d, err := synth.SynthesizeTo(context.Background(), spec, synth.Circuits)
	require.NoError(t, err)
	chains["notch20"], err = d.Chain()
	require.NoError(t, err)
	for name, ch := range chains {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			hits, err := verify.CachedExpansionsMatch(ch)
			require.NoError(t, err)
			if name == "notch20" {
				require.Equal(t, 19, hits)
			}
		})
	}
}
