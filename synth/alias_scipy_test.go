package synth_test

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// scipyAliasOrder is one record of testdata/scipy/alias.json: the lowest
// order scipy.signal's buttord / cheb1ord / cheb2ord / ellipord (analog=True;
// Debian's python3-scipy, see gen_alias.py) find for the lowpass mask a
// converter implies: wp = fp, ws = fs − fp, gpass = Amax, gstop = the alias
// attenuation (given, or 6.02·bits + 1.76 dB).
type scipyAliasOrder struct {
	Function         string   `json:"function"`
	Bits             int      `json:"bits"`
	SampleRateHz     float64  `json:"sample_rate_hz"`
	PassbandHz       float64  `json:"passband_hz"`
	PassbandRippleDB float64  `json:"passband_ripple_db"`
	AliasAttenDB     *float64 `json:"alias_atten_db"`
	StopbandHz       float64  `json:"stopband_hz"`
	Gstop            float64  `json:"gstop"`
	Order            int      `json:"order"`
	Frac             float64  `json:"fractional_order"`
}

// TestConverterStopbandOrderAgainstSciPy: a lowpass spec with a converter
// and no stopband_hz takes fs − fp and the alias attenuation as its
// stopband (INTERFACE.md), and its lowest order (mask.min_order, and the
// design's order when order is 0) is scipy's for that mask, exactly; a
// mask that needs more than order 20 is an error naming stopband_hz.
func TestConverterStopbandOrderAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../testdata/scipy/alias.json")
	require.NoError(t, err)
	var data struct {
		Orders []scipyAliasOrder `json:"orders"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.NotEmpty(t, data.Orders)
	over := 0
	for i, rec := range data.Orders {
		if rec.Order > synth.MaxOrder {
			over++
		}
		name := fmt.Sprintf("%d-%s-%dbit-%g", i, rec.Function, rec.Bits, rec.SampleRateHz)
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
			conv := `"bits": ` + strconv.Itoa(rec.Bits) + `, "sample_rate_hz": ` + num(rec.SampleRateHz) + `, "full_scale_vpp": 2`
			if rec.AliasAttenDB != nil {
				conv += `, "alias_atten_db": ` + num(*rec.AliasAttenDB)
			}
			spec := `{"response": "lowpass", "approximation": "` + scipyApprox[rec.Function] + `", "passband_hz": ` + num(rec.PassbandHz) +
				`, "passband_ripple_db": ` + num(rec.PassbandRippleDB) + `, "converter": {` + conv + `}}`
			s, err := synth.ParseSpecBytes([]byte(spec))
			require.NoError(t, err, spec)
			require.True(t, s.StopbandFromConverter(), spec)
			// fs − fp and the attenuation, as gen_alias.py computed them
			// (the default 6.02·bits + 1.76 dB is common practice).
			require.Equal(t, []float64{rec.StopbandHz}, s.StopbandHz)
			require.InDelta(t, rec.Gstop, s.StopbandAttenDB, 1e-12)
			require.InDelta(t, rec.Gstop, s.Converter.AliasAttenDB, 1e-12)

			d, err := synth.SynthesizeIdeal(context.Background(), s)
			if rec.Order > synth.MaxOrder {
				fe, ok := synth.IsFieldError(err)
				require.True(t, ok, "scipy needs order %d; got %v", rec.Order, err)
				require.Equal(t, "stopband_hz", fe.Field, "scipy needs order %d; got %v", rec.Order, err)
				return
			}
			require.NoError(t, err, spec)
			require.NotNil(t, d.Mask.MinOrder)
			// scipy's order (fractional bound in the message).
			require.Equal(t, rec.Order, *d.Mask.MinOrder, "scipy fractional order %.6f", rec.Frac)
			require.Equal(t, rec.Order, d.Order)
		})
	}
	require.Positive(t, over, "the table must hold masks beyond order %d", synth.MaxOrder)
	require.Less(t, over, len(data.Orders))
}
