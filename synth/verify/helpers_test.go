package verify_test

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
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

// The textbook stages of package circuittest, under the short names the
// tests use.
var (
	res         = circuittest.Res
	capa        = circuittest.Cap
	rcBuffer    = circuittest.RCBuffer
	sallenKeyLP = circuittest.SallenKeyLP
	sallenKeyHP = circuittest.SallenKeyHP
	mfbLP       = circuittest.MFBLP
	inverting   = circuittest.Inverting
	ideal       = circuittest.Ideal
	singlePole  = circuittest.SinglePole
)
