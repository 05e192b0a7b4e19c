package synth_test

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// scipyOrder is one record of testdata/scipy/proto.json's "orders": the
// inputs and outputs of scipy.signal.buttord / cheb1ord / cheb2ord /
// ellipord with analog=True (Debian's python3-scipy; see gen_proto.py).
type scipyOrder struct {
	Btype    string    `json:"btype"`
	Function string    `json:"function"`
	Gpass    float64   `json:"gpass"`
	Gstop    float64   `json:"gstop"`
	Order    int       `json:"order"`
	Wp       []float64 `json:"wp"`
	Ws       []float64 `json:"ws"`
	Frac     float64   `json:"fractional_order"`
}

var scipyApprox = map[string]string{
	"buttord": "butterworth", "cheb1ord": "chebyshev1", "cheb2ord": "chebyshev2", "ellipord": "elliptic",
}

// TestMinOrderAgainstSciPy checks the lowest order of whole specs — every
// response, the band transformations and the bandstop edge arrangement
// included — against scipy's *ord functions, exactly.
func TestMinOrderAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../testdata/scipy/proto.json")
	require.NoError(t, err)
	var data struct {
		Orders []scipyOrder `json:"orders"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	checked := map[string]int{}
	for i, rec := range data.Orders {
		name := fmt.Sprintf("%d-%s-%s", i, rec.Btype, rec.Function)
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			s := baseSpec(synth.Response(rec.Btype), scipyApprox[rec.Function])
			s.PassbandRippleDB, s.StopbandAttenDB = rec.Gpass, rec.Gstop
			// scipy's edges are in rad/s; the order depends only on their
			// ratios, so they are scaled to put the first passband edge at
			// 1 kHz, where the default part windows can build every stage.
			k := 1000 / rec.Wp[0]
			for _, w := range rec.Wp {
				s.PassbandHz = append(s.PassbandHz, w*k)
			}
			for _, w := range rec.Ws {
				s.StopbandHz = append(s.StopbandHz, w*k)
			}
			if err := s.Validate(); err != nil {
				t.Skipf("outside polewright's spec range: %v", err)
			}
			d, err := synth.SynthesizeIdeal(context.Background(), s)
			if rec.Order > synth.MaxOrder {
				fe, ok := synth.IsFieldError(err)
				require.True(t, ok, "scipy needs order %d; got %v", rec.Order, err)
				require.Contains(t, fe.Reason, fmt.Sprintf("order %d", rec.Order))
				return
			}
			require.NoError(t, err)
			require.Equal(t, rec.Order, d.Order, "scipy fractional order %.6f", rec.Frac)
			require.True(t, d.MeetsMask)
		})
		checked[rec.Btype]++
	}
	for _, b := range []string{"lowpass", "highpass", "bandpass", "bandstop"} {
		require.Positive(t, checked[b], b)
	}
}
