package response_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/response"
)

func TestGoldenMax(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64 // closed-form maximum on [a, b]
	}{
		{"parabola", func(x float64) float64 { return 3 - (x-0.3)*(x-0.3) }, -1, 2, 3},
		{"sine", math.Sin, 0, 3, 1},
		{"monotonic: the end", func(x float64) float64 { return x }, 0, 1, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.InDelta(t, tc.want, response.GoldenMax(tc.f, tc.a, tc.b), 1e-8)
		})
	}
}
