package synth

import (
	"encoding/json"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/accept"
)

// TestChecksAtThresholds: each check just inside and just outside its
// limit (the thresholds are this package's: YieldTarget, NoiseLossBits,
// SettlingSlack, the op-amp's slew and GBW, margin 0 for the masks).
func TestChecksAtThresholds(t *testing.T) {
	t.Parallel()
	f := func(v float64) *float64 { return &v }
	conv := &Converter{Bits: 16, SampleRateHz: 48000, FullScaleVpp: 4, OutputRateHz: 48000, AliasAttenDB: 98.08}
	spec := Spec{Approximation: "elliptic", PassbandRippleDB: 0.1, StopbandAttenDB: 80, ResistorSeries: "E96",
		OpAmp: OpAmp{GBWHz: 10e6, SlewVPerS: 1e6}, Converter: conv}
	built := func(margin float64) *BuiltReport {
		r := accept.Result{PassMarginDB: margin, StopMarginDB: math.Inf(1), AliasMarginDB: math.Inf(1), GainMarginDB: math.Inf(1)}
		r.Meets = r.MinMarginDB() >= -accept.SlackDB
		return &BuiltReport{MeetsMask: r.Meets, PassbandRippleDB: 0.1 - margin, PassbandMarginDB: margin, result: r}
	}
	aliasShort := func() *BuiltReport {
		r := accept.Result{PassMarginDB: 0.05, StopMarginDB: 3, AliasMarginDB: -0.2, GainMarginDB: math.Inf(1)}
		r.Meets = r.MinMarginDB() >= -accept.SlackDB
		return &BuiltReport{MeetsMask: r.Meets, PassbandRippleDB: 0.05, PassbandMarginDB: 0.05, StopbandWorstDB: f(-83),
			StopbandMarginDB: f(3), AliasWorstDB: f(-97.88), AliasMarginDB: f(-0.2), result: r}
	}
	needs := func(slew, gbw float64) []Section {
		return []Section{{OpAmpNeeds: &OpAmpNeeds{SlewVPerS: slew, GBWHz: &gbw}}}
	}
	cases := []struct {
		name  string
		check func(d *Design) (Check, bool)
		d     *Design
		ok    bool
	}{
		{"built-mask just inside", func(d *Design) (Check, bool) { return d.builtMaskCheck(), true }, &Design{Spec: spec, Built: built(1e-4)}, true},
		{"built-mask just outside", func(d *Design) (Check, bool) { return d.builtMaskCheck(), true }, &Design{Spec: spec, Built: built(-1e-4)}, false},
		{"built-mask fails on the alias band alone", func(d *Design) (Check, bool) { return d.builtMaskCheck(), true }, &Design{Spec: spec, Built: aliasShort()}, false},
		{"yield at the target", func(d *Design) (Check, bool) { return d.yieldCheck(), true }, &Design{MonteCarlo: &MonteCarloReport{Trials: 10000, Yield: 0.99}}, true},
		{"yield below", func(d *Design) (Check, bool) { return d.yieldCheck(), true }, &Design{MonteCarlo: &MonteCarloReport{Trials: 10000, Yield: 0.9899}}, false},
		{"noise at half a bit", (*Design).noiseCheck, &Design{Spec: spec, Noise: &NoiseReport{QuantizationRMSV: f(17.6e-6), SampledRMSV: f(17.6e-6), ENOBLossBits: f(0.5)}}, true},
		{"noise above", (*Design).noiseCheck, &Design{Spec: spec, Noise: &NoiseReport{QuantizationRMSV: f(17.6e-6), SampledRMSV: f(17.7e-6), ENOBLossBits: f(0.5001)}}, false},
		{"settling at 1.25×", (*Design).settlingCheck, &Design{Spec: spec, Step: &StepReport{SettlingS: f(1.25e-3), IdealSettlingS: f(1e-3)}}, true},
		{"settling beyond", (*Design).settlingCheck, &Design{Spec: spec, Step: &StepReport{SettlingS: f(1.2501e-3), IdealSettlingS: f(1e-3)}}, false},
		{"unstable", (*Design).settlingCheck, &Design{Spec: spec, Step: &StepReport{Unstable: true}}, false},
		{"slew at the op-amp's", (*Design).slewCheck, &Design{Spec: spec, Sections: needs(1e6, 1e6)}, true},
		{"slew above", (*Design).slewCheck, &Design{Spec: spec, Sections: needs(1.0001e6, 1e6)}, false},
		{"gbw at the op-amp's", (*Design).opAmpGBWCheck, &Design{Spec: spec, Sections: needs(1, 10e6)}, true},
		{"gbw above", (*Design).opAmpGBWCheck, &Design{Spec: spec, Sections: needs(1, 10.001e6)}, false},
		{"output common mode at the limit", (*Design).outputCommonModeCheck, &Design{Spec: diffSpec(2.5, 2.5999)}, true},
		{"output common mode beyond", (*Design).outputCommonModeCheck, &Design{Spec: diffSpec(2.5, 2.6001)}, false},
		{"common mode at the limit", (*Design).commonModeCheck, &Design{Spec: spec, MonteCarlo: &MonteCarloReport{CommonMode: &CommonModeReport{Trials: 10,
			Points: []CommonModePoint{{FreqHz: 0, WorstDB: 55, MedianDB: 60}, {FreqHz: 1000, WorstDB: 40, MedianDB: 50}}}}}, true},
		{"common mode below", (*Design).commonModeCheck, &Design{Spec: spec, MonteCarlo: &MonteCarloReport{CommonMode: &CommonModeReport{Trials: 10,
			Points: []CommonModePoint{{FreqHz: 0, WorstDB: 39.99, MedianDB: 60}, {FreqHz: 1000, WorstDB: 45, MedianDB: 50}}}}}, false},
		{"conversion common mode at the limit", (*Design).commonModeCheck, &Design{Spec: spec, MonteCarlo: &MonteCarloReport{CommonMode: &CommonModeReport{Trials: 10, Stage: 3,
			Points: []CommonModePoint{{FreqHz: 0, WorstDB: 40, MedianDB: 60}}}}}, true},
		{"conversion common mode below", (*Design).commonModeCheck, &Design{Spec: spec, MonteCarlo: &MonteCarloReport{CommonMode: &CommonModeReport{Trials: 10, Stage: 3,
			Points: []CommonModePoint{{FreqHz: 0, WorstDB: 39.99, MedianDB: 60}}}}}, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c, present := tc.check(tc.d)
			require.True(t, present)
			require.Equal(t, tc.ok, c.OK, c.Text)
			if tc.ok {
				require.Equal(t, SeverityInfo, c.Severity)
			} else {
				require.NotEqual(t, SeverityInfo, c.Severity)
			}
			require.NotEmpty(t, c.Text)
			_, err := json.Marshal(c) // no NaN or Inf
			require.NoError(t, err)
		})
	}
}

