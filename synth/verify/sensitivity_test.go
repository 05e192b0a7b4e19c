package verify_test

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify"
)

// TestSensitivitiesClosedForm checks the sensitivities against the
// closed forms of textbook stages with ideal op-amps (to 1e-13: they are
// exact derivatives, met to 2e-15), and with 1 MHz op-amps under a 1 kHz
// section to 1e-2 (the op-amp's own contribution).
//
//   - Unity-gain Sallen-Key lowpass (R1 in→n1, R2 n1→n2, C1 n1→out, C2
//     n2→ground): ω0 = 1/√(R1R2C1C2), Q = √(R1R2C1C2)/(C2(R1+R2)) (Sallen
//     & Key, IRE Trans. Circuit Theory 1955; e.g. Texas Instruments
//     SLOA024B, "Analysis of the Sallen-Key architecture"). So S^f0 = −½
//     for all four parts; S^Q_C1 = ½, S^Q_C2 = −½, S^Q_R1 = ½ − R1/(R1+R2)
//     = (R2 − R1)/(2(R1+R2)) and S^Q_R2 = −S^Q_R1.
//   - Multiple-feedback lowpass (R1 in→n1, R2 n1→out, R3 n1→n2, C1
//     n1→ground, C2 n2→out): ω0 = 1/√(R2R3C1C2), Q = √(R2R3C1C2)/(C2·D),
//     D = R2 + R3 + R2R3/R1 (e.g. TI SLOA049, "Active low-pass filter
//     design"). So S^f0_R1 = 0, −½ for the others; S^Q_C1 = ½, S^Q_C2 =
//     −½, S^Q_R1 = R2R3/(R1·D), S^Q_R2 = ½ − (R2 + R2R3/R1)/D, S^Q_R3 =
//     ½ − (R3 + R2R3/R1)/D.
//   - RC lowpass and buffer: f0 = 1/(2πRC), S^f0_R = S^f0_C = −1, Q = 0.
func TestSensitivitiesClosedForm(t *testing.T) {
	t.Parallel()
	const r1, r2, c1, c2 = 10e3, 22e3, 33e-9, 4.7e-9
	skQR1 := (r2 - r1) / (2 * (r1 + r2))
	const m1, m2, m3, mc1, mc2 = 10e3, 20e3, 4.7e3, 47e-9, 2.2e-9
	d := m2 + m3 + m2*m3/m1
	for _, tc := range []struct {
		name  string
		st    circuit.Stage
		model circuit.Model
		tol   float64
		want  map[string][2]float64
	}{
		{"sallen-key-lp/ideal", sallenKeyLP(r1, r2, c1, c2), ideal, 1e-13, map[string][2]float64{
			"R1": {-0.5, skQR1}, "R2": {-0.5, -skQR1}, "C1": {-0.5, 0.5}, "C2": {-0.5, -0.5}}},
		{"sallen-key-lp/single-pole", sallenKeyLP(r1, r2, c1, c2), singlePole, 1e-2, map[string][2]float64{
			"R1": {-0.5, skQR1}, "R2": {-0.5, -skQR1}, "C1": {-0.5, 0.5}, "C2": {-0.5, -0.5}}},
		{"sallen-key-lp-equal-r/ideal", sallenKeyLP(15e3, 15e3, 33e-9, 4.7e-9), ideal, 1e-13, map[string][2]float64{
			"R1": {-0.5, 0}, "R2": {-0.5, 0}, "C1": {-0.5, 0.5}, "C2": {-0.5, -0.5}}},
		{"mfb-lp/ideal", mfbLP(m1, m2, m3, mc1, mc2), ideal, 1e-13, map[string][2]float64{
			"R1": {0, m2 * m3 / (m1 * d)}, "R2": {-0.5, 0.5 - (m2+m2*m3/m1)/d}, "R3": {-0.5, 0.5 - (m3+m2*m3/m1)/d},
			"C1": {-0.5, 0.5}, "C2": {-0.5, -0.5}}},
		{"rc-buffer/ideal", rcBuffer(15e3, 10e-9), ideal, 1e-13, map[string][2]float64{"R1": {-1, 0}, "C1": {-1, 0}}},
		{"rc-buffer/single-pole", rcBuffer(15e3, 10e-9), singlePole, 1e-2, map[string][2]float64{"R1": {-1, 0}, "C1": {-1, 0}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			sens, err := verify.Sensitivities(tc.st, tc.model)
			require.NoError(t, err)
			require.Len(t, sens, len(tc.want))
			for i, s := range sens {
				w, ok := tc.want[s.Ref]
				require.True(t, ok, s.Ref)
				require.InDelta(t, w[0], s.F0, tc.tol, "S^f0_%s", s.Ref)
				require.InDelta(t, w[1], s.Q, tc.tol, "S^Q_%s", s.Ref)
				if i > 0 {
					prev := math.Max(math.Abs(sens[i-1].F0), math.Abs(sens[i-1].Q))
					require.GreaterOrEqual(t, prev+1e-9, math.Max(math.Abs(s.F0), math.Abs(s.Q)), "ranked (ties to 1e-9)")
				}
			}
		})
	}
}

