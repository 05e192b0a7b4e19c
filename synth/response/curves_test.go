package response_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/zpk"
)

// TestMagnitudePhaseDelayAgainstSciPy holds MagnitudePhaseDelay to the
// scipy.signal vectors and tolerances of TestAgainstSciPy and
// TestGroupDelayAgainstSciPy (testdata/scipy/xform.json).
func TestMagnitudePhaseDelayAgainstSciPy(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	for _, tc := range d.Responses {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			mag, ph, _ := response.MagnitudePhaseDelay(nil, nil, nil, tc.zpk(), tc.FreqHz)
			for i, f := range tc.FreqHz {
				if tc.MagDB[i] > -200 {
					require.InDeltaf(t, tc.MagDB[i], mag[i], 1e-9, "magnitude at %v Hz", f)
				}
				require.InDeltaf(t, 0, wrap180(ph[i]-tc.PhaseDeg[i]), 1e-7, "phase at %v Hz", f)
			}
		})
	}
	for _, tc := range d.GroupDelay {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			_, _, tau := response.MagnitudePhaseDelay(nil, nil, nil, tc.zpk(), tc.FreqHz)
			for i, f := range tc.FreqHz {
				require.InDeltaf(t, tc.TauS[i], tau[i], 1e-8*math.Abs(tc.TauS[i])+2*tc.TauErrEst[i], "tau at %v Hz", f)
			}
		})
	}
}

// randomSections returns a random transfer function built as section
// roots are: conjugate pole pairs (upper first) and real poles left of the
// axis; zeros at s = 0, jω-axis pairs, and, with allpass, the mirror
// images −p̄ of the poles (right of the axis).
func randomSections(rng *rand.Rand, allpass bool) zpk.ZPK {
	h := zpk.ZPK{Gain: math.Pow(10, 4*rng.Float64()-2)}
	if rng.IntN(4) == 0 {
		h.Gain = -h.Gain
	}
	for range 1 + rng.IntN(8) {
		w0 := math.Pow(10, 1+4*rng.Float64())
		q := math.Pow(10, 3*rng.Float64()-0.5)
		if q <= 0.5 {
			h.Poles = append(h.Poles, complex(-w0, 0))
			if allpass {
				h.Zeros = append(h.Zeros, complex(w0, 0))
			}
			continue
		}
		p := complex(-w0/(2*q), w0*math.Sqrt(1-1/(4*q*q)))
		h.Poles = append(h.Poles, p, cmplx.Conj(p))
		switch {
		case allpass:
			h.Zeros = append(h.Zeros, -cmplx.Conj(p), -p)
		case rng.IntN(3) == 0:
			wz := w0 * math.Pow(10, rng.Float64()-0.5)
			h.Zeros = append(h.Zeros, complex(0, wz), complex(0, -wz))
		case rng.IntN(2) == 0:
			h.Zeros = append(h.Zeros, 0)
		}
	}
	return h
}

// TestMagnitudePhaseDelayMatchesThree checks MagnitudePhaseDelay against
// MagnitudeDB, PhaseDeg and GroupDelayS (each checked against scipy and
// closed forms in response_test.go) on random section-shaped transfer
// functions: the pair factors and the root-by-root sums are the same
// quantities, so they agree to rounding.
func TestMagnitudePhaseDelayMatchesThree(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	for trial := range 300 {
		h := randomSections(rng, trial%5 == 0)
		t.Run(fmt.Sprint(trial), func(t *testing.T) {
			freqs := response.LogSpaceHz(nil, 0.1, 1e6, 400)
			for _, p := range h.Poles { // points on and next to every resonance
				if imag(p) > 0 {
					f := imag(p) / (2 * math.Pi)
					freqs = append(freqs, f, f*(1+1e-7))
				}
			}
			for _, z := range h.Zeros {
				if imag(z) > 0 {
					freqs = append(freqs, imag(z)/(2*math.Pi))
				}
			}
			mag, ph, tau := response.MagnitudePhaseDelay(nil, nil, nil, h, freqs)
			wantMag := response.MagnitudeDB(nil, h, freqs)
			wantPh := response.PhaseDeg(nil, h, freqs)
			wantTau := response.GroupDelayS(nil, h, freqs)
			for i, f := range freqs {
				if math.IsInf(wantMag[i], 0) {
					require.Equalf(t, wantMag[i], mag[i], "magnitude at %v Hz", f)
				} else {
					require.InDeltaf(t, wantMag[i], mag[i], 1e-10, "magnitude at %v Hz", f)
				}
				require.InDeltaf(t, wantPh[i], ph[i], 1e-9*(1+math.Abs(wantPh[i])), "phase at %v Hz", f)
				require.InDeltaf(t, wantTau[i], tau[i], 1e-12*math.Abs(wantTau[i])+1e-300, "delay at %v Hz", f)
			}
		})
	}
}

// TestMagnitudePhaseDelayDst checks the destination rules of the package
// documentation: long enough slices are filled in place without
// allocating.
func TestMagnitudePhaseDelayDst(t *testing.T) {
	h := randomSections(rand.New(rand.NewPCG(2, 2)), false)
	freqs := response.LogSpaceHz(nil, 1, 1e5, 100)
	mag, ph, tau := make([]float64, 200), make([]float64, 200), make([]float64, 200)
	var m, p, d []float64
	allocs := testing.AllocsPerRun(10, func() {
		m, p, d = response.MagnitudePhaseDelay(mag, ph, tau, h, freqs)
	})
	require.Zero(t, allocs)
	require.Len(t, m, 100)
	require.Len(t, p, 100)
	require.Len(t, d, 100)
	require.Equal(t, response.MagnitudeDB(nil, h, freqs[:1])[0], mag[0])
}
