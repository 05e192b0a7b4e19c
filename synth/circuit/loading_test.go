package circuit_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	ct "github.com/polewright/polewright/synth/circuit/circuittest"
)

// merged returns the stages as one stage, each stage's output driving
// the next one's input (nodes "m1", "m2", …): the reference for the
// loading, solved by one nodal analysis of the whole circuit.
func merged(t *testing.T, stages ...circuit.Stage) circuit.Stage {
	t.Helper()
	last := len(stages) - 1
	node := func(k int, n string) string {
		switch {
		case n == "0":
			return n
		case n == "in" && k > 0:
			return "m" + strconv.Itoa(k)
		case n == "in":
			return n
		case n == "out" && k < last:
			return "m" + strconv.Itoa(k+1)
		case n == "out":
			return n
		}
		return "s" + strconv.Itoa(k) + n
	}
	renumber := func(ref string, by int) string {
		k, err := strconv.Atoi(ref[1:])
		require.NoError(t, err)
		return ref[:1] + strconv.Itoa(k+by)
	}
	var st circuit.Stage
	st.Topology, st.Out = "merged", "out"
	for k, s := range stages {
		for _, p := range s.Parts {
			p.Ref = renumber(p.Ref, 20*k)
			p.A, p.B = node(k, p.A), node(k, p.B)
			st.Parts = append(st.Parts, p)
		}
		for _, u := range s.OpAmps {
			u.Ref = renumber(u.Ref, 20*k)
			u.Plus, u.Minus, u.Out = node(k, u.Plus), node(k, u.Minus), node(k, u.Out)
			st.OpAmps = append(st.OpAmps, u)
		}
	}
	return st
}

// twoStages are pairs of stages where the loading is large with a slow
// op-amp and a large output resistance: low-impedance inputs.
var twoStages = []struct {
	name string
	a, b circuit.Stage
}{
	{"sallen-key into sallen-key", ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.SallenKeyLP(1.5e3, 1e3, 47e-9, 4.7e-9)},
	{"highpass into highpass", ct.SallenKeyHP(100e-9, 100e-9, 470, 1e3), ct.SallenKeyHP(100e-9, 100e-9, 330, 680)},
	{"multiple-feedback into follower RC", ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9), ct.RCBuffer(1e3, 10e-9)},
	{"inverting into sallen-key", ct.Inverting(1e3, 2.2e3), ct.SallenKeyLP(1e3, 1e3, 10e-9, 4.7e-9)},
}

// TestLoadingTwoStagesExact checks [circuit.Chain.Loading] against the
// two stages solved as one circuit: with two stages the driven stage's
// output is open, so the Thévenin correction is exact and the chain's
// response must equal the merged circuit's to rounding. The stages are
// chosen where the loading is large (low-impedance inputs, a 1 MHz
// op-amp with 200 Ω of output resistance, frequencies where its loop
// gain is small), and the test also requires the loading to matter there
// (more than 0.01 dB at some frequency), so that it cannot pass by the
// correction being negligible.
func TestLoadingTwoStagesExact(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200, InputCapacitanceFarad: 3e-12}
	cases := twoStages
	freqs := []float64{100, 3e3, 2e4, 6e4, 2e5, 5e5}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Stages: []circuit.Stage{tc.a, tc.b}, Model: m}
			got, err := ch.Response(nil, freqs)
			require.NoError(t, err)
			tfs, err := ch.TransferFunctions()
			require.NoError(t, err)
			whole := merged(t, tc.a, tc.b)
			most := 0.0
			for i, f := range freqs {
				want, err := whole.SolveAt(m, complex(0, 2*math.Pi*f))
				require.NoError(t, err)
				require.InDelta(t, 0, cmplx.Abs(got[i]-want)/cmplx.Abs(want), 1e-9, "at %g Hz: chain %v, whole circuit %v", f, got[i], want)
				unloaded := tfs.AtHz(f)
				most = math.Max(most, math.Abs(20*math.Log10(cmplx.Abs(unloaded)/cmplx.Abs(want))))
			}
			require.Greater(t, most, 0.01, "the loading should matter somewhere in this case")
			t.Logf("%s: largest loading %.4f dB", tc.name, most)
		})
	}
}

