package circuit_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/internal/benchchain"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// spiceChains are the chains checked against ngspice, each with both
// op-amp models.
func spiceChains() []struct {
	name   string
	stages []circuit.Stage
} {
	return []struct {
		name   string
		stages []circuit.Stage
	}{
		{"rc-buffer", []circuit.Stage{rcBuffer(rcR, rcC)}},
		{"sallen-key-lowpass", []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}},
		{"mfb-lowpass", []circuit.Stage{mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}},
		{"two-stage", []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2), mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}},
		{"sallen-key-highpass", []circuit.Stage{sallenKeyHP(hpC1, hpC2, hpR1, hpR2)}},
		{"butterworth-8th", benchchain.Chain(ideal).Stages},
	}
}

// specText stands for the spec a deck is exported from.
const specText = `{"response": "lowpass",
  "passband_hz": 1000, "note": "R in Ω, C in F"}`

// Tolerances of the simulator comparison (the contract of the export).
const (
	spiceDBTol  = 0.01 // dB
	spiceDegTol = 0.1  // degrees
)

// TestNgspice writes each chain's deck, runs it through ngspice in batch
// mode and compares the simulator's v(out) (reference: ngspice 39, an
// independent SPICE3 implementation reading the deck as written) with
// Chain.Response at the simulator's frequencies.
func TestNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, ch := range spiceChains() {
		for _, md := range []struct {
			name  string
			model circuit.Model
		}{{"ideal", ideal}, {"single-pole-1MHz", singlePole}} {
			t.Run(ch.name+"/"+md.name, func(t *testing.T) {
				t.Parallel()
				chain := circuit.Chain{Stages: ch.stages, Model: md.model}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{Description: specText, PointsPerDecade: 50}))
				ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
				defer cancel()
				freq, v, err := spicerun.RunDir(ctx, t.TempDir(), deck.Bytes())
				require.NoError(t, err)
				require.Greater(t, len(freq), 200)
				h, err := chain.Response(nil, freq)
				require.NoError(t, err)
				var worstDB, worstDeg float64
				for i, f := range freq {
					dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(h[i]))
					dDeg := cmplx.Phase(v[i]/h[i]) * 180 / math.Pi
					require.LessOrEqual(t, math.Abs(dDB), spiceDBTol, "magnitude at %v Hz: ngspice %v, Response %v", f, v[i], h[i])
					require.LessOrEqual(t, math.Abs(dDeg), spiceDegTol, "phase at %v Hz: ngspice %v, Response %v", f, v[i], h[i])
					worstDB, worstDeg = math.Max(worstDB, math.Abs(dDB)), math.Max(worstDeg, math.Abs(dDeg))
				}
				t.Logf("%d points %.4g..%.4g Hz: worst |Δ| %.3g dB, %.3g°", len(freq), freq[0], freq[len(freq)-1], worstDB, worstDeg)
			})
		}
	}
}

// deckElement is one element line of a deck outside the subcircuit.
type deckElement struct {
	name  string
	nodes []string
	value string // last field: a number, or the subcircuit name
}

// parseDeck splits a deck into its comment header, element lines (outside
// .subckt) and dot lines.
func parseDeck(t *testing.T, deck string) (header []string, elems []deckElement, dots []string) {
	t.Helper()
	inSub, inControl := false, false
	lines := strings.Split(strings.TrimSuffix(deck, "\n"), "\n")
	for i, line := range lines {
		f := strings.Fields(line)
		switch {
		case strings.HasPrefix(line, "*"):
			if len(elems) == 0 && len(dots) == 0 {
				header = append(header, line)
			}
		case len(f) == 0:
			t.Fatalf("empty line %d", i+1)
		case strings.HasPrefix(f[0], "."):
			dots = append(dots, line)
			switch strings.ToLower(f[0]) {
			case ".subckt":
				inSub = true
			case ".ends":
				inSub = false
			case ".control":
				inControl = true
			case ".endc":
				inControl = false
			}
		case inSub || inControl:
		default:
			elems = append(elems, deckElement{name: f[0], nodes: f[1 : len(f)-1], value: f[len(f)-1]})
		}
	}
	return header, elems, dots
}

