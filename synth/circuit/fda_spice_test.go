package circuit_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"math/cmplx"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// diffChains are differential chains: a differential source into two
// fully differential MFB lowpass stages, and a single-ended source
// converted by the first of them.
func diffChains(t *testing.T) map[string][]circuit.Stage {
	t.Helper()
	mk := func(diffIn bool, scale float64) circuit.Stage {
		st, err := mfbLP(mfR1, mfR2*scale, mfR3, mfC1, mfC2).ToFullyDifferential(diffIn)
		require.NoError(t, err)
		return st
	}
	a, b := mk(true, 1), mk(true, 2.2)
	return map[string][]circuit.Stage{
		"differential-source": {a, b},
		"single-ended-source": {a.SingleEndedInput(), b},
		"one-stage":           {b},
	}
}

// TestDiffDeckFormat: the deck of a differential chain drives inp and
// inn from in (differential source), instances the FDA subcircuit with
// four signal pins, makes out = v(outp) − v(outn), and names the parts
// as the bill of materials does (R101A, R101B, ...).
func TestDiffDeckFormat(t *testing.T) {
	t.Parallel()
	chain := circuit.Chain{Model: singlePole, Stages: diffChains(t)["differential-source"]}
	var buf bytes.Buffer
	require.NoError(t, chain.WriteSPICE(&buf, circuit.SpiceOptions{PointsPerDecade: 10}))
	_, elems, dots := parseDeck(t, buf.String())
	byName := map[string]deckElement{}
	var refs []string
	for _, e := range elems {
		byName[e.name] = e
		if strings.HasPrefix(e.name, "R") || strings.HasPrefix(e.name, "C") {
			refs = append(refs, e.name)
		}
		if strings.HasPrefix(e.name, "X") {
			refs = append(refs, strings.TrimPrefix(e.name, "X"))
		}
	}
	require.Equal(t, []string{"inp", "0", "in", "0"}, byName["Einp"].nodes)
	require.Equal(t, "0.5", byName["Einp"].value)
	require.Equal(t, "-0.5", byName["Einn"].value)
	require.Equal(t, []string{"out", "0", "outp", "outn"}, byName["Eout"].nodes)
	require.Equal(t, "pw_fda", byName["XU201"].value)
	require.Equal(t, []string{"s2_n2b", "s2_n2a", "outp", "outn"}, byName["XU201"].nodes)
	require.Equal(t, []string{"inp", "s1_n1a"}, byName["R101A"].nodes)
	require.Equal(t, []string{"inn", "s1_n1b"}, byName["R101B"].nodes)
	require.Equal(t, []string{"s1_outa", "s2_n1a"}, byName["R201A"].nodes)
	require.Equal(t, []string{"s1_outb", "s2_n1b"}, byName["R201B"].nodes)
	require.Contains(t, dots, ".subckt pw_fda inp inn outp outn")
	require.NotContains(t, dots, ".subckt pw_opamp inp inn out")

	buf.Reset()
	require.NoError(t, chain.WriteBOM(&buf))
	rows, err := csv.NewReader(&buf).ReadAll()
	require.NoError(t, err)
	var bomRefs []string
	for _, r := range rows[1:] {
		bomRefs = append(bomRefs, r[0])
		if r[0] == "U101" {
			require.Equal(t, circuit.KindFDA, r[1])
		}
	}
	require.Equal(t, bomRefs, refs, "deck elements (X prefix dropped) are the BOM refs")
}

// TestNgspiceDifferential runs the differential decks through ngspice
// (reference: ngspice, an independent SPICE3 implementation reading the
// deck as written) and compares v(out) = v(outp) − v(outn) with
// Chain.Response: ideal and single-pole models, and the parasitics (input
// capacitance, output resistance on both outputs) on one stage.
func TestNgspiceDifferential(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for name, stages := range diffChains(t) {
		for _, md := range []struct {
			name  string
			model circuit.Model
		}{{"ideal", ideal}, {"single-pole-1MHz", singlePole}, {"parasitics", circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 5e-12, OutputResistanceOhm: 50}}} {
			t.Run(name+"/"+md.name, func(t *testing.T) {
				t.Parallel()
				if md.model.OutputResistanceOhm > 0 && len(stages) > 1 {
					// The chain's stages multiply: a later stage's load on
					// the output resistance is not in the product (as for
					// single-ended chains), so only one stage is checked.
					t.Skip("output resistance: one-stage chain only")
				}
				chain := circuit.Chain{Stages: stages, Model: md.model}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{PointsPerDecade: 20}))
				ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
				defer cancel()
				freq, v, err := spicerun.RunDir(ctx, t.TempDir(), deck.Bytes())
				require.NoError(t, err)
				require.Greater(t, len(freq), 50)
				h, err := chain.Response(nil, freq)
				require.NoError(t, err)
				var worstDB, worstDeg float64
				for i, f := range freq {
					dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(h[i]))
					dDeg := cmplx.Phase(v[i]/h[i]) * 180 / math.Pi
					require.LessOrEqual(t, math.Abs(dDB), spiceDBTol, "magnitude at %v Hz: ngspice %v, Response %v", f, v[i], h[i])
					require.LessOrEqual(t, math.Abs(dDeg), spiceDegTol, "phase at %v Hz", f)
					worstDB, worstDeg = math.Max(worstDB, math.Abs(dDB)), math.Max(worstDeg, math.Abs(dDeg))
				}
				t.Logf("%d points: worst |Δ| %.3g dB, %.3g°", len(freq), worstDB, worstDeg)
			})
		}
	}
}