// TestLoadingEmpty checks when no boundary is corrected: no output
// resistance, an ideal op-amp (its loop holds the output impedance at
// zero), or a single stage; and that with an ideal op-amp and Ro the
// response still equals the merged circuit's.
func TestLoadingEmpty(t *testing.T) {
	t.Parallel()
	a, b := ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9)
	for i, m := range []circuit.Model{
		{GBWHz: 1e6, DCGainDB: 100},
		{Ideal: true, OutputResistanceOhm: 100},
	} {
		l, err := circuit.Chain{Stages: []circuit.Stage{a, b}, Model: m}.Loading()
		require.NoError(t, err)
		require.True(t, l.Empty(), "model %d", i)
		require.Equal(t, complex(1, 0), l.AtHz(1e4))
	}
	l, err := circuit.Chain{Stages: []circuit.Stage{a}, Model: circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 100}}.Loading()
	require.NoError(t, err)
	require.True(t, l.Empty())

	m := circuit.Model{Ideal: true, OutputResistanceOhm: 100}
	ch := circuit.Chain{Stages: []circuit.Stage{a, b}, Model: m}
	whole := merged(t, a, b)
	for _, f := range []float64{1e3, 1e4, 1e5} {
		got, err := ch.Response(nil, []float64{f})
		require.NoError(t, err)
		want, err := whole.SolveAt(m, complex(0, 2*math.Pi*f))
		require.NoError(t, err)
		require.InDelta(t, 0, cmplx.Abs(got[0]-want)/cmplx.Abs(want), 1e-9, fmt.Sprintf("at %g Hz", f))
	}
}

// TestLoadingSweepSameAsPointwise checks the grid sweep of the loading
// ([circuit.Loading.ApplyDB], series logarithm near 0 dB) against the
// frequency-by-frequency forms on a three-stage chain: [Loading.DBAt] and
// 20·log10|[Loading.AtHz]| agree with it within 1e-12 dB.
func TestLoadingSweepSameAsPointwise(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200}
	ch := circuit.Chain{Stages: []circuit.Stage{
		ct.Inverting(1e3, 2.2e3), ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9), ct.RCBuffer(1e3, 10e-9),
	}, Model: m}
	l, err := ch.Loading()
	require.NoError(t, err)
	require.False(t, l.Empty())
	var freqs []float64
	for f := 1.0; f < 1e7; f *= 1.07 {
		freqs = append(freqs, f)
	}
	db := make([]float64, len(freqs))
	l.ApplyDB(db, freqs)
	most := 0.0
	for i, f := range freqs {
		require.InDelta(t, l.DBAt(f), db[i], 1e-12, "at %g Hz", f)
		require.InDelta(t, 20*math.Log10(cmplx.Abs(l.AtHz(f))), db[i], 1e-12, "at %g Hz", f)
		most = math.Max(most, math.Abs(db[i]))
	}
	require.Greater(t, most, 0.01)
}

// TestMag2HzSameAsAtHz checks [circuit.Rational.Mag2Hz] against |AtHz|²
// on every stage of a chain with parasitics (degrees 1 to 7) and on a
// rational longer than the split buffers, from 1 Hz to 10 MHz: within
// 1e-12 relative.
func TestMag2HzSameAsAtHz(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 50, InputCapacitanceFarad: 3e-12}
	var rs []circuit.Rational
	for _, st := range []circuit.Stage{ct.Inverting(1e3, 2.2e3), ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9)} {
		r, err := st.TransferFunction(m)
		require.NoError(t, err)
		rs = append(rs, r)
	}
	long := circuit.Rational{ScaleRadPerSec: 1e4}
	for i := 0; i < 40; i++ {
		long.Num = append(long.Num, 1/math.Pow(2, float64(i)))
		long.Den = append(long.Den, 1/math.Pow(1.5, float64(i)))
	}
	rs = append(rs, long)
	var freqs []float64
	for f := 1.0; f < 1e7; f *= 1.1 {
		freqs = append(freqs, f)
	}
	for k, r := range rs {
		got := r.Mag2Hz(nil, freqs)
		for i, f := range freqs {
			h := r.AtHz(f)
			want := real(h)*real(h) + imag(h)*imag(h)
			require.InEpsilon(t, want, got[i], 1e-12, "rational %d at %g Hz", k, f)
		}
	}
}

// longChains are chains of three and four stages for the loading's
// recursion through each stage's reverse transmission.
var longChains = [][]circuit.Stage{
	{ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9), ct.SallenKeyLP(1e3, 1e3, 10e-9, 4.7e-9)},
	{ct.Inverting(1e3, 2.2e3), ct.SallenKeyHP(100e-9, 100e-9, 470, 1e3), ct.MFBLP(1e3, 1e3, 1e3, 10e-9, 1e-9), ct.RCBuffer(1e3, 10e-9)},
}

