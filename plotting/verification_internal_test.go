package plotting

import (
	"bytes"
	"context"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// Styles of the verification marks as vgsvg writes them.
const (
	quantStroke     = "stroke:#A8323E;stroke-width:1.1;stroke-dasharray:6,3"
	noiseStroke     = "stroke:#1D4E89;stroke-width:1.4"
	settleStroke    = "stroke:#2E7D32"
	settleFillSVG   = "fill:#2D7C31"
	envelopeFillSVG = "fill:#D86B05"
)

// A Chebyshev I anti-alias lowpass of our own in front of a 16-bit
// converter at 48 kHz (4 Vpp), with and without a converter and trials.
const (
	benchSpec = `{"approximation": "chebyshev1", "passband_hz": 10000, "stopband_hz": 28000,
		"passband_ripple_db": 0.5, "stopband_atten_db": 60,
		"converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4},
		"montecarlo": {"trials": 200, "seed": 3}}`
	benchSpecBare = `{"approximation": "chebyshev1", "passband_hz": 10000, "stopband_hz": 28000,
		"passband_ripple_db": 0.5, "stopband_atten_db": 60}`
)

// builtDesign synthesises spec with circuits and the verification fields.
func builtDesign(t testing.TB, spec string) *synth.Design {
	t.Helper()
	s, err := synth.ParseSpec(strings.NewReader(spec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	require.NotNil(t, d.Noise)
	require.NotNil(t, d.Step)
	return d
}

// TestNoisePlot checks the noise plot's structure: the density curve, the
// quantisation reference only with a converter, log-log axes with fixed
// or numeric text only.
func TestNoisePlot(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name      string
		spec      string
		reference bool
	}{{"converter", benchSpec, true}, {"no converter", benchSpecBare, false}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := builtDesign(t, tc.spec)
			var buf bytes.Buffer
			require.NoError(t, Noise(&buf, d, Options{}))
			out := buf.Bytes()
			require.True(t, bytes.HasPrefix(out, []byte("<?xml")))
			doc := parseSVG(t, out)
			require.Equal(t, "svg", doc.Root)
			// The curve and its legend sample; the curve is drawn through
			// the analysis' frequencies, the points the drawing cannot show
			// left out (curve.Plot), so it keeps some but not all of them.
			require.Equal(t, 2, doc.count(noiseStroke))
			longest := 0
			for _, p := range doc.Paths {
				if strings.Contains(p.Style, noiseStroke) {
					longest = max(longest, strings.Count(p.D, "L"))
					require.NotContains(t, p.D, "NaN")
				}
			}
			require.GreaterOrEqual(t, longest, 10)
			require.Less(t, longest, len(d.Noise.FreqHz))
			if tc.reference {
				require.Equal(t, 2, doc.count(quantStroke), "the LSB/√12 line and its legend sample")
			} else {
				require.Zero(t, doc.count(quantStroke))
			}
			for _, s := range doc.Texts {
				switch {
				case s == "Frequency (Hz)", s == noiseName, s == quantName, strings.HasPrefix(s, "Output noise ("):
				default:
					require.Regexp(t, `^[0-9]+(\.[0-9]+)?[GMkmµ]?$`, s)
				}
			}
		})
	}

	// Non-finite, zero and missing densities are left out; an empty
	// analysis still draws axes.
	d := builtDesign(t, benchSpec)
	for _, mutate := range []func(n *synth.NoiseReport){
		func(n *synth.NoiseReport) {
			n.OutputVPerRtHz[3], n.OutputVPerRtHz[4], n.FreqHz[5] = math.NaN(), 0, math.Inf(1)
		},
		func(n *synth.NoiseReport) { n.OutputVPerRtHz = n.OutputVPerRtHz[:10] },
		func(n *synth.NoiseReport) { n.FreqHz, n.OutputVPerRtHz = nil, nil },
	} {
		bad := *d
		n := *d.Noise
		n.FreqHz, n.OutputVPerRtHz = slices.Clone(n.FreqHz), slices.Clone(n.OutputVPerRtHz)
		mutate(&n)
		bad.Noise = &n
		var buf bytes.Buffer
		require.NoError(t, Noise(&buf, &bad, Options{}))
		for _, p := range parseSVG(t, buf.Bytes()).Paths {
			require.NotContains(t, p.D, "NaN")
			require.NotContains(t, p.D, "Inf")
		}
	}

	var buf bytes.Buffer
	require.ErrorIs(t, Noise(&buf, nil, Options{}), ErrNilDesign)
	require.ErrorIs(t, Noise(&buf, idealDesign(t, lowpassSpec), Options{}), ErrNoNoise)
	require.Zero(t, buf.Len())
}

