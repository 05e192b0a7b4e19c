package verify_test

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// Test circuits: stage-local nodes, output "out". Resistors 1 %,
// capacitors 5 %.

func res(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Resistor, A: a, B: b, Value: v, Exact: v, TolerancePct: 1}
}

func capa(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Capacitor, A: a, B: b, Value: v, Exact: v, TolerancePct: 5}
}

// rcBuffer: R1 in→n1, C1 n1→ground, follower U1 n1→out. f0 = 1/(2πRC).
func rcBuffer(r, c float64) circuit.Stage {
	return circuit.Stage{
		Topology: "rc-buffer",
		Parts:    []circuit.Part{res("R1", "in", "n1", r), capa("C1", "n1", "0", c)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
}

// sallenKeyLP: unity-gain Sallen-Key lowpass, R1 in→n1, R2 n1→n2, C1
// n1→out (feedback), C2 n2→ground, follower U1 n2→out.
func sallenKeyLP(r1, r2, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			res("R1", "in", "n1", r1), res("R2", "n1", "n2", r2),
			capa("C1", "n1", "out", c1), capa("C2", "n2", "0", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// sallenKeyHP: unity-gain Sallen-Key highpass, C1 in→n1, C2 n1→n2, R1
// n1→out, R2 n2→ground.
func sallenKeyHP(c1, c2, r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			capa("C1", "in", "n1", c1), capa("C2", "n1", "n2", c2),
			res("R1", "n1", "out", r1), res("R2", "n2", "0", r2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// mfbLP: multiple-feedback lowpass, R1 in→n1, R2 n1→out, R3 n1→n2, C1
// n1→ground, C2 n2→out, U1 + at ground, − at n2.
func mfbLP(r1, r2, r3, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "multiple-feedback",
		Parts: []circuit.Part{
			res("R1", "in", "n1", r1), res("R2", "n1", "out", r2), res("R3", "n1", "n2", r3),
			capa("C1", "n1", "0", c1), capa("C2", "n2", "out", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n2", Out: "out"}},
		Out:    "out",
	}
}

// inverting: R1 in→n1, R2 n1→out, U1 + at ground: a gain stage, no pole.
func inverting(r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "inverting",
		Parts:    []circuit.Part{res("R1", "in", "n1", r1), res("R2", "n1", "out", r2)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n1", Out: "out"}},
		Out:      "out",
	}
}

var (
	ideal      = circuit.Model{Ideal: true}
	singlePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}
)

// exampleChains designs every example spec of testdata/examples with
// polewright and returns its chain by file name: real stages of every
// topology the tool builds (state-variable notches included).
func exampleChains(t *testing.T) map[string]circuit.Chain {
	t.Helper()
	files, err := filepath.Glob("../../testdata/examples/*.json")
	require.NoError(t, err)
	require.NotEmpty(t, files)
	out := map[string]circuit.Chain{}
	for _, f := range files {
		data, err := os.ReadFile(f)
		require.NoError(t, err)
		spec, err := synth.ParseSpecBytes(data)
		require.NoError(t, err, f)
		d, err := synth.Synthesize(context.Background(), spec)
		require.NoError(t, err, f)
		ch, err := d.Chain()
		require.NoError(t, err, f)
		out[filepath.Base(f)] = ch
	}
	return out
}