// TestLoadingChainExact checks [circuit.Chain.Loading] on chains of three
// and four stages against the whole chain solved as one circuit: the
// recursion from the output back (each stage's input admittance as
// loaded by the stages after it, through its reverse transmission T) is
// exact, so the response must equal the merged circuit's to rounding. A
// slow op-amp with 500 Ω of output resistance makes the loading large
// (the test requires more than 0.5 dB somewhere in each chain) and the
// stages' reverse transmission matter (the first-order correction alone,
// each stage's input taken with its output open, misses by more than
// 0.01 dB in one chain).
func TestLoadingChainExact(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 500, InputCapacitanceFarad: 3e-12}
	chains := longChains
	freqs := []float64{100, 3e3, 2e4, 6e4, 2e5, 5e5}
	firstMost := 0.0
	for i, stages := range chains {
		ch := circuit.Chain{Stages: stages, Model: m}
		got, err := ch.Response(nil, freqs)
		require.NoError(t, err)
		tfs, err := ch.TransferFunctions()
		require.NoError(t, err)
		whole := merged(t, stages...)
		most, first := 0.0, 0.0
		for j, f := range freqs {
			want, err := whole.SolveAt(m, complex(0, 2*math.Pi*f))
			require.NoError(t, err)
			require.InDelta(t, 0, cmplx.Abs(got[j]-want)/cmplx.Abs(want), 1e-9, "chain %d at %g Hz: %v against %v", i, f, got[j], want)
			most = math.Max(most, math.Abs(20*math.Log10(cmplx.Abs(tfs.AtHz(f))/cmplx.Abs(want))))
			// First order: each boundary with the driven stage's own
			// input, its output open.
			firstOrder := tfs.AtHz(f)
			for k := 0; k+1 < len(stages); k++ {
				l, err := circuit.Chain{Stages: stages[k : k+2], Model: m}.Loading()
				require.NoError(t, err)
				firstOrder *= l.AtHz(f)
			}
			first = math.Max(first, math.Abs(20*math.Log10(cmplx.Abs(firstOrder)/cmplx.Abs(want))))
		}
		require.Greater(t, most, 0.5, "chain %d: the loading should be large", i)
		t.Logf("chain %d: loading up to %.3f dB; first order alone off by %.6f dB", i, most, first)
		firstMost = math.Max(firstMost, first)
	}
	require.Greater(t, firstMost, 0.01, "the reverse transmission should matter in one chain")
}