// TestDeckFormat checks the deck's contract without running it: header,
// source, output and ground nodes, exact values in plain exponent form,
// the sweep, and that its element names are the bill of materials' refs
// (op-amps with the X prefix).
func TestDeckFormat(t *testing.T) {
	t.Parallel()
	for _, md := range []struct {
		name  string
		model circuit.Model
	}{{"ideal", ideal}, {"single-pole", singlePole}} {
		t.Run(md.name, func(t *testing.T) {
			t.Parallel()
			chain := circuit.Chain{Model: md.model, Stages: []circuit.Stage{
				sallenKeyLP(10.2e3, 22.1e3, 22e-9, 10e-9), mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2), rcBuffer(1.0/3*1e4, rcC),
			}}
			var buf bytes.Buffer
			opt := circuit.SpiceOptions{Title: "lowpass test", Description: specText, PointsPerDecade: 37, StartHz: 2, StopHz: 3e5, DataFile: "x.data"}
			require.NoError(t, chain.WriteSPICE(&buf, opt))
			deck := buf.String()
			require.True(t, strings.HasSuffix(deck, "\n.end\n"), "the deck ends with .end")
			header, elems, dots := parseDeck(t, deck)
			require.Equal(t, "* lowpass test", header[0])
			for _, line := range strings.Split(specText, "\n") {
				require.Contains(t, header, "* "+line, "the description is in the header")
			}
			require.Contains(t, dots, ".ac dec 37 2.00000000000e+00 3.00000000000e+05")
			require.Contains(t, deck, "\nwrdata x.data v(out)\n")
			name, err := spicerun.DataFile(buf.Bytes())
			require.NoError(t, err)
			require.Equal(t, "x.data", name)

			// The source, then the parts with exact values.
			require.Equal(t, deckElement{name: "Vin", nodes: []string{"in", "0", "DC", "0", "AC"}, value: "1"}, elems[0])
			var refs []string
			values := map[string]float64{}
			usesOut := false
			for _, e := range elems[1:] {
				for _, n := range e.nodes {
					usesOut = usesOut || n == "out"
				}
				if strings.HasPrefix(e.name, "X") {
					require.Equal(t, "pw_opamp", e.value)
					require.Len(t, e.nodes, 3)
					refs = append(refs, strings.TrimPrefix(e.name, "X"))
					continue
				}
				refs = append(refs, e.name)
				v, err := strconv.ParseFloat(e.value, 64)
				require.NoError(t, err, "value %q is a plain number (no scale suffix)", e.value)
				mant := e.value[:strings.IndexByte(e.value, 'e')]
				require.GreaterOrEqual(t, len(strings.Trim(strings.ReplaceAll(mant, ".", ""), "-")), 12, "value %q carries ≥ 12 digits", e.value)
				values[e.name] = v
			}
			require.True(t, usesOut, "the filter output is node out")
			for k, st := range chain.Stages {
				for _, p := range st.Parts {
					ref := chain.Ref(k+1, p.Ref)
					require.Equal(t, p.Value, values[ref], "%s is written exactly", ref)
				}
			}

			// The bill of materials lists the same refs in the same order.
			buf.Reset()
			require.NoError(t, chain.WriteBOM(&buf))
			rows, err := csv.NewReader(&buf).ReadAll()
			require.NoError(t, err)
			var bomRefs []string
			for _, r := range rows[1:] {
				bomRefs = append(bomRefs, r[0])
			}
			require.Equal(t, bomRefs, refs, "deck elements (X prefix dropped) are the BOM refs")
		})
	}
}

func TestSpiceOptions(t *testing.T) {
	t.Parallel()
	chain := circuit.Chain{Model: ideal, Stages: []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}}
	tests := []struct {
		name string
		opt  circuit.SpiceOptions
		want string // error substring, or a line the deck must hold
		bad  bool
	}{
		// f0 = 1/(2π√(R1R2C1C2)) ≈ 723 Hz: two decades either side in whole
		// decades, 1 Hz to 100 kHz.
		{"default-sweep", circuit.SpiceOptions{}, ".ac dec 100 1.00000000000e+00 1.00000000000e+05", false},
		{"default-title", circuit.SpiceOptions{}, "* " + circuit.DefaultSpiceTitle, false},
		{"default-data", circuit.SpiceOptions{}, "wrdata " + circuit.DefaultDataFile + " v(out)", false},
		{"title-newline", circuit.SpiceOptions{Title: "a\nb"}, "* a b", false},
		{"bad-points", circuit.SpiceOptions{PointsPerDecade: -1}, "PointsPerDecade", true},
		{"bad-range", circuit.SpiceOptions{StartHz: 10, StopHz: 1}, "StartHz", true},
		{"half-range", circuit.SpiceOptions{StartHz: 10}, "StartHz", true},
		{"bad-data", circuit.SpiceOptions{DataFile: "a b"}, "DataFile", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			err := chain.WriteSPICE(&buf, tc.opt)
			if tc.bad {
				require.ErrorIs(t, err, circuit.ErrInvalid)
				require.ErrorContains(t, err, tc.want)
				require.Zero(t, buf.Len())
				return
			}
			require.NoError(t, err)
			require.Contains(t, strings.Split(buf.String(), "\n"), tc.want)
		})
	}
}
