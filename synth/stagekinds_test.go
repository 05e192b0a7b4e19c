package synth_test

import (
	"fmt"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// kindStage is one stage of a design, labelled by its kind.
type kindStage struct {
	design string // the stageKindSpecs entry
	index  int    // 0-based stage index
	kind   string // stageKind's label
	spec   synth.Spec
	d      *synth.Design
	ch     circuit.Chain
}

// everyStageKind lists the labels stageKind gives, one per stage kind the
// tool builds: the first-order forms, Sallen-Key and multiple-feedback
// lowpass, highpass and bandpass, the state-variable forms with and
// without the notch summer and its T-network, the one-amplifier notch
// forms, the two-integrator (three-op-amp) notch forms, stages that carry
// the polarity inverter, and the all-pass stages of a delay equaliser.
var everyStageKind = []string{
	"rc-buffer/lowpass", "rc-buffer/highpass", "rc-buffer/lowpass+gain",
	"inverting-rc/lowpass", "inverting-rc/highpass",
	"sallen-key/lowpass", "sallen-key/highpass", "sallen-key/lowpass+gain",
	"multiple-feedback/lowpass", "multiple-feedback/highpass", "multiple-feedback/bandpass",
	"multiple-feedback/lowpass+inverter", "multiple-feedback/highpass+inverter", "multiple-feedback/bandpass+inverter",
	"state-variable/bandpass", "state-variable/lowpass+inverter", "state-variable/highpass+inverter",
	"state-variable/lowpass-notch", "state-variable/highpass-notch", "state-variable/notch",
	"state-variable/lowpass-notch+tee",
	"allpass/allpass1", "allpass/allpass1+inverted", "allpass/allpass2", "allpass/allpass2+inverter",
	"one-amp-notch/lowpass-notch", "one-amp-notch/highpass-notch", "one-amp-notch/notch",
	"two-integrator-notch/lowpass-notch", "two-integrator-notch/highpass-notch+inverter", "two-integrator-notch/notch",
}

// stageKindSpecs are designs (our own choice of specs) whose stages
// between them are of every kind in everyStageKind, with the base spec's
// 10 MHz, 100 dB op-amp.
func stageKindSpecs() []struct {
	name string
	spec synth.Spec
} {
	spec := func(resp synth.Response, approx string, order int, pass []float64, edit func(*synth.Spec)) synth.Spec {
		s := baseSpec(resp, approx)
		s.Order, s.PassbandHz = order, pass
		if edit != nil {
			edit(&s)
		}
		return s
	}
	top := func(t string) func(*synth.Spec) { return func(s *synth.Spec) { s.Topology = t } }
	equalise := func(pct float64) func(*synth.Spec) {
		return func(s *synth.Spec) { s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: pct} }
	}
	return []struct {
		name string
		spec synth.Spec
	}{
		{"lowpass-3", spec(synth.Lowpass, "butterworth", 3, []float64{1000}, nil)},
		{"highpass-3", spec(synth.Highpass, "butterworth", 3, []float64{1000}, nil)},
		{"lowpass-3-gain", spec(synth.Lowpass, "butterworth", 3, []float64{1000}, func(s *synth.Spec) { s.GainDB = 12 })},
		{"lowpass-3-mfb", spec(synth.Lowpass, "butterworth", 3, []float64{1000}, top("multiple-feedback"))},
		{"highpass-3-mfb", spec(synth.Highpass, "butterworth", 3, []float64{1000}, top("multiple-feedback"))},
		{"lowpass-2-mfb", spec(synth.Lowpass, "butterworth", 2, []float64{1000}, top("multiple-feedback"))},
		{"highpass-2-mfb", spec(synth.Highpass, "butterworth", 2, []float64{1000}, top("multiple-feedback"))},
		{"lowpass-2-sv", spec(synth.Lowpass, "butterworth", 2, []float64{1000}, top("state-variable"))},
		{"highpass-2-sv", spec(synth.Highpass, "butterworth", 2, []float64{1000}, top("state-variable"))},
		{"bandpass-2", spec(synth.Bandpass, "butterworth", 1, []float64{900, 1100}, nil)},
		{"bandpass-4", spec(synth.Bandpass, "butterworth", 2, []float64{900, 1100}, nil)},
		{"bandpass-2-sv", spec(synth.Bandpass, "butterworth", 1, []float64{900, 1100}, top("state-variable"))},
		{"bandstop-2", spec(synth.Bandstop, "chebyshev2", 1, []float64{300, 3000}, top("state-variable"))},
		{"elliptic-lowpass-4", spec(synth.Lowpass, "elliptic", 4, []float64{1000}, top("state-variable"))},
		{"elliptic-highpass-4", spec(synth.Highpass, "elliptic", 4, []float64{1000}, top("state-variable"))},
		{"elliptic-lowpass-2-tee", spec(synth.Lowpass, "elliptic", 2, []float64{500}, func(s *synth.Spec) {
			s.PassbandRippleDB, s.StopbandAttenDB, s.Topology = 0.1, 60, "state-variable"
		})},
		// auto puts these notch sections on one op-amp.
		{"bandstop-2-1amp", spec(synth.Bandstop, "chebyshev2", 1, []float64{700, 1400}, func(s *synth.Spec) {
			s.GainDB, s.Topology = -6, "one-amp-notch"
		})},
		{"elliptic-lowpass-4-1amp", spec(synth.Lowpass, "elliptic", 4, []float64{1000}, nil)},
		{"elliptic-highpass-4-1amp", spec(synth.Highpass, "elliptic", 4, []float64{1000}, nil)},
		{"chebyshev1-lowpass-8", spec(synth.Lowpass, "chebyshev1", 8, []float64{1000}, nil)},
		// auto puts all three sections on the two-integrator loop (three
		// op-amps each; the notch's Q is 0.88, the others' 1.99).
		{"bandstop-6-tin", spec(synth.Bandstop, "chebyshev2", 3, []float64{500, 2000}, nil)},
		// The studio anti-alias filter: its far-zero lowpass-notch on the
		// two-integrator loop, the first-order stage taking up its gain.
		{"elliptic-lowpass-5-tin", spec(synth.Lowpass, "elliptic", 0, []float64{20000}, func(s *synth.Spec) {
			s.StopbandHz, s.PassbandRippleDB, s.StopbandAttenDB = []float64{172000}, 0.05, 100
			s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct = 1, 5 // the one-op-amp form's residual rule needs them
		})},
		// Delay equalisers (the search's choice, checked by the kinds):
		// a first-order all-pass; an inverted one that puts the
		// multiple-feedback stage's sign right; two second-order ones;
		// one second-order one followed by the polarity inverter.
		{"lowpass-3-equalised", spec(synth.Lowpass, "butterworth", 3, []float64{1000}, equalise(2))},
		{"lowpass-2-mfb-equalised", spec(synth.Lowpass, "butterworth", 2, []float64{1000}, func(s *synth.Spec) {
			s.Topology = "multiple-feedback"
			equalise(5)(s)
		})},
		{"lowpass-2-equalised", spec(synth.Lowpass, "butterworth", 2, []float64{1000}, equalise(1))},
		{"lowpass-4-equalised", spec(synth.Lowpass, "butterworth", 4, []float64{1000}, equalise(2))},
	}
}

