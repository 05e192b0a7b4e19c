package noise_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
)

// atanDiff returns atan(u) − atan(v) for u, v ≥ 0 (u may be +Inf) without
// the cancellation of the difference: atan((u − v)/(1 + u·v)).
func atanDiff(u, v float64) float64 {
	if math.IsInf(u, 1) {
		return math.Atan2(1, v)
	}
	return math.Atan2(u-v, 1+u*v)
}

// lorentzPower returns ∫ df/(1 + (f/fc)²) over [lo, hi] (hi may be +Inf):
// fc·(atan(hi/fc) − atan(lo/fc)) (closed form).
func lorentzPower(fc, lo, hi float64) float64 { return fc * atanDiff(hi/fc, lo/fc) }

// closedForm is the output noise power of a chain of RC buffers over a
// band, from the closed form of its density.
type closedForm func(lo, hi float64) float64

// rcPower: the RC buffer's output noise is the resistor's 4kTR through
// 1/(1 + (f/fc)²), fc = 1/(2πRC) (textbook).
func rcPower(r, c float64) closedForm {
	fc := 1 / (2 * math.Pi * r * c)
	return func(lo, hi float64) float64 { return 4 * kT * r * lorentzPower(fc, lo, hi) }
}

// rc2Power: two RC buffers in cascade; R1's noise passes both poles, R2's
// the second only. With a = fc1, b = fc2 (a ≠ b), partial fractions give
// 1/((1 + f²/a²)(1 + f²/b²)) = a²b²/(b² − a²)·(1/(a² + f²) − 1/(b² + f²)).
func rc2Power(r1, c1, r2, c2 float64) closedForm {
	a, b := 1/(2*math.Pi*r1*c1), 1/(2*math.Pi*r2*c2)
	return func(lo, hi float64) float64 {
		both := a * a * b * b / (b*b - a*a) * (lorentzPower(a, lo, hi)/(a*a) - lorentzPower(b, lo, hi)/(b*b))
		return 4*kT*r1*both + 4*kT*r2*lorentzPower(b, lo, hi)
	}
}

// foldedClosedForm sums the closed form over the bands
// [k·fs − fout/2, k·fs + fout/2] ∩ [0, ∞) one by one for k up to 2²⁰, and
// adds the rest as the comb average (fout/fs)·∫ S over [(N + ½)·fs, ∞),
// whose relative error there is of order 1/N².
func foldedClosedForm(p closedForm, fs, fout float64) float64 {
	const n = 1 << 20
	h := fout / 2
	sum := p(0, h)
	for k := 1; k <= n; k++ {
		c := float64(k) * fs
		sum += p(c-h, c+h)
	}
	return sum + fout/fs*p((n+0.5)*fs, math.Inf(1))
}

