package proto_test

import (
	"encoding/json"
	"fmt"
	"math/cmplx"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// TestNewPrototypesMatchNumPy compares the optimum-L and Gaussian poles
// with testdata/scipy/newproto.json, written by gen_newproto.py: the
// defining polynomials built there in exact fractions (optimum-L) or from
// SciPy's brentq (the Gaussian scale), expanded in s and rooted by NumPy's
// companion-matrix eigenvalues, orders 1–12. An independent route: no
// Legendre basis, no Aberth iteration.
func TestNewPrototypesMatchNumPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scipy", "newproto.json"))
	require.NoError(t, err)
	var data struct {
		ScipyVersion string     `json:"scipy_version"`
		Prototypes   []scipyZPK `json:"prototypes"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.NotEmpty(t, data.ScipyVersion)
	require.Len(t, data.Prototypes, 2*3*12)
	for _, r := range data.Prototypes {
		t.Run(fmt.Sprintf("%s/n=%d/rp=%g", r.Function, r.Order, r.Rp), func(t *testing.T) {
			t.Parallel()
			h, err := proto.Lowpass(proto.Approximation(r.Function), r.Order, r.Rp, 0)
			require.NoError(t, err)
			require.Len(t, h.Poles, len(r.Poles))
			for i, p := range r.Poles {
				want := complex(p[0], p[1])
				// Same canonical order; 1e-9 relative: the power-basis
				// polynomial of degree 2n (coefficients spanning up to
				// 1e-9 at n = 12) limits NumPy's roots, not ours.
				require.InDelta(t, 0, cmplx.Abs(h.Poles[i]-want)/cmplx.Abs(want), 1e-9, "pole %d: got %v, NumPy %v", i, h.Poles[i], want)
			}
			require.InEpsilon(t, r.Gain, h.Gain, 1e-9)
		})
	}
}
