package main

import (
	"context"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// TestDifferentialBoardAgainstNgspice runs a differential board (the
// geophone example, all stages fully differential, and the elliptic
// vibration example, single-ended sections converted after the last, each
// on its 5 V supply, with an op-amp offset, bias
// currents, input capacitance and output resistance added) in ngspice
// (Debian package ngspice, the outside reference):
//
//   - .op: v(out) = v(outp) − v(outn), the differential output offset,
//     against dc.output_offset_v within 1 % (no reference to subtract:
//     both outputs sit around it), and every swing node's DC level less
//     the reference against its dc_v within 1 % plus 2 µV;
//   - .ac at every node the swing lists (both FDA outputs of each stage
//     and each FDA's + input): the largest |v(node)| over the sweep
//     against gain_max within 2 % plus 1e-3 (a thousandth of the full
//     scale: the inputs of a differentially driven FDA carry only
//     microvolts per volt, which the deck's stage-to-stage loading through
//     the output resistance, which the swing leaves out (it takes each
//     stage unloaded), raises to about 2e-4).
func TestDifferentialBoardAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, name := range []string{"geophone-differential-sigma-delta", "vibration-elliptic-differential-sigma-delta"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			differentialBoard(t, name)
		})
	}
}

// differentialBoard is TestDifferentialBoardAgainstNgspice for one
// example.
func differentialBoard(t *testing.T, name string) {
	example, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", name+".json"))
	require.NoError(t, err)
	var obj map[string]any
	require.NoError(t, json.Unmarshal(example, &obj))
	op := obj["opamp"].(map[string]any)
	op["offset_v"], op["bias_a"], op["input_capacitance_farad"], op["output_resistance_ohm"] = 1e-3, 50e-9, 3e-12, 40
	delete(obj, "montecarlo")
	specJSON, err := json.Marshal(obj)
	require.NoError(t, err)
	spec := string(specJSON)

	code, out, errOut := runCLI(t, spec, "design", "-spec", "-")
	require.Equal(t, exitOK, code, errOut)
	var d boardDesign
	require.NoError(t, json.Unmarshal([]byte(out), &d))
	require.NotZero(t, d.DC.OutputOffsetV)

	code, deck, errOut := runCLI(t, spec, "export", "-spec", "-", "-as", "spice")
	require.Equal(t, exitOK, code, errOut)
	var nodes []string
	for _, sec := range d.Sections {
		for _, n := range sec.Swing.Nodes {
			nodes = append(nodes, n.Node)
		}
	}
	require.Contains(t, nodes, circuit.OutP)
	require.Contains(t, nodes, circuit.OutNNode)
	vecs := "v(out)"
	for _, n := range nodes {
		vecs += " v(" + n + ")"
	}
	deck = strings.Replace(deck, "wrdata ac.data v(out)\n", "wrdata ac.data "+vecs+"\n", 1)
	// The operating point of every swing node too, after v(out).
	deck = strings.Replace(deck, "wrdata "+circuit.OpDataFile+" v(out)\n", "wrdata "+circuit.OpDataFile+" "+vecs+"\n", 1)
	dir := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	_, v, err := spicerun.RunAll(ctx, dir, []byte(deck))
	require.NoError(t, err)
	require.Len(t, v, 1+len(nodes))

	ops := readOpRow(t, filepath.Join(dir, circuit.OpDataFile))
	require.Len(t, ops, 1+len(nodes))
	opOut := ops[0]
	t.Logf("differential output offset: ngspice %.6g V, design %.6g V", opOut, d.DC.OutputOffsetV)
	require.InDelta(t, d.DC.OutputOffsetV, opOut, 0.01*math.Abs(d.DC.OutputOffsetV)+1e-9)
	ref := d.Spec.Supply.ReferenceV
	k := 1
	for _, sec := range d.Sections {
		for _, n := range sec.Swing.Nodes {
			t.Logf("node %s: dc_v %.6g V, ngspice %.6g V", n.Node, n.DCV, ops[k]-ref)
			require.InDelta(t, n.DCV, ops[k]-ref, 0.01*math.Abs(n.DCV)+2e-6, "node %s dc_v", n.Node)
			k++
		}
	}
	k = 1
	for _, sec := range d.Sections {
		for _, n := range sec.Swing.Nodes {
			peak := 0.0
			for _, x := range v[k] {
				peak = math.Max(peak, cmplx.Abs(x))
			}
			t.Logf("node %s: gain_max %.6g, ngspice %.6g", n.Node, n.GainMax, peak)
			require.InDelta(t, n.GainMax, peak, 0.02*n.GainMax+1e-3, "node %s", n.Node)
			k++
		}
	}
}

// readOpRow returns the values of the operating-point data file's one
// data row after its first column (the plot's scale).
func readOpRow(t *testing.T, path string) []float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	f := strings.Fields(lines[len(lines)-1])
	var out []float64
	for _, x := range f[1:] {
		v, err := strconv.ParseFloat(x, 64)
		require.NoError(t, err)
		out = append(out, v)
	}
	return out
}