// kT/C: an RC lowpass's resistor noise, buffered by an ideal noiseless
// op-amp, has the density 4kTR/(1 + (2πfRC)²), whose integral from 0 to B
// is (2kT/(πC))·atan(2πBRC) and from 0 to ∞ kT/C, whatever R (closed
// form). With fout = fs the output words carry all of it: sampled_rms_v
// must be √(kT/C) within 0.5 % (the integral stops once less than 0.1 %
// of the power is left, so within 0.05 %), and the closed form to
// LimitHz within 1e-4; the in-band noise, to fout/2, the closed form
// within 1e-4.
func TestSampledKTC(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		rOhm, cF  float64
		fsHz      float64
		foutHz    float64
		wantBand0 float64 // µV rms, the closed form's value (Python 3), typed
	}{
		{"10k-1n-48k", 10e3, 1e-9, 48e3, 48e3, 1.6118},
		{"1k-10n-48k", 1e3, 10e-9, 48e3, 48e3, 0.5097},
		{"100k-100p-3.072M", 100e3, 100e-12, 3.072e6, 3.072e6, 6.4145},
		{"10k-10n-8k", 10e3, 10e-9, 8e3, 8e3, 0.56066},
		{"10k-1n-3.072M-to-48k", 10e3, 1e-9, 3.072e6, 48e3, 1.6118},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(tc.rOhm, tc.cF)}}
			h := tc.foutHz / 2
			res, err := noise.OutputSampled(ch, noise.OpAmpNoise{}, 300, []float64{1e3}, [2]float64{0, h},
				noise.Sampling{SampleRateHz: tc.fsHz, OutputRateHz: tc.foutHz})
			require.NoError(t, err)
			rc := tc.rOhm * tc.cF
			inband := math.Sqrt(2 * kT / (math.Pi * tc.cF) * math.Atan(2*math.Pi*h*rc))
			require.InEpsilon(t, inband, res.OutputRMSV, 1e-4)
			require.InEpsilon(t, tc.wantBand0*1e-6, res.OutputRMSV, 1e-4) // 5 digits typed
			sm := res.Sampled
			require.NotNil(t, sm)
			require.False(t, sm.Capped)
			require.GreaterOrEqual(t, sm.RMSV, res.OutputRMSV)
			if tc.foutHz < tc.fsHz {
				return // folding: TestSampledFolding
			}
			ktc := math.Sqrt(kT / tc.cF)
			require.InEpsilon(t, ktc, sm.RMSV, 5e-3)
			toLimit := math.Sqrt(2 * kT / (math.Pi * tc.cF) * math.Atan(2*math.Pi*sm.LimitHz*rc))
			require.InEpsilon(t, toLimit, sm.RMSV, 1e-4)
			// Above the limit lies less than 0.1 % of kT/C, and a quarter
			// decade below it more (the limit's resolution: a node's cell,
			// at most a fifth of a decade).
			rest := func(f float64) float64 { return 2 / math.Pi * math.Atan2(1, 2*math.Pi*f*rc) }
			require.Less(t, rest(sm.LimitHz), 1e-3)
			require.Greater(t, rest(sm.LimitHz/math.Pow(10, 0.25)), 1e-3*(1-1e-4))
			t.Logf("√(kT/C) %.6g µV, sampled %.6g µV (%+.2g) to %.4g Hz; in band %.6g µV (%+.2g)",
				ktc*1e6, sm.RMSV*1e6, sm.RMSV/ktc-1, sm.LimitHz, res.OutputRMSV*1e6, res.OutputRMSV/inband-1)
		})
	}
}

// Folding, against the closed form summed band by band
// (foldedClosedForm): an RC buffer with its pole well below, at and far
// above the sample rate, and two RC buffers in cascade (a density falling
// as f⁻⁴), for output rates of 1/64, 1/4 and 0.9 of the sample rate. The
// power integrated before the limit is found (FoldedPower: the bands, the
// comb and the estimate beyond the cap) must be the closed form's within
// 2e-5, and the reported noise must leave out less than 0.1 % of it.
func TestSampledFolding(t *testing.T) {
	t.Parallel()
	oneRC := func(r, c float64) circuit.Chain {
		return circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(r, c)}}
	}
	twoRC := func(r1, c1, r2, c2 float64) circuit.Chain {
		return circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(r1, c1), rcBuffer(r2, c2)}}
	}
	const fs = 3.072e6
	// C for a pole at fc with 10 kΩ.
	capFor := func(fc float64) float64 { return 1 / (2 * math.Pi * 10e3 * fc) }
	tests := []struct {
		name  string
		ch    circuit.Chain
		power closedForm
	}{
		{"rc-pole-fs/100", oneRC(10e3, capFor(fs/100)), rcPower(10e3, capFor(fs/100))},
		{"rc-pole-2fs", oneRC(10e3, capFor(2*fs)), rcPower(10e3, capFor(2*fs))},
		{"rc-pole-50fs", oneRC(10e3, capFor(50*fs)), rcPower(10e3, capFor(50*fs))},
		{"2rc-poles-0.3fs-0.7fs", twoRC(10e3, capFor(0.3*fs), 4.7e3, capFor(0.7*fs)/0.47),
			rc2Power(10e3, capFor(0.3*fs), 4.7e3, capFor(0.7*fs)/0.47)},
	}
	for _, tc := range tests {
		for _, ratio := range []float64{1.0 / 64, 0.25, 0.9} {
			t.Run(tc.name, func(t *testing.T) {
				t.Parallel()
				s := noise.Sampling{SampleRateHz: fs, OutputRateHz: ratio * fs}
				want := foldedClosedForm(tc.power, fs, s.OutputRateHz)
				total, noCorr, err := noise.FoldedPower(tc.ch, noise.OpAmpNoise{}, 300, s)
				require.NoError(t, err)
				require.InEpsilon(t, want, total, 2e-5)
				res, err := noise.OutputSampled(tc.ch, noise.OpAmpNoise{}, 300, nil, [2]float64{0, s.OutputRateHz / 2}, s)
				require.NoError(t, err)
				got := res.Sampled.RMSV * res.Sampled.RMSV
				require.False(t, res.Sampled.Capped)
				require.LessOrEqual(t, got, want*(1+2e-5))
				require.GreaterOrEqual(t, got, want*(1-1e-3-2e-5))
				t.Logf("fout = %.3g·fs: closed form %.6g µV; integrated %+.2g (without the comb's correction %+.2g); sampled %.6g µV to %.3g Hz (%+.2g in power)",
					ratio, math.Sqrt(want)*1e6, total/want-1, noCorr/want-1, res.Sampled.RMSV*1e6, res.Sampled.LimitHz, got/want-1)
			})
		}
	}
}