// TestStepSettling checks the settling marks of the step plot of a design
// with Design.Step: the band shaded in both panels, the marker, and a
// second panel; without Design.Step the plot is as before (the goldens).
func TestStepSettling(t *testing.T) {
	t.Parallel()
	d := builtDesign(t, benchSpec)
	var buf bytes.Buffer
	require.NoError(t, Step(&buf, d, Options{}))
	doc := parseSVG(t, buf.Bytes())
	require.Equal(t, 2, doc.count(settleFillSVG), "the band in the step panel and in the distance panel")
	require.GreaterOrEqual(t, doc.count(settleStroke), 3, "the band's edge, the marker in both panels and its legend sample")
	texts := strings.Join(doc.Texts, "|")
	require.Contains(t, texts, "settled to ±½ LSB: ")
	require.Contains(t, texts, "Distance from final (shaded: ±½ LSB)")
	require.Contains(t, texts, "ppm")
	require.Contains(t, texts, "Time (")

	// Without a converter the band is ±0.1 %.
	bare := builtDesign(t, benchSpecBare)
	buf.Reset()
	require.NoError(t, Step(&buf, bare, Options{}))
	require.Contains(t, strings.Join(parseSVG(t, buf.Bytes()).Texts, "|"), "settled to ±0.1 %: ")

	// The goldens' designs have no Step: no settling marks.
	buf.Reset()
	require.NoError(t, Step(&buf, idealDesign(t, lowpassSpec), Options{}))
	require.Zero(t, parseSVG(t, buf.Bytes()).count(settleStroke))
}

// TestEnvelope checks the Monte Carlo envelope on the magnitude plot: two
// shaded bands (and their legend samples) with a design that has trials,
// none without.
func TestEnvelope(t *testing.T) {
	t.Parallel()
	d := builtDesign(t, benchSpec)
	require.NotNil(t, d.MonteCarlo)
	var buf bytes.Buffer
	require.NoError(t, Bode(&buf, d, Options{}))
	doc := parseSVG(t, buf.Bytes())
	require.Equal(t, 4, doc.count(envelopeFillSVG))
	texts := strings.Join(doc.Texts, "|")
	require.Contains(t, texts, envelopeOuterName)
	require.Contains(t, texts, envelopeInnerName)

	buf.Reset()
	require.NoError(t, Bode(&buf, builtDesign(t, benchSpecBare), Options{}))
	require.Zero(t, parseSVG(t, buf.Bytes()).count(envelopeFillSVG))

	// An envelope of mismatched or non-finite data draws nothing and does
	// not fail.
	broken := *d
	mc := *d.MonteCarlo
	mc.Envelope.MinDB = mc.Envelope.MinDB[:1]
	mc.Envelope.P01DB = nil
	broken.MonteCarlo = &mc
	require.Empty(t, envelopeBands(broken.MonteCarlo, -100, 10))
	buf.Reset()
	require.NoError(t, Bode(&buf, &broken, Options{}))
}

func TestErrorTicks(t *testing.T) {
	t.Parallel()
	require.Equal(t, "100 %", errorLabel(1))
	require.Equal(t, "0.1 %", errorLabel(1e-3))
	require.Equal(t, "100 ppm", errorLabel(1e-4))
	require.Equal(t, "0.01 ppm", errorLabel(1e-8))
	ticks := errorTicks(1e-8, 3)
	var labels []string
	for _, tk := range ticks {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	// Nine decades: every other one labelled, counting down from the top.
	require.Equal(t, []string{"0.01 ppm", "1 ppm", "100 ppm", "1 %", "100 %"}, labels)
	require.Equal(t, "1000", plainNumber(1000))
	require.Equal(t, "0.01", plainNumber(0.01))
	require.Equal(t, "828 µs", formatSeconds(828e-6))
}
