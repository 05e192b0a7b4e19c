package noise_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
)

// kT is Boltzmann's constant times 300 K.
const kT = noise.BoltzmannJPerK * 300

// A lone resistor's open-circuit noise is √(4kTR) (Johnson–Nyquist,
// textbook): ThermalVPerRtHz, and Output for a resistor into an ideal,
// noiseless follower, which senses it open-circuit.
func TestThermalResistor(t *testing.T) {
	t.Parallel()
	tests := []struct {
		rOhm, tempK float64
		want        float64 // V/√Hz, typed from the formula's value
	}{
		{1e3, 300, 4.0703e-9},  // the textbook 4.07 nV/√Hz of 1 kΩ at 300 K
		{1e3, 0, 4.0703e-9},    // 0 K selects 300 K
		{10e3, 300, 12.871e-9}, // 12.9 nV/√Hz
		{50, 290, 0.8949e-9},   // 0.89 nV/√Hz, 50 Ω at the IEEE reference 290 K
		{1e6, 350, 139.03e-9},
	}
	for _, tc := range tests {
		t.Run("", func(t *testing.T) {
			t.Parallel()
			tempK := tc.tempK
			if tempK == 0 {
				tempK = 300
			}
			closed := math.Sqrt(4 * noise.BoltzmannJPerK * tempK * tc.rOhm)
			got := noise.ThermalVPerRtHz(tc.rOhm, tc.tempK)
			require.InEpsilon(t, closed, got, 1e-15)
			require.InEpsilon(t, tc.want, got, 1e-3)
			stage := circuit.Stage{
				Topology: "follower",
				Parts:    []circuit.Part{res("R1", "in", "n1", tc.rOhm)},
				OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
				Out:      "out",
			}
			ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{stage}}
			res, err := noise.Output(ch, noise.OpAmpNoise{}, tc.tempK, []float64{1, 1e3, 1e6}, [2]float64{0, 1e4})
			require.NoError(t, err)
			for _, v := range res.OutputVPerRtHz {
				require.InEpsilon(t, closed, v, 1e-12)
			}
			require.InEpsilon(t, closed*math.Sqrt(1e4), res.OutputRMSV, 1e-9)
			require.Equal(t, []noise.Contributor{{Ref: "R101", Share: 1}, {Ref: "U101", Share: 0}}, res.Contributors)
		})
	}
}

// The thermal noise of R through an RC lowpass integrates to √(kT/C),
// whatever R (textbook). The band [0, 10⁶·fc] misses (2/π)·10⁻⁶ of the
// power.
func TestKTC(t *testing.T) {
	t.Parallel()
	tests := []struct{ r, c float64 }{{1e3, 1e-9}, {100e3, 1e-9}, {10e3, 100e-12}, {1e6, 1e-6}}
	for _, tc := range tests {
		t.Run("", func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(tc.r, tc.c)}}
			fc := 1 / (2 * math.Pi * tc.r * tc.c)
			res, err := noise.Output(ch, noise.OpAmpNoise{}, 300, []float64{fc}, [2]float64{0, 1e6 * fc})
			require.NoError(t, err)
			require.InEpsilon(t, math.Sqrt(kT/tc.c), res.OutputRMSV, 1e-3)
			require.InEpsilon(t, math.Sqrt(kT/tc.c), res.OutputRMSV, 1e-6) // the quadrature's own accuracy
			// At fc the density is √(4kTR)/√2 (closed form).
			require.InEpsilon(t, math.Sqrt(2*kT*tc.r), res.OutputVPerRtHz[0], 1e-12)
		})
	}
}

// The inverting amplifier with an ideal op-amp (closed form, from the
// superposition of its four sources with gain −R2/R1 and noise gain
// 1 + R2/R1):
//
//	e² = 4kT·R2 + 4kT·R1·(R2/R1)² + en²·(1 + R2/R1)² + in²·R2²
//
// (the + input's current noise flows into ground).
func TestInvertingClosedForm(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		r1, r2 float64
		on     noise.OpAmpNoise
	}{
		{"gain-10", 1e3, 10e3, noise.DefaultOpAmpNoise()},
		{"gain-1-big-R", 1e6, 1e6, noise.DefaultOpAmpNoise()},
		{"current-only", 10e3, 100e3, noise.OpAmpNoise{CurrentAPerRtHz: 5e-12}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{inverting(tc.r1, tc.r2)}}
			g := tc.r2 / tc.r1
			pR2 := 4 * kT * tc.r2
			pR1 := 4 * kT * tc.r1 * g * g
			pU := tc.on.VoltageVPerRtHz*tc.on.VoltageVPerRtHz*(1+g)*(1+g) + tc.on.CurrentAPerRtHz*tc.on.CurrentAPerRtHz*tc.r2*tc.r2
			sum := pR1 + pR2 + pU
			res, err := noise.Output(ch, tc.on, 0, logspace(1, 1e6, 13), [2]float64{20, 20e3})
			require.NoError(t, err)
			for _, v := range res.OutputVPerRtHz {
				require.InEpsilon(t, math.Sqrt(sum), v, 1e-12)
			}
			require.InEpsilon(t, math.Sqrt(sum*(20e3-20)), res.OutputRMSV, 1e-9)
			want := map[string]float64{"R101": pR1 / sum, "R102": pR2 / sum, "U101": pU / sum}
			total := 0.0
			for i, c := range res.Contributors {
				require.InDelta(t, want[c.Ref], c.Share, 1e-9, c.Ref)
				total += c.Share
				if i > 0 {
					require.GreaterOrEqual(t, res.Contributors[i-1].Share, c.Share, "ranked")
				}
			}
			require.InDelta(t, 1, total, 1e-12)
		})
	}
}

