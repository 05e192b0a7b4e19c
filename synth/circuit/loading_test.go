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

// merged returns stages a and b as one stage, a's output driving b's
// input at node "mid": the reference for two-stage loading, solved by one
// nodal analysis of the whole circuit.
func merged(t *testing.T, a, b circuit.Stage) circuit.Stage {
	t.Helper()
	node := func(prefix, n string) string {
		switch n {
		case "0":
			return n
		case "in":
			if prefix == "b" {
				return "mid"
			}
			return n
		case "out":
			if prefix == "a" {
				return "mid"
			}
			return n
		}
		return prefix + n
	}
	renumber := func(ref string, by int) string {
		k, err := strconv.Atoi(ref[1:])
		require.NoError(t, err)
		return ref[:1] + strconv.Itoa(k+by)
	}
	var st circuit.Stage
	st.Topology, st.Out = "merged", "out"
	for i, s := range []circuit.Stage{a, b} {
		prefix := []string{"a", "b"}[i]
		for _, p := range s.Parts {
			p.Ref = renumber(p.Ref, 40*i)
			p.A, p.B = node(prefix, p.A), node(prefix, p.B)
			st.Parts = append(st.Parts, p)
		}
		for _, u := range s.OpAmps {
			u.Ref = renumber(u.Ref, 40*i)
			u.Plus, u.Minus, u.Out = node(prefix, u.Plus), node(prefix, u.Minus), node(prefix, u.Out)
			st.OpAmps = append(st.OpAmps, u)
		}
	}
	return st
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
	cases := []struct {
		name string
		a, b circuit.Stage
	}{
		{"sallen-key into sallen-key", ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.SallenKeyLP(1.5e3, 1e3, 47e-9, 4.7e-9)},
		{"highpass into highpass", ct.SallenKeyHP(100e-9, 100e-9, 470, 1e3), ct.SallenKeyHP(100e-9, 100e-9, 330, 680)},
		{"multiple-feedback into follower RC", ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9), ct.RCBuffer(1e3, 10e-9)},
		{"inverting into sallen-key", ct.Inverting(1e3, 2.2e3), ct.SallenKeyLP(1e3, 1e3, 10e-9, 4.7e-9)},
	}
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
