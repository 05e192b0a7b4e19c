package synth_test

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/section"
)

// TestDelayEqualizerSpec: delay_equalizer is read and echoed as
// INTERFACE.md spells it, and every bad value is a field error naming
// delay_equalizer.max_spread_pct (or delay_equalizer), at the bounds
// (just inside, just outside).
func TestDelayEqualizerSpec(t *testing.T) {
	t.Parallel()
	const base = `{"passband_hz": 1000, "order": 4, "delay_equalizer": %s}`
	for _, tc := range []struct {
		name, eq, field string
		want            float64
	}{
		{"two percent", `{"max_spread_pct": 2}`, "", 2},
		{"lowest", `{"max_spread_pct": 0.01}`, "", 0.01},
		{"highest", `{"max_spread_pct": 100}`, "", 100},
		{"below lowest", `{"max_spread_pct": 0.0099}`, "delay_equalizer.max_spread_pct", 0},
		{"above highest", `{"max_spread_pct": 100.1}`, "delay_equalizer.max_spread_pct", 0},
		{"zero", `{"max_spread_pct": 0}`, "delay_equalizer.max_spread_pct", 0},
		{"negative", `{"max_spread_pct": -2}`, "delay_equalizer.max_spread_pct", 0},
		{"missing", `{}`, "delay_equalizer.max_spread_pct", 0},
		{"string", `{"max_spread_pct": "2"}`, "delay_equalizer.max_spread_pct", 0},
		{"unknown key", `{"max_spread": 2}`, "delay_equalizer.max_spread", 0},
		{"not an object", `2`, "delay_equalizer", 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes([]byte(strings.Replace(base, "%s", tc.eq, 1)))
			if tc.field == "" {
				require.NoError(t, err)
				require.NotNil(t, s.DelayEqualizer)
				require.InDelta(t, tc.want, s.DelayEqualizer.MaxSpreadPct, 0)
				// The echoed spec parses back to the same spec.
				raw, err := json.Marshal(s)
				require.NoError(t, err)
				require.Contains(t, string(raw), `"delay_equalizer":{"max_spread_pct":`)
				back, err := synth.ParseSpecBytes(raw)
				require.NoError(t, err)
				require.Equal(t, s, back)
				return
			}
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "%v", err)
			require.Equal(t, tc.field, fe.Field, fe.Reason)
		})
	}
	// Absent: no equaliser, and nothing echoed.
	s, err := synth.ParseSpecBytes([]byte(`{"passband_hz": 1000, "order": 4}`))
	require.NoError(t, err)
	require.Nil(t, s.DelayEqualizer)
	raw, err := json.Marshal(s)
	require.NoError(t, err)
	require.NotContains(t, string(raw), "delay_equalizer")
}

// TestDelayEqualizerRefusals: a highpass or bandstop passband reaches
// infinite frequency, where the delay falls to zero: refused naming
// delay_equalizer; a target that 8 sections cannot reach is refused
// naming delay_equalizer.max_spread_pct with the best spread found, and
// asking for that spread then succeeds (the search is deterministic and
// its sections do not depend on the target, but for a first-order
// section that meets it and ends the search early).
func TestDelayEqualizerRefusals(t *testing.T) {
	t.Parallel()
	for _, resp := range []string{"highpass", "bandstop"} {
		pass := `1000`
		if resp == "bandstop" {
			pass = `[500, 2000]`
		}
		_, err := synth.ParseSpecBytes([]byte(`{"response": "` + resp + `", "passband_hz": ` + pass + `, "order": 3, "delay_equalizer": {"max_spread_pct": 2}}`))
		fe, ok := synth.IsFieldError(err)
		require.True(t, ok, "%v", err)
		require.Equal(t, "delay_equalizer", fe.Field)
	}

	s := baseSpec(synth.Lowpass, "elliptic")
	s.Order, s.PassbandHz, s.StopbandAttenDB, s.PassbandRippleDB = 7, []float64{1000}, 60, 1
	s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: 0.1}
	_, err := synth.SynthesizeIdeal(context.Background(), s)
	fe, ok := synth.IsFieldError(err)
	require.True(t, ok, "%v", err)
	require.Equal(t, "delay_equalizer.max_spread_pct", fe.Field)
	require.Contains(t, fe.Reason, "8 all-pass sections")
	t.Log(fe.Error())

	// The spread the refusal offers is reached.
	var offered float64
	i := strings.Index(fe.Reason, "ask for a spread of ")
	require.Positive(t, i)
	_, err = fmtSscan(fe.Reason[i+len("ask for a spread of "):], &offered)
	require.NoError(t, err)
	s.DelayEqualizer.MaxSpreadPct = offered
	d, err := synth.SynthesizeIdeal(context.Background(), s)
	require.NoError(t, err)
	n := 0
	for _, sec := range d.Sections {
		if sec.Kind == section.Allpass {
			n++
		}
	}
	require.Positive(t, n)
	require.LessOrEqual(t, n, 8)
}

// fmtSscan reads one number from the front of s.
func fmtSscan(s string, v *float64) (int, error) { return fmt.Sscan(s, v) }