// stageKind labels a stage: topology/section kind, with "+inverter" when
// the polarity inverter follows it, "+tee" for a state-variable notch
// summer with a T-network and "+gain" for a first-order or Sallen-Key
// stage with a gain-setting divider; an all-pass stage carries its order
// and "+inverted" for the first-order inverting form.
func stageKind(st circuit.Stage, sec synth.Section) string {
	k := fmt.Sprintf("%s/%s", st.Topology, sec.Kind)
	parts := len(st.Parts)
	inverter := st.Out == "inv_out" // the node withInverter names
	if inverter {
		parts -= 2
	}
	switch {
	case st.Topology == "state-variable" && parts == 14:
		k += "+tee"
	case st.Topology == "rc-buffer" && parts > 2, st.Topology == "sallen-key" && parts > 4:
		k += "+gain"
	}
	if st.Topology == "allpass" {
		k += fmt.Sprint(sec.Order)
		if sec.Order == 1 && sec.Inverting {
			k += "+inverted"
		}
	}
	if inverter {
		k += "+inverter"
	}
	return k
}

// stageKindStages designs every stageKindSpecs entry, with edit applied
// to its spec, and returns all their stages; it checks that every kind
// of everyStageKind is among them.
func stageKindStages(t *testing.T, edit func(*synth.Spec)) []kindStage {
	t.Helper()
	var out []kindStage
	seen := map[string]bool{}
	for _, c := range stageKindSpecs() {
		s := c.spec
		if edit != nil {
			edit(&s)
		}
		d := synthesize(t, s)
		ch, err := d.Chain()
		require.NoError(t, err)
		for i, st := range ch.Stages {
			k := stageKind(st, d.Sections[i])
			seen[k] = true
			out = append(out, kindStage{design: c.name, index: i, kind: k, spec: s, d: d, ch: ch})
		}
	}
	for _, k := range everyStageKind {
		require.True(t, seen[k], "no stage of kind %s among the designs", k)
	}
	return out
}

// firstOfEachKind keeps the first stage of every kind.
func firstOfEachKind(all []kindStage) []kindStage {
	var out []kindStage
	for _, s := range all {
		if !slices.ContainsFunc(out, func(o kindStage) bool { return o.kind == s.kind }) {
			out = append(out, s)
		}
	}
	return out
}