// Band 0 is reused when bandHz is [0, fout/2] and integrated anew
// otherwise: the two give the same sampled noise.
func TestSampledBand0(t *testing.T) {
	t.Parallel()
	ch := butterworth8(1000, singlePole)
	s := noise.Sampling{SampleRateHz: 48e3}
	a, err := noise.OutputSampled(ch, noise.DefaultOpAmpNoise(), 0, nil, [2]float64{0, 24e3}, s)
	require.NoError(t, err)
	b, err := noise.OutputSampled(ch, noise.DefaultOpAmpNoise(), 0, nil, [2]float64{10, 24e3}, s)
	require.NoError(t, err)
	require.InEpsilon(t, a.Sampled.RMSV, b.Sampled.RMSV, 1e-9)
	require.Equal(t, a.Sampled.LimitHz, b.Sampled.LimitHz)
	require.Less(t, b.OutputRMSV, a.OutputRMSV)
	// The output rate's default is the sample rate.
	c, err := noise.OutputSampled(ch, noise.DefaultOpAmpNoise(), 0, nil, [2]float64{0, 24e3}, noise.Sampling{SampleRateHz: 48e3, OutputRateHz: 48e3})
	require.NoError(t, err)
	require.Equal(t, a.Sampled, c.Sampled)
}

// A response whose output noise does not fall: a Sallen-Key highpass. With
// single-pole op-amps the noise falls above their closed-loop bandwidth
// and the integral converges below the cap; with ideal op-amps it never
// falls, and the integral stops at the cap, SampledCapFactor times the
// larger of the sample rate and the highest pole, and says so. The
// resistors' noise alone falls (the capacitors short their nodes at high
// frequency). A unity follower's voltage noise reaches the output at
// every frequency, so even a lowpass of ideal followers is capped when the
// op-amps are noisy, and not when only its resistors are.
func TestSampledCapped(t *testing.T) {
	t.Parallel()
	hp := []circuit.Stage{sallenKeyHP(10e3, 22e3, 10e-9, 10e-9)}
	lp := []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}
	s := noise.Sampling{SampleRateHz: 48e3}
	tests := []struct {
		name   string
		ch     circuit.Chain
		on     noise.OpAmpNoise
		capped bool
	}{
		{"highpass/single-pole", circuit.Chain{Model: singlePole, Stages: hp}, noise.DefaultOpAmpNoise(), false},
		{"highpass/ideal", circuit.Chain{Model: ideal, Stages: hp}, noise.DefaultOpAmpNoise(), true},
		{"highpass/ideal/resistors-only", circuit.Chain{Model: ideal, Stages: hp}, noise.OpAmpNoise{}, false},
		{"lowpass/ideal", circuit.Chain{Model: ideal, Stages: lp}, noise.DefaultOpAmpNoise(), true},
		{"lowpass/ideal/resistors-only", circuit.Chain{Model: ideal, Stages: lp}, noise.OpAmpNoise{}, false},
		{"lowpass/single-pole", circuit.Chain{Model: singlePole, Stages: lp}, noise.DefaultOpAmpNoise(), false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			res, err := noise.OutputSampled(tc.ch, tc.on, 0, nil, [2]float64{0, 24e3}, s)
			require.NoError(t, err)
			sm := res.Sampled
			require.Equal(t, tc.capped, sm.Capped)
			tfs, err := tc.ch.TransferFunctions()
			require.NoError(t, err)
			top := s.SampleRateHz
			for _, r := range tfs {
				for _, p := range r.Poles() {
					top = math.Max(top, math.Hypot(real(p), imag(p))/(2*math.Pi))
				}
			}
			if tc.capped {
				require.InEpsilon(t, noise.SampledCapFactor*top, sm.LimitHz, 1e-12)
			} else {
				require.Less(t, sm.LimitHz, noise.SampledCapFactor*top)
			}
			require.GreaterOrEqual(t, sm.RMSV, res.OutputRMSV)
			require.False(t, math.IsNaN(sm.RMSV) || math.IsInf(sm.RMSV, 0))
			t.Logf("in band %.4g µV, sampled %.4g µV to %.3g Hz", res.OutputRMSV*1e6, sm.RMSV*1e6, sm.LimitHz)
		})
	}
}