// TestSensitivitiesAgainstCentralDifferences: for every stage of the
// example designs (state-variable notches, Sallen-Key, multiple-feedback
// bandpass and RC stages) and the textbook stages, with ideal op-amps,
// the 1 MHz single-pole model and the example's own op-amp, the exact
// sensitivities agree with central differences of the circuit model
// (each part scaled by e^(±1e-5), the transfer function recomputed and
// its dominant pair read; error about 1e-10) within 1e-6; measured at
// most 1e-9. The adjoint path is taken for every one of these stages.
func TestSensitivitiesAgainstCentralDifferences(t *testing.T) {
	t.Parallel()
	type stageCase struct {
		name   string
		st     circuit.Stage
		models []circuit.Model
	}
	var cases []stageCase
	for name, ch := range exampleChains(t) {
		for i, st := range ch.Stages {
			// A SAR converter's driver R–C is not part of the section
			// whose f0 and Q synth reads the sensitivities of.
			st = st.WithoutDriver()
			cases = append(cases, stageCase{fmt.Sprintf("%s/stage%d", name, i+1), st, []circuit.Model{ideal, singlePole, ch.Model}})
		}
	}
	for name, st := range map[string]circuit.Stage{
		"sallen-key-lp":           sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9),
		"sallen-key-hp":           sallenKeyHP(10e-9, 10e-9, 12e3, 47e3),
		"mfb-lp":                  mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9),
		"rc-buffer":               rcBuffer(15e3, 10e-9),
		"fda-mfb-lp":              mustFD(t, mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9), true),
		"fda-mfb-lp-se":           mustFD(t, mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9), false),
		"sallen-key-lp-converted": mustConverted(t, sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9)),
	} {
		cases = append(cases, stageCase{name, st, []circuit.Model{ideal, singlePole, {GBWHz: 50e3, DCGainDB: 80}}})
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			worst := 0.0
			defer func() { t.Logf("worst |S − central difference| %.2g", worst) }()
			for _, m := range tc.models {
				r, err := tc.st.TransferFunction(m)
				require.NoError(t, err)
				order := r.SectionOrder
				pair := func(st circuit.Stage) (float64, float64) {
					r, err := st.TransferFunction(m)
					require.NoError(t, err)
					r.SectionOrder = order
					f0, q, ok := r.DominantPair()
					require.True(t, ok)
					return f0, q
				}
				_, ok, err := verify.AdjointSensitivities(tc.st, m)
				require.NoError(t, err)
				require.True(t, ok, "the adjoint path applies (model %+v)", m)
				sens, err := verify.Sensitivities(tc.st, m)
				require.NoError(t, err)
				require.Len(t, sens, len(tc.st.Parts))
				const delta = 1e-5
				for _, s := range sens {
					pert := tc.st
					pert.Parts = append([]circuit.Part(nil), tc.st.Parts...)
					j := slices.IndexFunc(pert.Parts, func(p circuit.Part) bool { return p.Ref == s.Ref })
					require.GreaterOrEqual(t, j, 0)
					v := pert.Parts[j].Value
					pert.Parts[j].Value = v * math.Exp(delta)
					fu, qu := pair(pert)
					pert.Parts[j].Value = v * math.Exp(-delta)
					fd, qd := pair(pert)
					wantF0 := (math.Log(fu) - math.Log(fd)) / (2 * delta)
					wantQ := 0.0
					if order == 2 {
						wantQ = (math.Log(math.Abs(qu)) - math.Log(math.Abs(qd))) / (2 * delta)
					}
					worst = math.Max(worst, math.Max(math.Abs(wantF0-s.F0), math.Abs(wantQ-s.Q)))
					require.InDelta(t, wantF0, s.F0, 1e-6, "S^f0_%s (model %+v)", s.Ref, m)
					require.InDelta(t, wantQ, s.Q, 1e-6, "S^Q_%s (model %+v)", s.Ref, m)
				}
			}
		})
	}
}