// TestLoadedNodeGainsExact checks [circuit.Loading.Sweep] and
// [circuit.Stage.LoadedNodeMag2] against the whole chain solved as one
// circuit: every node of every stage (op-amp inputs, outputs and the
// networks' inner nodes), with the gains of the stages before it as
// loaded, must equal the merged circuit's node voltage to rounding (1e-9
// relative; out among them, from its own transimpedance, where the
// caller knows it as the port's voltage), and the sweep's factors must
// multiply to [Loading.AtHz]. The chains are those of
// TestLoadingChainExact; the test also requires the loading to move
// some inner node by more than 1 % (the unloaded node
// transfers, [Stage.NodeTransferFunctions], times the unloaded stages
// before), so that it cannot pass by the correction being negligible.
func TestLoadedNodeGainsExact(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 500, InputCapacitanceFarad: 3e-12}
	chains := longChains
	freqs := []float64{0, 100, 3e3, 2e4, 6e4, 2e5, 5e5}
	most := 0.0
	for c, stages := range chains {
		ch := circuit.Chain{Stages: stages, Model: m}
		tfs, err := ch.TransferFunctions()
		require.NoError(t, err)
		load, err := ch.Loading()
		require.NoError(t, err)
		yl, fac := load.Sweep(freqs)
		require.Len(t, yl, len(stages))
		whole := merged(t, stages...)
		for i, f := range freqs {
			prod := complex(1, 0)
			for k := range stages {
				prod *= fac[k][i]
			}
			require.InDelta(t, 0, cmplx.Abs(prod-load.AtHz(f)), 1e-12*cmplx.Abs(prod), "chain %d at %g Hz", c, f)
		}
		up := make([]complex128, len(freqs))      // the stages before, as loaded
		upPlain := make([]complex128, len(freqs)) // and unloaded
		for i := range up {
			up[i], upPlain[i] = 1, 1
		}
		for k, st := range stages {
			var nodes, names []string
			seen := map[string]bool{"0": true, "in": true}
			for _, p := range st.Parts {
				for _, n := range []string{p.A, p.B} {
					if !seen[n] {
						seen[n] = true
						nodes = append(nodes, n)
					}
				}
			}
			for _, n := range nodes {
				switch {
				case n == "out" && k < len(stages)-1:
					names = append(names, "m"+strconv.Itoa(k+1))
				case n == "out":
					names = append(names, "out")
				default:
					names = append(names, "s"+strconv.Itoa(k)+n)
				}
			}
			require.Equal(t, load.Loaded(k), k < len(stages)-1, "chain %d stage %d", c, k)
			port := make([]complex128, len(freqs)) // V(out) per unit input, loaded
			for i, f := range freqs {
				port[i] = tfs[k].AtHz(f) * fac[k][i]
			}
			m2, plain, err := st.LoadedNodeMag2(m, nodes, freqs, yl[k], port, nil)
			require.NoError(t, err)
			require.Len(t, m2, len(nodes))
			for j, n := range nodes {
				ref, err := whole.NodeTransferFunction(m, names[j], 1e4)
				require.NoError(t, err)
				for i, f := range freqs {
					want := cmplx.Abs(ref.AtHz(f))
					got := cmplx.Abs(up[i]) * math.Sqrt(m2[j][i])
					if want == 0 { // behind a highpass at DC
						require.Less(t, got, 1e-12, "chain %d stage %d node %s at %g Hz", c, k, n, f)
						continue
					}
					require.InDelta(t, 1, got/want, 1e-9, "chain %d stage %d node %s at %g Hz", c, k, n, f)
					unloaded := cmplx.Abs(upPlain[i] * plain[j].AtHz(f))
					most = math.Max(most, math.Abs(unloaded/want-1))
				}
			}
			for i, f := range freqs {
				up[i] *= tfs[k].AtHz(f) * fac[k][i]
				upPlain[i] *= tfs[k].AtHz(f)
			}
		}
	}
	require.Greater(t, most, 0.01, "the loading should move some node by more than 1 %%")
	t.Logf("the unloaded node gains miss by up to %.1f %%", 100*most)
}

// TestFirstOrderLoading checks [circuit.Loading.FirstOrder]: in a chain
// of two stages the second's output is open, so the first stage loaded
// by the second's input to first order is exact, and its rational times
// the second's must equal the two solved as one circuit to rounding (1e-9
// relative) at every frequency, where the unloaded product misses by
// more than 0.01 dB somewhere; the last stage, which nothing loads, is
// returned as it is. The cases are twoStages.
func TestFirstOrderLoading(t *testing.T) {
	t.Parallel()
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200, InputCapacitanceFarad: 3e-12}
	cases := twoStages
	freqs := []float64{0, 100, 3e3, 2e4, 6e4, 2e5, 5e5, 2e6}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Stages: []circuit.Stage{tc.a, tc.b}, Model: m}
			tfs, err := ch.TransferFunctions()
			require.NoError(t, err)
			load, err := ch.Loading()
			require.NoError(t, err)
			fo := load.FirstOrder(tfs)
			require.Len(t, fo, 2)
			require.Equal(t, tfs[1], fo[1], "the last stage is not loaded")
			require.Greater(t, len(fo[0].Den), len(tfs[0].Den), "the loaded stage has the next stage's input poles too")
			whole := merged(t, tc.a, tc.b)
			most := 0.0
			for _, f := range freqs {
				want, err := whole.SolveAt(m, complex(0, 2*math.Pi*f))
				require.NoError(t, err)
				got := fo.AtHz(f)
				if want == 0 { // a highpass at DC
					require.Zero(t, got, "at %g Hz", f)
					continue
				}
				require.InDelta(t, 0, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-9, "at %g Hz: %v against %v", f, got, want)
				most = math.Max(most, math.Abs(20*math.Log10(cmplx.Abs(tfs.AtHz(f))/cmplx.Abs(want))))
			}
			for _, p := range fo[0].Poles() {
				require.Less(t, real(p), 0.0, "a stable chain's loaded stage is stable")
			}
			require.Greater(t, most, 0.01, "the loading should matter somewhere")
		})
	}
}