func TestOutputSampledErrors(t *testing.T) {
	t.Parallel()
	ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(rcR, rcC)}}
	tests := []struct {
		name string
		s    noise.Sampling
		want string
	}{
		{"no-rate", noise.Sampling{}, "sample rate"},
		{"negative-rate", noise.Sampling{SampleRateHz: -1}, "sample rate"},
		{"infinite-rate", noise.Sampling{SampleRateHz: math.Inf(1)}, "sample rate"},
		{"nan-rate", noise.Sampling{SampleRateHz: math.NaN()}, "sample rate"},
		{"output-above", noise.Sampling{SampleRateHz: 48e3, OutputRateHz: 96e3}, "output rate"},
		{"output-negative", noise.Sampling{SampleRateHz: 48e3, OutputRateHz: -1}, "output rate"},
		{"output-nan", noise.Sampling{SampleRateHz: 48e3, OutputRateHz: math.NaN()}, "output rate"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := noise.OutputSampled(ch, noise.OpAmpNoise{}, 0, nil, [2]float64{0, 1e3}, tc.s)
			require.ErrorIs(t, err, noise.ErrInvalid)
			require.ErrorContains(t, err, tc.want)
		})
	}
	// Output's own errors come first.
	_, err := noise.OutputSampled(ch, noise.OpAmpNoise{}, 0, nil, [2]float64{10, 10}, noise.Sampling{SampleRateHz: 48e3})
	require.ErrorContains(t, err, "bandHz")
}

// SNR of a full-scale sine and the bits lost, at points with closed forms:
// without noise the ideal converter's 20·log10(2^bits·√1.5) =
// 6.0206·bits + 1.7609 dB (textbook; the rule of thumb 6.02·bits + 1.76)
// and no loss; a noise equal to q = LSB/√12 doubles the noise power:
// 10·log10(2) = 3.0103 dB less and ½ bit lost; √3·q quadruples it: 6.0206
// dB and 1 bit; 1e-3·q loses ½·log2(1 + 1e-6) = 7.2135e-7 bit.
func TestSNRAndENOBLoss(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		bits     int
		fsVpp    float64
		noiseInQ float64 // the noise in units of q
		snrLess  float64 // dB below the ideal converter's
		lossBits float64
	}{
		{"16-bit-quiet", 16, 4, 0, 0, 0},
		{"24-bit-quiet", 24, 5, 0, 0, 0},
		{"12-bit-quiet", 12, 3.3, 0, 0, 0},
		{"16-bit-noise-q", 16, 4, 1, 3.0103, 0.5},
		{"18-bit-noise-q", 18, 2.5, 1, 3.0103, 0.5},
		{"16-bit-noise-√3q", 16, 4, math.Sqrt(3), 6.0206, 1},
		{"16-bit-noise-1e-3q", 16, 4, 1e-3, 4.3429e-6, 7.2135e-7},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			q := noise.QuantizationRMSV(tc.bits, tc.fsVpp)
			ideal := 20*float64(tc.bits)*math.Log10(2) + 10*math.Log10(1.5)
			require.InDelta(t, 6.02*float64(tc.bits)+1.76, ideal, 0.02) // the rule of thumb
			snr := noise.SNRdB(tc.bits, tc.fsVpp, tc.noiseInQ*q)
			require.InDelta(t, ideal-tc.snrLess, snr, 1e-4)
			loss := noise.ENOBLossBits(tc.bits, tc.fsVpp, tc.noiseInQ*q)
			require.GreaterOrEqual(t, loss, 0.0)
			if tc.lossBits == 0 {
				require.Zero(t, loss)
			} else {
				require.InEpsilon(t, tc.lossBits, loss, 1e-4)
			}
		})
	}
	for _, bad := range []struct {
		bits         int
		fsVpp, noise float64
	}{{0, 4, 0}, {16, 0, 0}, {16, math.NaN(), 0}, {16, 4, -1}, {16, 4, math.Inf(1)}, {16, 4, math.NaN()}} {
		require.True(t, math.IsNaN(noise.SNRdB(bad.bits, bad.fsVpp, bad.noise)), "%+v", bad)
		require.True(t, math.IsNaN(noise.ENOBLossBits(bad.bits, bad.fsVpp, bad.noise)), "%+v", bad)
	}
}