// Noise of the stage's input reaches the output through the later stages:
// a resistor-only first stage (its output density flat, √(4kTR)) feeding
// an RC buffer gives √(4kTR)·|H2| plus the second stage's own noise, and
// the contributors are named with chain-wide refs.
func TestCascade(t *testing.T) {
	t.Parallel()
	const r1, r2, c2 = 4.7e3, 10e3, 10e-9
	follower := circuit.Stage{
		Topology: "follower",
		Parts:    []circuit.Part{res("R1", "in", "n1", r1)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
	ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{follower, rcBuffer(r2, c2)}}
	freq := logspace(10, 1e6, 41)
	res, err := noise.Output(ch, noise.OpAmpNoise{}, 0, freq, [2]float64{10, 1e6})
	require.NoError(t, err)
	for i, f := range freq {
		x := 2 * math.Pi * f * r2 * c2
		h2 := 1 / (1 + x*x) // |H2|²
		want := math.Sqrt(4*kT*r1*h2 + 4*kT*r2*h2)
		require.InEpsilon(t, want, res.OutputVPerRtHz[i], 1e-12, "at %v Hz", f)
	}
	require.Equal(t, "R201", res.Contributors[0].Ref)
	require.Equal(t, "R101", res.Contributors[1].Ref)
	require.InDelta(t, r2/(r1+r2), res.Contributors[0].Share, 1e-9)
}

func TestOutputErrors(t *testing.T) {
	t.Parallel()
	good := circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(rcR, rcC)}}
	band := [2]float64{10, 1e4}
	tests := []struct {
		name  string
		ch    circuit.Chain
		on    noise.OpAmpNoise
		tempK float64
		freq  []float64
		band  [2]float64
		want  string
	}{
		{"no-stages", circuit.Chain{Model: ideal}, noise.OpAmpNoise{}, 0, nil, band, "no stages"},
		{"bad-model", circuit.Chain{Model: circuit.Model{GBWHz: -1, DCGainDB: 100}, Stages: good.Stages}, noise.OpAmpNoise{}, 0, nil, band, "GBWHz"},
		{"negative-en", good, noise.OpAmpNoise{VoltageVPerRtHz: -1}, 0, nil, band, "VoltageVPerRtHz"},
		{"nan-in", good, noise.OpAmpNoise{CurrentAPerRtHz: math.NaN()}, 0, nil, band, "CurrentAPerRtHz"},
		{"negative-temp", good, noise.OpAmpNoise{}, -1, nil, band, "tempK"},
		{"bad-freq", good, noise.OpAmpNoise{}, 0, []float64{1, math.Inf(1)}, band, "freqHz[1]"},
		{"negative-freq", good, noise.OpAmpNoise{}, 0, []float64{-1}, band, "freqHz[0]"},
		{"empty-band", good, noise.OpAmpNoise{}, 0, nil, [2]float64{10, 10}, "bandHz"},
		{"negative-band", good, noise.OpAmpNoise{}, 0, nil, [2]float64{-1, 10}, "bandHz"},
		{"infinite-band", good, noise.OpAmpNoise{}, 0, nil, [2]float64{1, math.Inf(1)}, "bandHz"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := noise.Output(tc.ch, tc.on, tc.tempK, tc.freq, tc.band)
			require.ErrorIs(t, err, noise.ErrInvalid)
			require.ErrorContains(t, err, tc.want)
		})
	}
	// An invalid chain's error wraps circuit.ErrInvalid too.
	_, err := noise.Output(circuit.Chain{Model: ideal}, noise.OpAmpNoise{}, 0, nil, band)
	require.ErrorIs(t, err, circuit.ErrInvalid)
}

// A highpass has a node joined to the rest only by capacitors at DC, so
// its nodal matrix is singular at 0 Hz.
func TestSingularAtDC(t *testing.T) {
	t.Parallel()
	hp := circuit.Stage{
		Topology: "rc-highpass",
		Parts:    []circuit.Part{capa("C1", "in", "n1", 10e-9), capa("C2", "n1", "n2", 10e-9), res("R1", "n2", "0", 10e3)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
	ch := circuit.Chain{Model: ideal, Stages: []circuit.Stage{hp}}
	_, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, []float64{0}, [2]float64{10, 1e4})
	require.ErrorIs(t, err, circuit.ErrSingular)
	res, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, []float64{1e3}, [2]float64{0, 1e4})
	require.NoError(t, err, "a band from 0 Hz never evaluates at 0 Hz")
	require.Greater(t, res.OutputRMSV, 0.0)
}

