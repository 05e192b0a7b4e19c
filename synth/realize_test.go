package synth_test

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// opAmpErrorPct returns the largest of the f0, Q and gain-at-f0 errors
// that a single-pole op-amp of gbwHz causes in stage st, against ideal
// op-amps.
func opAmpErrorPct(t *testing.T, st circuit.Stage, gbwHz, dcGainDB float64, order int) float64 {
	t.Helper()
	ideal, err := st.TransferFunction(circuit.Model{Ideal: true})
	require.NoError(t, err)
	built, err := st.TransferFunction(circuit.Model{GBWHz: gbwHz, DCGainDB: dcGainDB})
	require.NoError(t, err)
	f0i, qi, ok := ideal.DominantPair()
	require.True(t, ok)
	f0, q, ok := built.DominantPair()
	require.True(t, ok)
	e := math.Max(math.Abs(f0/f0i-1), math.Abs(cmplx.Abs(built.AtHz(f0i))/cmplx.Abs(ideal.AtHz(f0i))-1)) * 100
	if order == 2 {
		e = math.Max(e, math.Abs(q/qi-1)*100)
	}
	return e
}

// TestOpAmpNeeds checks each stage's reported gain-bandwidth need against
// the circuit model directly: at the need the op-amp moves f0, Q and the
// gain at f0 by at most 1 %, at 85 % of it by more (the need is the least to within the
// documented 10 %).
func TestOpAmpNeeds(t *testing.T) {
	t.Parallel()
	for _, approx := range []string{"butterworth", "chebyshev1", "elliptic"} {
		t.Run(approx, func(t *testing.T) {
			t.Parallel()
			s := baseSpec(synth.Lowpass, approx)
			s.Order, s.PassbandHz, s.StopbandAttenDB = 6, []float64{10e3}, 60
			d := synthesize(t, s)
			ch, err := d.Chain()
			require.NoError(t, err)
			for i, sec := range d.Sections {
				require.NotNil(t, sec.OpAmpNeeds.GBWHz, "section %d", i)
				need := *sec.OpAmpNeeds.GBWHz
				require.LessOrEqual(t, opAmpErrorPct(t, ch.Stages[i], need, s.OpAmp.DCGainDB, sec.Order), 1.0+1e-9, "section %d", i)
				require.Greater(t, opAmpErrorPct(t, ch.Stages[i], 0.85*need, s.OpAmp.DCGainDB, sec.Order), 1.0, "section %d", i)
				// The common-practice estimate 100·Q·f0 (50·f0 first order) is shown beside it.
				want := 50 * sec.Realized.F0Hz
				if sec.Q != nil {
					want = 100 * *sec.Q * sec.F0Hz
				}
				require.InEpsilon(t, want, sec.OpAmpNeeds.RuleOfThumbGBWHz, 0.02)
			}
		})
	}
}

// TestSlowOpAmpIsFlagged: a 10 kHz Chebyshev I with 200 kHz op-amps; its
// high-Q stage moves by several per cent, which must be flagged (issue 3:
// a stage whose op-amp errors exceed 2 %).
func TestSlowOpAmpIsFlagged(t *testing.T) {
	t.Parallel()
	s := baseSpec(synth.Lowpass, "chebyshev1")
	s.Order, s.PassbandHz = 6, []float64{10e3}
	s.OpAmp.GBWHz = 200e3
	d := synthesize(t, s)
	flagged := 0
	for _, sec := range d.Sections {
		e := math.Abs(sec.Realized.OpAmpF0ErrorPct)
		if sec.Realized.OpAmpQErrorPct != nil {
			e = math.Max(e, math.Abs(*sec.Realized.OpAmpQErrorPct))
		}
		if e > synth.OpAmpErrorFlagPct {
			require.NotEmpty(t, sec.Warnings)
			flagged++
		} else {
			require.Empty(t, sec.Warnings)
		}
	}
	require.Positive(t, flagged)
}

// TestProgress: a Monte Carlo run reports its progress, increasing, up to
// the trial count.
func TestProgress(t *testing.T) {
	t.Parallel()
	s := baseSpec(synth.Lowpass, "butterworth")
	s.Order, s.PassbandHz, s.StopbandHz = 4, []float64{1000}, []float64{4000}
	s.MonteCarlo = synth.MonteCarlo{Trials: 3000, Seed: 2}
	last, calls := 0, 0
	ctx := synth.WithProgress(context.Background(), func(done, total int) {
		require.Equal(t, 3000, total)
		require.GreaterOrEqual(t, done, last)
		last, calls = done, calls+1
	})
	_, err := synth.Synthesize(ctx, s)
	require.NoError(t, err)
	require.Positive(t, calls)
	require.Equal(t, 3000, last)
}

// TestGBWSpread: spreading the op-amps' gain-bandwidth widens each stage's
// f0 spread in the Monte Carlo (the op-amp moves f0 by a share of its own
// error, so a slow op-amp with a wide spread must show).
func TestGBWSpread(t *testing.T) {
	t.Parallel()
	base := baseSpec(synth.Lowpass, "chebyshev1")
	base.Order, base.PassbandHz = 4, []float64{20e3}
	base.OpAmp.GBWHz = 1e6
	base.MonteCarlo = synth.MonteCarlo{Trials: 2000, Seed: 5}
	base.Tolerance.ResistorPct, base.Tolerance.CapacitorPct = 0.01, 0.01
	plain := synthesize(t, base)
	spread := base
	spread.Tolerance.GBWPct = 40
	wide := synthesize(t, spread)
	last := len(plain.MonteCarlo.Stages) - 1
	require.Greater(t, wide.MonteCarlo.Stages[last].QStdPct, 2*plain.MonteCarlo.Stages[last].QStdPct)
}