// TestSensitivitiesNearDoublePole: a unity-gain Sallen-Key lowpass with
// R1 = R2 and C1 = C2·(1 + x) has Q = √(1 + x)/2, a double pole at x = 0
// with ideal op-amps. Across it (x from −1e-1 to 1e-1) the sensitivities
// keep the closed forms (Sallen & Key 1955, see TestSensitivitiesClosedForm:
// S^f0 = −½ for every part, S^Q_C1 = ½, S^Q_C2 = −½, S^Q_R = 0) to 1e-7;
// the adjoint path steps aside, for central differences, exactly when the
// pair is within 1 % of double (|x| ≤ 1e-5 here: the poles' distance over
// their magnitude is 2√|x|).
func TestSensitivitiesNearDoublePole(t *testing.T) {
	t.Parallel()
	want := map[string][2]float64{"R1": {-0.5, 0}, "R2": {-0.5, 0}, "C1": {-0.5, 0.5}, "C2": {-0.5, -0.5}}
	for _, x := range []float64{-1e-1, -1e-3, -1e-4, -1e-5, -1e-7, 0, 1e-7, 1e-5, 1e-4, 1e-3, 1e-1} {
		t.Run(fmt.Sprint(x), func(t *testing.T) {
			t.Parallel()
			st := sallenKeyLP(10e3, 10e3, 10e-9*(1+x), 10e-9)
			sens, err := verify.Sensitivities(st, ideal)
			require.NoError(t, err)
			require.Len(t, sens, 4)
			for _, s := range sens {
				require.InDelta(t, want[s.Ref][0], s.F0, 1e-7, "S^f0_%s", s.Ref)
				require.InDelta(t, want[s.Ref][1], s.Q, 1e-7, "S^Q_%s", s.Ref)
			}
			_, ok, err := verify.AdjointSensitivities(st, ideal)
			require.NoError(t, err)
			require.Equal(t, math.Abs(x) > 1e-5, ok, "adjoint path taken")
		})
	}
}

// TestDominantRootsMatchDominantPair: the poles the sensitivities
// differentiate are those circuit.Rational.DominantPair reads: for every
// stage of the example designs and the textbook stages, with ideal, 1 MHz
// and 50 kHz op-amps, the f0 and Q they give are DominantPair's exactly.
func TestDominantRootsMatchDominantPair(t *testing.T) {
	t.Parallel()
	stages := []circuit.Stage{sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9), sallenKeyLP(10e3, 10e3, 10e-9, 10e-9),
		sallenKeyHP(10e-9, 10e-9, 12e3, 47e3), mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9), rcBuffer(15e3, 10e-9), inverting(10e3, 47e3)}
	for _, ch := range exampleChains(t) {
		stages = append(stages, ch.Stages...)
	}
	for _, st := range stages {
		for _, m := range []circuit.Model{ideal, singlePole, {GBWHz: 50e3, DCGainDB: 80}} {
			r, err := st.TransferFunction(m)
			require.NoError(t, err)
			f0, q, ok := r.DominantPair()
			gf0, gq, gok := verify.DominantFromRoots(r)
			require.Equal(t, ok, gok)
			require.Equal(t, f0, gf0)
			require.Equal(t, q, gq)
		}
	}
}

