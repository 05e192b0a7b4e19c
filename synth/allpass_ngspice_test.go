package synth_test

import (
	"bytes"
	"context"
	"math"
	"math/cmplx"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/section"
)

// equalizerSpecs are designs with a delay equaliser: first- and
// second-order all-pass stages, lowpass and bandpass.
func equalizerSpecs() map[string]synth.Spec {
	out := map[string]synth.Spec{}
	s := baseSpec(synth.Lowpass, "butterworth")
	s.Order, s.PassbandHz = 4, []float64{1000}
	s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: 2}
	out["butterworth4-lowpass"] = s
	s = baseSpec(synth.Lowpass, "chebyshev1")
	s.Order, s.PassbandHz, s.PassbandRippleDB = 5, []float64{2000}, 0.5
	s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: 5}
	out["chebyshev1-5-lowpass"] = s
	s = baseSpec(synth.Bandpass, "butterworth")
	s.Order, s.PassbandHz = 2, []float64{800, 1250}
	s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: 5}
	out["butterworth2-bandpass"] = s
	s = baseSpec(synth.Lowpass, "bessel")
	s.Order, s.PassbandHz, s.PassbandRippleDB = 3, []float64{1000}, 3.0103
	s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: 0.5}
	out["bessel3-lowpass"] = s
	return out
}

// TestEqualizerDecksAgainstNgspice runs the SPICE deck of each
// equalizerSpecs design in ngspice -b: (a) exact values and ideal op-amps
// against the design's transfer function, all-pass sections included,
// within 0.01 dB and 0.1° wherever |H| ≥ −80 dB; (b) series values and a
// 1 MHz op-amp against the as-built response, which is what
// response.realized_db holds (checked equal on the design's grid),
// within 0.05 dB where it is above −120 dB. The reference is ngspice
// (Debian package).
func TestEqualizerDecksAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for name, base := range equalizerSpecs() {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
			defer cancel()

			s := base
			s.Values, s.OpAmp.Ideal, s.OpAmp.GBWHz, s.OpAmp.DCGainDB = "exact", true, 0, 0
			d := synthesize(t, s)
			nAllpass := 0
			for _, sec := range d.Sections {
				if sec.Kind == section.Allpass {
					nAllpass++
					require.Contains(t, sec.Topology, "allpass")
				}
			}
			require.Positive(t, nAllpass)
			freq, v := runDeck(ctx, t, d)
			h := d.TransferFunction()
			checked, worstDB, worstDeg := 0, 0.0, 0.0
			for i, f := range freq {
				want := h.AtOmega(2 * math.Pi * f)
				wantDB := 20 * math.Log10(cmplx.Abs(want))
				if wantDB < -80 {
					continue
				}
				checked++
				dDB := 20*math.Log10(cmplx.Abs(v[i])) - wantDB
				dp := (cmplx.Phase(v[i]) - cmplx.Phase(want)) * 180 / math.Pi
				dp = math.Mod(dp+540, 360) - 180
				worstDB, worstDeg = math.Max(worstDB, math.Abs(dDB)), math.Max(worstDeg, math.Abs(dp))
				require.InDelta(t, 0, dDB, 0.01, "magnitude at %g Hz", f)
				require.InDelta(t, 0, dp, 0.1, "phase at %g Hz", f)
			}
			require.Greater(t, checked, 50)

			s = base
			s.OpAmp.GBWHz = 1e6
			d = synthesize(t, s)
			ch, err := d.Chain()
			require.NoError(t, err)
			grid, err := ch.MagnitudeDB(nil, d.Response.FreqHz)
			require.NoError(t, err)
			for i := range grid {
				require.InDelta(t, math.Max(grid[i], -400), d.Response.RealizedDB[i], 1e-9)
			}
			freq, v = runDeck(ctx, t, d)
			own, err := ch.MagnitudeDB(nil, freq)
			require.NoError(t, err)
			worstBuilt := 0.0
			for i, f := range freq {
				if own[i] < -120 {
					continue
				}
				dDB := own[i] - 20*math.Log10(cmplx.Abs(v[i]))
				worstBuilt = math.Max(worstBuilt, math.Abs(dDB))
				require.InDelta(t, 0, dDB, 0.05, "as-built magnitude at %g Hz", f)
			}
			t.Logf("%d all-pass sections; exact: %.2g dB, %.2g°; series: %.2g dB", nAllpass, worstDB, worstDeg, worstBuilt)
		})
	}
}

// TestEqualizerCircuitEverywhere: the all-pass stages are part of the
// board: the BOM lists their parts, the deck their op-amps, the Monte
// Carlo and the noise run over the whole chain, and the as-built passband
// keeps the filter's (|H| of an all-pass stage is one).
func TestEqualizerCircuitEverywhere(t *testing.T) {
	t.Parallel()
	s := equalizerSpecs()["butterworth4-lowpass"]
	s.MonteCarlo.Trials = 50
	s.DesignMargin.PassbandDB = 0.1 // room for part rounding, filter and all-pass stages alike
	d := synthesize(t, s)
	ch, err := d.Chain()
	require.NoError(t, err)
	require.Len(t, ch.Stages, len(d.Sections))
	var bom, deck bytes.Buffer
	require.NoError(t, ch.WriteBOM(&bom))
	require.NoError(t, ch.WriteSPICE(&deck, circuit.SpiceOptions{}))
	parts := 0
	for _, sec := range d.Sections {
		parts += len(sec.Components)
		for _, c := range sec.Components {
			if sec.Kind == section.Allpass {
				require.True(t, strings.HasPrefix(sec.TopologyReason, "delay equaliser: "), sec.TopologyReason)
				require.Contains(t, bom.String(), c.Ref)
				require.Contains(t, deck.String(), c.Ref)
			}
		}
	}
	require.Positive(t, parts)
	require.NotNil(t, d.MonteCarlo)
	require.NotNil(t, d.Noise)
	require.NotNil(t, d.Built)
	require.True(t, d.Built.MeetsMask, "as built: %+v", d.Built)
	require.Contains(t, deck.String(), "* stage 3: allpass")
}