// TestChecksPresence: a check is there exactly when its inputs are
// (INTERFACE.md): the ideal design has only ideal-mask; a verified one
// without a converter has no alias or noise check.
func TestChecksPresence(t *testing.T) {
	t.Parallel()
	ids := func(cs []Check) []string {
		var out []string
		for _, c := range cs {
			out = append(out, c.ID)
		}
		return out
	}
	s, err := ParseSpecBytes([]byte(`{"passband_hz": 1000, "stopband_hz": 3000}`))
	require.NoError(t, err)
	d, err := SynthesizeTo(t.Context(), s, Ideal)
	require.NoError(t, err)
	require.Equal(t, []string{CheckIdealMask}, ids(d.Checks))
	d, err = SynthesizeTo(t.Context(), s, Verified)
	require.NoError(t, err)
	require.Equal(t, []string{CheckIdealMask, CheckBuiltMask, CheckSettling, CheckSlew, CheckOpAmpGBW}, ids(d.Checks))
	s, err = ParseSpecBytes([]byte(`{"passband_hz": 1000, "converter": {"bits": 12, "sample_rate_hz": 20000, "full_scale_vpp": 2},
		"montecarlo": {"trials": 50}}`))
	require.NoError(t, err)
	require.True(t, s.StopbandFromConverter())
	require.Equal(t, []float64{19000}, s.StopbandHz) // fs − fp
	require.InDelta(t, 6.02*12+1.76, s.StopbandAttenDB, 1e-12)
	d, err = SynthesizeTo(t.Context(), s, Verified)
	require.NoError(t, err)
	require.Equal(t, []string{CheckIdealMask, CheckBuiltMask, CheckYield, CheckAlias, CheckNoise, CheckSettling, CheckSlew, CheckOpAmpGBW}, ids(d.Checks))
	require.Equal(t, "converter", d.Mask.StopbandFrom)
}

// TestBuiltMaskWordsTheWorstRule: the built-mask sentence names the rule
// that fails (here the alias band, whose margin is the only negative one).
func TestBuiltMaskWordsTheWorstRule(t *testing.T) {
	t.Parallel()
	f := func(v float64) *float64 { return &v }
	r := accept.Result{PassMarginDB: 0.05, StopMarginDB: 3, AliasMarginDB: -0.2, GainMarginDB: math.Inf(1)}
	d := &Design{
		Spec: Spec{PassbandRippleDB: 0.1, StopbandAttenDB: 80, Converter: &Converter{AliasAttenDB: 98.08}},
		Built: &BuiltReport{PassbandRippleDB: 0.05, StopbandWorstDB: f(-83), StopbandMarginDB: f(3),
			AliasWorstDB: f(-97.88), AliasMarginDB: f(-0.2), result: r},
	}
	c := d.builtMaskCheck()
	require.False(t, c.OK)
	require.InDelta(t, -0.2, c.Figure, 1e-12)
	require.Contains(t, c.Text, "folds onto the passband is only 97.88 dB down; the converter needs 98.08 dB")
}

// diffSpec is a differential design's spec on a 5 V supply with the
// reference at refV and the converter wanting the common mode cmV.
func diffSpec(refV, cmV float64) Spec {
	return Spec{Topology: "auto", Supply: &Supply{PositiveV: 5, ReferenceV: refV},
		Converter: &Converter{Bits: 16, SampleRateHz: 48000, FullScaleVpp: 4, Input: InputDifferential, InputCommonModeV: &cmV}}
}
