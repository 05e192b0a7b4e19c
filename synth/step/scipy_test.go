package step_test

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// scipyCase is one record of ../../testdata/scipy/step.json (see gen_step.py):
// scipy.signal.step of an analog (z, p, k) filter at the times t.
type scipyCase struct {
	Name  string       `json:"name"`
	Zeros [][2]float64 `json:"zeros"`
	Poles [][2]float64 `json:"poles"`
	Gain  float64      `json:"gain"`
	T     []float64    `json:"t"`
	Y     []float64    `json:"y"`
}

func complexes(v [][2]float64) []complex128 {
	out := make([]complex128, len(v))
	for i, p := range v {
		out[i] = complex(p[0], p[1])
	}
	return out
}

// sectionsOf splits K·∏(s−z)/∏(s−p) into first- and second-order sections:
// each upper pole with its conjugate, each real pole alone; complex zero
// pairs go to the pole pairs in turn, real zeros to the remaining room; the
// gain goes to the first section.
func sectionsOf(zeros, poles []complex128, k float64) []section.Section {
	var secs []section.Section
	for _, p := range poles {
		switch {
		case imag(p) > 0:
			secs = append(secs, section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Gain: 1})
		case imag(p) == 0:
			secs = append(secs, section.Section{Poles: []complex128{p}, Gain: 1})
		}
	}
	room := func(s section.Section) int { return len(s.Poles) - len(s.Zeros) }
	for _, z := range zeros {
		if imag(z) <= 0 {
			continue
		}
		for i := range secs {
			if room(secs[i]) == 2 {
				secs[i].Zeros = append(secs[i].Zeros, z, cmplx.Conj(z))
				break
			}
		}
	}
	for _, z := range zeros {
		if imag(z) != 0 {
			continue
		}
		for i := range secs {
			if room(secs[i]) > 0 {
				secs[i].Zeros = append(secs[i].Zeros, z)
				break
			}
		}
	}
	secs[0].Gain = k
	return secs
}

// TestAgainstSciPy compares with scipy.signal.step, both as one rational
// stage of the whole filter and as a cascade of sections.
func TestAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../../testdata/scipy/step.json")
	require.NoError(t, err)
	var data struct {
		Cases []scipyCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.NotEmpty(t, data.Cases)
	for _, tc := range data.Cases {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			zeros, poles := complexes(tc.Zeros), complexes(tc.Poles)
			var secs []step.Stage
			for _, s := range sectionsOf(zeros, poles, tc.Gain) {
				secs = append(secs, step.FromSection(s))
			}
			whole := []step.Stage{rationalOf(zeros, poles, tc.Gain, 1)}
			for name, stages := range map[string][]step.Stage{"sections": secs, "rational": whole} {
				y, err := step.Response(stages, tc.T)
				require.NoError(t, err, name)
				// The reference is written with 13 significant digits; SciPy and this
				// package agree to about 1e-12 here.
				requireClose(t, tc.Y, y, 1e-11)
				require.InDelta(t, step.DCGain(stages), tc.Y[len(tc.Y)-1], 1e-3*math.Max(1, math.Abs(step.DCGain(stages))), name)
			}
		})
	}
}
