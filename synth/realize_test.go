package synth_test

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// opAmpErrorPct returns the op-amp's error as opAmpNeeds defines it (the
// OpAmpNeeds.GBWHz documentation): the largest of the relative changes,
// in percent, that a single-pole op-amp of gbwHz causes against ideal
// op-amps in the f0 and (second order) Q of the section's poles, read
// with the section's order, and in the gain |H| at the ideal f0, or for a
// notch section (zeros at f0) in the frequency of its jω-axis zeros.
func opAmpErrorPct(t *testing.T, st circuit.Stage, gbwHz, dcGainDB float64, sec synth.Section) float64 {
	t.Helper()
	ideal, err := st.TransferFunction(circuit.Model{Ideal: true})
	require.NoError(t, err)
	built, err := st.TransferFunction(circuit.Model{GBWHz: gbwHz, DCGainDB: dcGainDB})
	require.NoError(t, err)
	ideal.SectionOrder, built.SectionOrder = sec.Order, sec.Order
	f0i, qi, ok := ideal.DominantPair()
	require.True(t, ok)
	f0, q, ok := built.DominantPair()
	require.True(t, ok)
	e := math.Abs(f0/f0i - 1)
	if sec.Order == 2 {
		e = math.Max(e, math.Abs(q/qi-1))
	}
	if sec.Kind != section.Notch {
		return 100 * math.Max(e, math.Abs(cmplx.Abs(built.AtHz(f0i))/cmplx.Abs(ideal.AtHz(f0i))-1))
	}
	// The notch's zero: the ideal stage's jω-axis zero nearest j·2π·f0i,
	// and the built stage's zero nearest it.
	var zi complex128
	for _, z := range ideal.Zeros() {
		if imag(z) > 0 && math.Abs(real(z)) <= axisTol(st)*cmplx.Abs(z) &&
			(zi == 0 || math.Abs(cmplx.Abs(z)-2*math.Pi*f0i) < math.Abs(cmplx.Abs(zi)-2*math.Pi*f0i)) {
			zi = z
		}
	}
	require.NotZero(t, zi, "a notch stage has a zero on the jω axis")
	zb := built.Zeros()
	require.NotEmpty(t, zb)
	nearest := zb[0]
	for _, z := range zb {
		if cmplx.Abs(z-zi) < cmplx.Abs(nearest-zi) {
			nearest = z
		}
	}
	return 100 * math.Max(e, math.Abs(cmplx.Abs(nearest)/cmplx.Abs(zi)-1))
}

// axisTol is |Re z|/|z| up to which a notch stage's zero counts as on the
// jω axis: the one-amplifier notch's rounding leaves a damping of up to
// 0.01 (its Result.ZeroDamping, bounded in package topology's tests).
func axisTol(st circuit.Stage) float64 {
	if st.Topology == "one-amp-notch" {
		return 0.01
	}
	return 1e-6
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
				require.LessOrEqual(t, opAmpErrorPct(t, ch.Stages[i], need, s.OpAmp.DCGainDB, sec), 1.0+1e-9, "section %d", i)
				require.Greater(t, opAmpErrorPct(t, ch.Stages[i], 0.85*need, s.OpAmp.DCGainDB, sec), 1.0, "section %d", i)
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

// TestOpAmpNeedsEveryStageKind: for a stage of every kind
// (stageKindStages), with the base spec's op-amp, a 1 MHz, 80 dB one and
// an ideal spec (DC gain 100 dB), the reported need is the least
// gain-bandwidth within the stated accuracy (OpAmpNeeds.GBWHz): by
// opAmpErrorPct, the op-amp's error at the need lies between 0.9 % and
// 1 %, and at 90 % of it exceeds 1 %. Where the search reports no need
// the error at 1 THz exceeds 1 % (a high-Q multiple-feedback stage whose
// 80 dB DC gain alone costs more).
//
// The rc-buffer's need is checked against the closed form: the follower's
// gain 1/(1 + j·f0/GBW) is within 1 % at f0 for GBW ≥ f0/√(1/0.99² − 1) =
// 7.0179·f0, and the need lies within 10 % above it.
func TestOpAmpNeedsEveryStageKind(t *testing.T) {
	t.Parallel()
	for _, op := range []struct {
		name string
		amp  func(*synth.OpAmp)
	}{
		{"10MHz", nil},
		{"1MHz-80dB", func(o *synth.OpAmp) { o.GBWHz, o.DCGainDB = 1e6, 80 }},
		{"ideal", func(o *synth.OpAmp) { o.Ideal, o.GBWHz, o.DCGainDB = true, 0, 0 }},
	} {
		t.Run(op.name, func(t *testing.T) {
			t.Parallel()
			stages := stageKindStages(t, func(s *synth.Spec) {
				if op.amp != nil {
					op.amp(&s.OpAmp)
				}
			})
			for _, ks := range stages {
				sec := ks.d.Sections[ks.index]
				st := ks.ch.Stages[ks.index]
				dc := ks.spec.OpAmp.DCGainDB
				if ks.spec.OpAmp.Ideal {
					dc = 100
				}
				where := fmt.Sprintf("%s stage %d (%s)", ks.design, ks.index+1, ks.kind)
				if sec.OpAmpNeeds.GBWHz == nil {
					require.Greater(t, opAmpErrorPct(t, st, 1e12, dc, sec), 1.0, where)
					t.Logf("%-52s no need up to 1 THz", where)
					continue
				}
				need := *sec.OpAmpNeeds.GBWHz
				at, below := opAmpErrorPct(t, st, need, dc, sec), opAmpErrorPct(t, st, 0.9*need, dc, sec)
				t.Logf("%-52s need %9.4g Hz: error %.4f %%, at 0.9×: %.4f %%", where, need, at, below)
				require.LessOrEqual(t, at, 1.0, where)
				require.GreaterOrEqual(t, at, 0.9, where)
				require.Greater(t, below, 1.0, where)
				if st.Topology == "rc-buffer" && len(st.Parts) == 2 {
					least := sec.Realized.F0Hz / math.Sqrt(1/(0.99*0.99)-1)
					require.GreaterOrEqual(t, need, least*(1-1e-6), where)
					require.LessOrEqual(t, need, 1.1*least, where)
				}
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

// TestConversionResistorWindow: the conversion's resistors are 10 kΩ
// inside the resistor window, and inside the window when it excludes
// 10 kΩ (E96's value nearest the window's geometric mean, √(20k·200k) =
// 63.2 kΩ: 63.4 kΩ, IEC 60063).
func TestConversionResistorWindow(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, window string
		want         float64
	}{
		{"default", "", 10e3},
		{"above 10k", `, "resistor_range_ohm": [20000, 200000]`, 63.4e3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes([]byte(`{"response": "lowpass", "approximation": "elliptic", "order": 3, "passband_hz": 1000, "stopband_atten_db": 40,
			  "resistor_series": "E96", "topology": "fully-differential"` + tc.window + `}`))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			ch, err := d.Chain()
			require.NoError(t, err)
			_, conv, ok := ch.Stages[len(ch.Stages)-1].SplitConversion()
			require.True(t, ok)
			require.Len(t, conv.Parts, 4)
			for _, p := range conv.Parts {
				require.InEpsilon(t, tc.want, p.Value, 1e-12, p.Ref)
			}
		})
	}
}