// TestSensitivitiesEdgeCases: a gain stage has none; invalid input is an
// error from the circuit package.
func TestSensitivitiesEdgeCases(t *testing.T) {
	t.Parallel()
	sens, err := verify.Sensitivities(inverting(10e3, 47e3), ideal)
	require.NoError(t, err)
	require.Empty(t, sens)
	_, err = verify.Sensitivities(circuit.Stage{}, ideal)
	require.ErrorIs(t, err, circuit.ErrInvalid)
	_, err = verify.Sensitivities(rcBuffer(1e3, 1e-9), circuit.Model{GBWHz: -1, DCGainDB: 100})
	require.ErrorIs(t, err, circuit.ErrInvalid)
}

// TestRequiredTolerancePct checks the allocation by hand for the
// equal-resistor Sallen-Key (S^f0 = −½ for all, S^Q = ±½ for the
// capacitors, 0 for the resistors), and then that a Monte Carlo run with
// the required tolerances spreads f0 by the σ budget (within 10 %).
func TestRequiredTolerancePct(t *testing.T) {
	t.Parallel()
	st := sallenKeyLP(15e3, 15e3, 33e-9, 4.7e-9)
	sens, err := verify.Sensitivities(st, ideal)
	require.NoError(t, err)
	// Yield 0.99 with two limits: each may fail on 0.5 %, z = Φ⁻¹(0.9975).
	z := 2.807033768343811
	target := verify.ToleranceTarget{F0Pct: 1, QPct: 2, Yield: 0.99}
	for _, tc := range []struct {
		name  string
		alloc verify.Allocation
		dist  verify.Distribution
		want  map[string]float64
	}{
		// Equal: σ_f = 1 %/z over √(4·¼) = 1; σ_Q = 2 %/z over √(2·¼):
		// f0 binds. Uniform tolerance = √3·σ.
		{"equal/uniform", verify.EqualTolerance, verify.Uniform, map[string]float64{
			"R1": math.Sqrt(3) / z, "R2": math.Sqrt(3) / z, "C1": math.Sqrt(3) / z, "C2": math.Sqrt(3) / z}},
		// Inverse sensitivity: f0 gives each part σ = (1 %/z)/(½·√4) = 1 %/z;
		// Q gives the capacitors (2 %/z)/(½·√2) = 2√2 %/z: f0 binds again.
		{"inverse/gaussian", verify.InverseSensitivity, verify.Gaussian, map[string]float64{
			"R1": 1 / z / verify.Gaussian.Sigma(), "R2": 1 / z / verify.Gaussian.Sigma(),
			"C1": 1 / z / verify.Gaussian.Sigma(), "C2": 1 / z / verify.Gaussian.Sigma()}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tg := target
			tg.Allocation, tg.Distribution = tc.alloc, tc.dist
			req, err := verify.RequiredTolerancePct(sens, tg)
			require.NoError(t, err)
			require.Len(t, req, 4)
			pst := st
			pst.Parts = append([]circuit.Part(nil), st.Parts...)
			for _, r := range req {
				require.InEpsilon(t, tc.want[r.Ref], r.TolerancePct, 1e-6, r.Ref)
				for j := range pst.Parts {
					if pst.Parts[j].Ref == r.Ref {
						pst.Parts[j].TolerancePct = r.TolerancePct
					}
				}
			}
			res, err := verify.MonteCarlo(background(), circuit.Chain{Stages: []circuit.Stage{pst}, Model: ideal},
				verify.Tolerance{Distribution: tc.dist}, verify.MonteCarloOptions{Trials: 20000, Seed: 9, FreqHz: []float64{1e3}}, always)
			require.NoError(t, err)
			require.InEpsilon(t, 1/z, res.Stages[0].F0StdPct, 0.10)
		})
	}
	// A part neither f0 nor Q depends on needs nothing.
	req, err := verify.RequiredTolerancePct([]verify.Sensitivity{{Ref: "R1", F0: -1}, {Ref: "R9"}}, verify.ToleranceTarget{F0Pct: 1, Yield: 0.9})
	require.NoError(t, err)
	require.Equal(t, float64(verify.MaxRequiredTolerancePct), req[1].TolerancePct)
	// One limit: z = Φ⁻¹(0.95); uniform.
	require.InEpsilon(t, math.Sqrt(3)/1.6448536269514722, req[0].TolerancePct, 1e-9)
}

