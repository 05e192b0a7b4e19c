package synth_test

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

const (
	costLowpass        = `{"passband_hz": 1000, "stopband_hz": 4000, "montecarlo": {"trials": 3000}}`
	costElliptic       = `{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 172000, "passband_ripple_db": 0.05, "stopband_atten_db": 100, "montecarlo": {"trials": 3000}}`
	costBessel         = `{"approximation": "bessel", "passband_hz": 50000, "order": 6, "opamp": {"ideal": true}, "montecarlo": {"trials": 3000}}`
	costBandstop       = `{"response": "bandstop", "approximation": "butterworth", "order": 20, "passband_hz": [900, 1100], "topology": "state-variable"}`
	costBandstop8      = `{"response": "bandstop", "approximation": "butterworth", "order": 8, "passband_hz": [900, 1100], "topology": "state-variable"}`
	costBandstop12     = `{"response": "bandstop", "approximation": "butterworth", "order": 12, "passband_hz": [900, 1100], "topology": "state-variable"}`
	costBandstopAuto   = `{"response": "bandstop", "approximation": "butterworth", "order": 20, "passband_hz": [900, 1100]}`
	costBandstop10Auto = `{"response": "bandstop", "approximation": "butterworth", "order": 10, "passband_hz": [900, 1100]}`
	costCheby2Bandstop = `{"response": "bandstop", "approximation": "chebyshev2", "order": 14, "passband_hz": [300, 3000]}`
	costBandstopT      = `{"response": "bandstop", "approximation": "butterworth", "order": 20, "passband_hz": [900, 1100], "topology": "state-variable", "montecarlo": {"trials": 3000}}`
)

func mustSpec(t *testing.T, js string) synth.Spec {
	t.Helper()
	s, err := synth.ParseSpecBytes([]byte(js))
	require.NoError(t, err)
	return s
}

// TestEstimateCostCalibration checks the estimate against CPU-milliseconds
// measured with Synthesize at GOMAXPROCS=1 (our own measurement, this
// repository's machine, go1.26, 2026-12-03, least of 5 runs), within a
// factor of three.
func TestEstimateCostCalibration(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name       string
		spec       string
		measuredMs float64
	}{
		{"butterworth-4 3000 trials", costLowpass, 29},
		{"elliptic-5 3000 trials", costElliptic, 56},
		{"bessel-6 3000 trials", costBessel, 28},
		{"bandstop-8 state-variable", costBandstop8, 31},
		{"bandstop-12 state-variable", costBandstop12, 94},
		{"bandstop-20 state-variable", costBandstop, 450},
		{"bandstop-20 state-variable 3000 trials", costBandstopT, 630},
		{"bandstop-20 auto", costBandstopAuto, 317},
		{"bandstop-10 auto", costBandstop10Auto, 32},
		{"chebyshev2 bandstop-14", costCheby2Bandstop, 80},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := synth.EstimateCost(mustSpec(t, tc.spec))
			require.GreaterOrEqual(t, got, tc.measuredMs/3)
			require.LessOrEqual(t, got, tc.measuredMs*3)
		})
	}
}

// TestEstimateCostMonotone checks that more trials, a higher order, notch
// stages and the state-variable topology never cost less.
func TestEstimateCostMonotone(t *testing.T) {
	t.Parallel()
	base := mustSpec(t, `{"passband_hz": 1000, "order": 4, "montecarlo": {"trials": 100}}`)
	for _, tc := range []struct {
		name string
		more func(s synth.Spec) synth.Spec
	}{
		{"trials", func(s synth.Spec) synth.Spec { s.MonteCarlo.Trials *= 10; return s }},
		{"order", func(s synth.Spec) synth.Spec { s.Order = 9; return s }},
		{"notches", func(s synth.Spec) synth.Spec { s.Approximation = "elliptic"; s.StopbandAttenDB = 60; return s }},
		{"state-variable", func(s synth.Spec) synth.Spec { s.Topology = "state-variable"; return s }},
		{"bandstop", func(s synth.Spec) synth.Spec {
			s.Response, s.PassbandHz = synth.Bandstop, []float64{900, 1100}
			return s
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Greater(t, synth.EstimateCost(tc.more(base)), synth.EstimateCost(base))
		})
	}
	prev := 0.0
	for n := 1; n <= synth.MaxOrder; n++ {
		s := base
		s.Order = n
		c := synth.EstimateCost(s)
		require.GreaterOrEqual(t, c, prev, "order %d", n)
		prev = c
	}
}

// TestCheckCost checks the refusal: the field that dominates, and that
// the most trials it names pass while one more does not.
func TestCheckCost(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		spec   string
		maxMs  float64
		field  string
		passes bool
	}{
		{"cheap passes", costLowpass, 5000, "", true},
		{"trials over", `{"response": "bandstop", "order": 20, "passband_hz": [900, 1100], "topology": "state-variable", "montecarlo": {"trials": 100000}}`, 5000, "montecarlo.trials", false},
		{"design over, order given", costBandstop, 10, "order", false},
		{"design over, order from the mask", `{"passband_hz": 1000, "stopband_hz": 1100, "stopband_atten_db": 80}`, 1, "stopband_hz", false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustSpec(t, tc.spec)
			err := synth.CheckCost(s, tc.maxMs)
			if tc.passes {
				require.NoError(t, err)
				return
			}
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "%v", err)
			require.Equal(t, tc.field, fe.Field)
			require.Contains(t, fe.Reason, "CPU-seconds")
			if tc.field == "montecarlo.trials" {
				n := synth.MaxTrialsWithin(s, tc.maxMs)
				require.Positive(t, n)
				require.Contains(t, fe.Reason, "at most")
				s.MonteCarlo.Trials = n
				require.NoError(t, synth.CheckCost(s, tc.maxMs))
				s.MonteCarlo.Trials = n + 1
				require.Error(t, synth.CheckCost(s, tc.maxMs))
			}
		})
	}
}