// The 8th-order Butterworth chain: shares sum to 1 and are ranked, every
// part is listed, the density falls in the stopband, and the RMS value
// grows with the band.
func TestButterworthChain(t *testing.T) {
	t.Parallel()
	for _, m := range []circuit.Model{ideal, singlePole} {
		ch := butterworth8(1000, m)
		freq := logspace(10, 1e5, 200)
		narrow, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, freq, [2]float64{10, 1e3})
		require.NoError(t, err)
		wide, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, freq, [2]float64{10, 24e3})
		require.NoError(t, err)
		require.Greater(t, wide.OutputRMSV, narrow.OutputRMSV)
		require.Len(t, wide.Contributors, 4*3)
		total := 0.0
		for i, c := range wide.Contributors {
			total += c.Share
			if i > 0 {
				require.GreaterOrEqual(t, wide.Contributors[i-1].Share, c.Share)
			}
		}
		require.InDelta(t, 1, total, 1e-12)
		require.Less(t, wide.OutputVPerRtHz[len(freq)-1], wide.OutputVPerRtHz[0])
	}
}

// LSB and quantisation noise (closed form): 16 bits over 4 Vpp give an
// LSB of 4/65536 = 61.04 µV and LSB/√12 = 17.62 µV.
func TestConverter(t *testing.T) {
	t.Parallel()
	tests := []struct {
		bits     int
		fs       float64
		lsb, rms float64
	}{
		{16, 4, 61.035e-6, 17.619e-6},
		{24, 5, 298.02e-9, 86.03e-9},
		{12, 3.3, 805.66e-6, 232.57e-6},
		{1, 2, 1, 0.28868},
	}
	for _, tc := range tests {
		require.InEpsilon(t, tc.lsb, noise.LSBVolts(tc.bits, tc.fs), 1e-4)
		require.InEpsilon(t, tc.rms, noise.QuantizationRMSV(tc.bits, tc.fs), 1e-4)
		require.Equal(t, tc.fs/math.Pow(2, float64(tc.bits)), noise.LSBVolts(tc.bits, tc.fs))
	}
	for _, bad := range []struct {
		bits int
		fs   float64
	}{{0, 4}, {65, 4}, {16, 0}, {16, math.Inf(1)}, {16, math.NaN()}} {
		require.True(t, math.IsNaN(noise.LSBVolts(bad.bits, bad.fs)))
		require.True(t, math.IsNaN(noise.QuantizationRMSV(bad.bits, bad.fs)))
	}
}

// Slew rate of a full-scale sine, 2π·f·Vpeak (common practice): 20 kHz
// at 4 Vpp needs 2π·20e3·2 = 0.2513 V/µs.
func TestSlew(t *testing.T) {
	t.Parallel()
	require.InEpsilon(t, 2*math.Pi*20e3*2, noise.SlewVPerS(20e3, 4), 1e-15)
	require.InEpsilon(t, 0.2513e6, noise.SlewVPerS(20e3, 4), 1e-3)
	require.Zero(t, noise.SlewVPerS(0, 4))
	require.True(t, math.IsNaN(noise.SlewVPerS(-1, 4)))
	require.True(t, math.IsNaN(noise.SlewVPerS(1, math.Inf(1))))
}

// The integrated RMS against an independent quadrature of Output's own
// density: composite Simpson in ln f on 20,001 points, for the order-8
// Butterworth chain and a Q = 20 Sallen-Key stage (R1 = R2 = 10 kΩ,
// C1 = 4Q²·C2).
func TestRMSAgainstSimpson(t *testing.T) {
	t.Parallel()
	const q = 20
	highQ := circuit.Chain{Model: singlePole, Stages: []circuit.Stage{sallenKeyLP(10e3, 10e3, 4*q*q*1e-9, 1e-9)}}
	for _, ch := range []circuit.Chain{butterworth8(1000, ideal), butterworth8(1000, singlePole), highQ} {
		const lo, hi, n = 10.0, 24e3, 20001
		freq := logspace(lo, hi, n)
		res, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, freq, [2]float64{lo, hi})
		require.NoError(t, err)
		h := math.Log(hi/lo) / (n - 1)
		var sum float64
		for i, f := range freq {
			w := 2.0
			switch {
			case i == 0 || i == n-1:
				w = 1
			case i%2 == 1:
				w = 4
			}
			d := res.OutputVPerRtHz[i]
			sum += w * d * d * f
		}
		simpson := math.Sqrt(sum * h / 3)
		require.InEpsilon(t, simpson, res.OutputRMSV, 1e-6)
		t.Logf("%d stage(s): %.6g µV rms, Simpson %.6g µV, relative difference %.2g", len(ch.Stages), res.OutputRMSV*1e6, simpson*1e6, res.OutputRMSV/simpson-1)
	}
}