func TestRequiredTolerancePctErrors(t *testing.T) {
	t.Parallel()
	sens := []verify.Sensitivity{{Ref: "R1", F0: -0.5, Q: 0.1}}
	for _, tc := range []struct {
		name string
		sens []verify.Sensitivity
		tg   verify.ToleranceTarget
		msg  string
	}{
		{"no-limits", sens, verify.ToleranceTarget{Yield: 0.9}, "not both 0"},
		{"nan-limit", sens, verify.ToleranceTarget{F0Pct: math.NaN(), Yield: 0.9}, "F0Pct NaN"},
		{"negative-limit", sens, verify.ToleranceTarget{QPct: -1, Yield: 0.9}, "QPct -1"},
		{"yield-one", sens, verify.ToleranceTarget{F0Pct: 1, Yield: 1}, "Yield 1"},
		{"yield-nan", sens, verify.ToleranceTarget{F0Pct: 1, Yield: math.NaN()}, "Yield NaN"},
		{"distribution", sens, verify.ToleranceTarget{F0Pct: 1, Yield: 0.9, Distribution: "x"}, `"x"`},
		{"allocation", sens, verify.ToleranceTarget{F0Pct: 1, Yield: 0.9, Allocation: "x"}, `"x"`},
		{"nan-sensitivity", []verify.Sensitivity{{Ref: "C1", F0: math.NaN()}}, verify.ToleranceTarget{F0Pct: 1, Yield: 0.9}, "C1"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := verify.RequiredTolerancePct(tc.sens, tc.tg)
			require.ErrorIs(t, err, verify.ErrInvalid)
			require.ErrorContains(t, err, tc.msg)
		})
	}
}

// TestDistributionSigma: the truncated gaussian's σ against its closed
// form value √(1 − 6φ(3)/(2Φ(3) − 1)) = 0.986578 (Johnson, Kotz &
// Balakrishnan, "Continuous Univariate Distributions", truncated normal).
func TestDistributionSigma(t *testing.T) {
	t.Parallel()
	require.InDelta(t, 1/math.Sqrt(3), verify.Uniform.Sigma(), 1e-15)
	require.InDelta(t, 1/math.Sqrt(3), verify.Distribution("").Sigma(), 1e-15)
	require.InDelta(t, 0.986578/3, verify.Gaussian.Sigma(), 1e-6)
	require.True(t, math.IsNaN(verify.Distribution("x").Sigma()))
}

// mustFD is st in its fully differential form, differentially driven
// (diffIn) or converting a single-ended input.
func mustFD(t *testing.T, st circuit.Stage, diffIn bool) circuit.Stage {
	t.Helper()
	fd, err := st.ToFullyDifferential(true)
	require.NoError(t, err)
	if !diffIn {
		fd = fd.SingleEndedInput()
	}
	return fd
}

// mustConverted is st followed by the single-ended to differential
// conversion (circuit.Stage.WithConversion, 10 kΩ halves).
func mustConverted(t *testing.T, st circuit.Stage) circuit.Stage {
	t.Helper()
	out, err := st.WithConversion(circuit.Part{Value: 10e3})
	require.NoError(t, err)
	return out
}
