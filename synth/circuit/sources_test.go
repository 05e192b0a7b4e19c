package circuit_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// polyAt evaluates the real polynomial c (ascending) at p.
func polyAt(c []float64, p complex128) complex128 {
	var v complex128
	for i := len(c) - 1; i >= 0; i-- {
		v = v*p + complex(c[i], 0)
	}
	return v
}

// Each source's transfer to the output against its closed form (derived
// by hand from the node equations, the input grounded), over six decades
// around the stage's natural frequency.
func TestSourceTransfers(t *testing.T) {
	t.Parallel()
	beta := invR1 / (invR1 + invR2)
	for _, tc := range []struct {
		name string
		st   circuit.Stage
		m    circuit.Model
		srcs []circuit.Source
		want []func(s complex128) complex128
	}{
		{
			"rc-buffer/ideal", rcBuffer(rcR, rcC), ideal,
			[]circuit.Source{{To: "n1", From: "0"}, {To: "0", From: "n1"}, {OpAmp: 1}, {To: "out", From: "0"}, {To: "in", From: "0"}},
			[]func(s complex128) complex128{
				func(s complex128) complex128 { return rcR / (1 + s*rcR*rcC) },
				func(s complex128) complex128 { return -rcR / (1 + s*rcR*rcC) },
				func(complex128) complex128 { return 1 },
				func(complex128) complex128 { return 0 },
				func(complex128) complex128 { return 0 },
			},
		},
		{
			"inverting/single-pole", inverting(invR1, invR2), singlePole,
			[]circuit.Source{{OpAmp: 1}, {To: "n1", From: "in"}},
			[]func(s complex128) complex128{
				// V(out) = A·(en − β·V(out)).
				func(s complex128) complex128 { a := gainOf(singlePole, s); return a / (1 + a*complex(beta, 0)) },
				// A current i into n1: V(n1) = (i + V(out)/R2)/(1/R1 + 1/R2) and V(out) = −A·V(n1).
				func(s complex128) complex128 {
					a := gainOf(singlePole, s)
					g := complex(1/invR1+1/invR2, 0)
					return -a / (g + a*complex(1/invR2, 0))
				},
			},
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tr, err := tc.st.SourceTransfers(tc.m, tc.srcs)
			require.NoError(t, err)
			require.Len(t, tr.Num, len(tc.srcs))
			tf, err := tc.st.TransferFunction(tc.m)
			require.NoError(t, err)
			require.Equal(t, tf.ScaleRadPerSec, tr.ScaleRadPerSec)
			require.Len(t, tr.Den, len(tf.Den), "the same denominator as the signal's")
			for j := range tf.Den {
				require.InDelta(t, tf.Den[j], tr.Den[j], 1e-12*math.Abs(tf.Den[j]), "den[%d]", j)
			}
			mag := make([]float64, len(tr.Num))
			for _, r := range ratios() {
				s := complex(0, r*tr.ScaleRadPerSec)
				p := s / complex(tr.ScaleRadPerSec, 0)
				d2 := tr.AtAxis(r, mag)
				for i, want := range tc.want {
					got := polyAt(tr.Num[i], p) / polyAt(tr.Den, p)
					w := want(s)
					if w == 0 {
						require.Zero(t, got, "source %d at %g", i, r)
						continue
					}
					require.Less(t, relErr(got, w), 1e-10, "source %d at %g: %v, want %v", i, r, got, w)
					require.InDelta(t, 1, mag[i]/d2/(real(w)*real(w)+imag(w)*imag(w)), 1e-10, "AtAxis, source %d", i)
				}
				require.InDelta(t, 1, d2/math.Pow(cmplx.Abs(polyAt(tr.Den, p)), 2), 1e-12)
			}
		})
	}
}

func TestSourceTransfersInvalid(t *testing.T) {
	t.Parallel()
	st := rcBuffer(rcR, rcC)
	for _, tc := range []struct {
		name string
		src  circuit.Source
		want string
	}{
		{"no-opamp", circuit.Source{OpAmp: 2}, "no op-amp 2"},
		{"no-node", circuit.Source{To: "nx", From: "0"}, `no node "nx"`},
		{"same-node", circuit.Source{To: "n1", From: "n1"}, "both"},
		{"both-ground", circuit.Source{To: "0", From: "0"}, "both"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := st.SourceTransfers(ideal, []circuit.Source{tc.src})
			require.ErrorIs(t, err, circuit.ErrInvalid)
			require.ErrorContains(t, err, tc.want)
		})
	}
}
