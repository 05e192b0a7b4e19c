package topology

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/section"
)

// exgGains are the reference gains every form is checked at: attenuation,
// the −1 dB of a Chebyshev section, unity, and gain.
var exgGains = []float64{0.1, 0.3, 0.8913, 1, 1.002, 1.5, 3, 10}

// exgPoles returns the pole pair of ω0, Q: s² + s·ω0/Q + ω0² (two real
// roots below Q = 0.5).
func exgPoles(w0, q float64) []complex128 {
	d := 1 - 1/(4*q*q)
	if d >= 0 {
		p := complex(-w0/(2*q), w0*math.Sqrt(d))
		return []complex128{p, cmplx.Conj(p)}
	}
	r := w0 * math.Sqrt(-d)
	return []complex128{complex(-w0/(2*q)+r, 0), complex(-w0/(2*q)-r, 0)}
}

// exgSection returns a section of the kind with pole f0 (Hz), Q (second
// order; 0 for first order) and reference gain g.
func exgSection(kind section.Kind, f0, q, g float64) section.Section {
	w0 := 2 * math.Pi * f0
	if q == 0 {
		s := section.Section{Poles: []complex128{complex(-w0, 0)}, Gain: g * w0}
		if kind == section.Highpass {
			s.Zeros, s.Gain = []complex128{0}, g
		}
		return s
	}
	s := section.Section{Poles: exgPoles(w0, q)}
	switch kind {
	case section.Lowpass:
		s.Gain = g * w0 * w0
	case section.Highpass:
		s.Zeros, s.Gain = []complex128{0, 0}, g
	case section.Bandpass:
		s.Zeros, s.Gain = []complex128{0}, g*w0/q
	}
	return s
}

// exgCheckExact asserts that the stage is the section's transfer function,
// times −1 when inverting, to 1e-9 relative at frequencies around f0, by
// full nodal analysis with ideal op-amps.
func exgCheckExact(t *testing.T, sec section.Section, st circuit.Stage, inverting bool) {
	t.Helper()
	require.NoError(t, st.Validate())
	sign := complex(1, 0)
	if inverting {
		sign = -1
	}
	f0 := sec.OmegaRadPerSec() / (2 * math.Pi)
	for _, f := range []float64{0.01 * f0, 0.2 * f0, 0.7 * f0, f0, 1.3 * f0, 4 * f0, 90 * f0} {
		s := complex(0, 2*math.Pi*f)
		got, err := st.SolveAt(circuit.Model{Ideal: true}, s)
		require.NoError(t, err)
		want := sign * sec.ZPK().At(s)
		require.Less(t, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-9, "%.4g Hz: stage %v, section %v", f, got, want)
	}
	for _, p := range st.Parts {
		if p.Kind == circuit.Resistor {
			require.Equal(t, p.Exact, p.Value, "%s keeps its exact value", p.Ref)
		}
	}
}

// exgCheckSeries asserts that a stage built with series values has f0, Q
// and gain within 2 % of the section's, from its own transfer function
// by nodal analysis (circuit.Stage.TransferFunction), and that the errors
// Result reports are those.
func exgCheckSeries(t *testing.T, sec section.Section, r Result) {
	t.Helper()
	st := r.Stage
	require.NoError(t, st.Validate())
	rf, err := st.TransferFunction(circuit.Model{Ideal: true})
	require.NoError(t, err)
	d := rf.Den
	sc := rf.ScaleRadPerSec
	w0 := sec.OmegaRadPerSec()
	var gotW, gotQ float64
	if sec.Order() == 1 {
		require.Len(t, d, 2)
		gotW = d[0] / d[1] * sc
	} else {
		require.Len(t, d, 3)
		gotW = math.Sqrt(d[0]/d[2]) * sc
		gotQ = gotW / sc / (d[1] / d[2])
		p := sec.Poles
		w0 = math.Sqrt(real(p[0] * p[1]))
		q := w0 / -real(p[0]+p[1])
		require.InDelta(t, 0, gotQ/q-1, 0.02, "Q %.5g, want %.5g", gotQ, q)
		require.InDelta(t, 100*(gotQ/q-1), r.QErrPct, 1e-6)
	}
	require.InDelta(t, 0, gotW/w0-1, 0.02, "ω0 %.5g, want %.5g", gotW, w0)
	require.InDelta(t, 100*(gotW/w0-1), r.F0ErrPct, 1e-6)
	var h complex128
	switch sec.Kind() {
	case section.Highpass:
		n := rf.Num
		require.Len(t, n, len(d))
		h = complex(n[len(n)-1]/d[len(d)-1], 0)
	case section.Bandpass:
		h, err = st.SolveAt(circuit.Model{Ideal: true}, complex(0, gotW))
		require.NoError(t, err)
	default:
		h = complex(rf.Num[0]/rf.Den[0], 0)
	}
	g := sec.ReferenceGain()
	require.InDelta(t, 0, cmplx.Abs(h)/g-1, 0.02, "gain %.5g, want %.5g", cmplx.Abs(h), g)
	require.InDelta(t, 100*(cmplx.Abs(h)/g-1), r.GainErrPct, 1e-6)
	require.Equal(t, r.Inverting, real(h) < 0)
}

// TestExactGainEveryForm: every first- and second-order form of
// rc-buffer, inverting-rc, sallen-key and multiple-feedback, at every gain
// of exgGains, realises the section exactly with exact resistors (pole
// f0 and Q, zeros and gain, by nodal analysis against sec.ZPK to 1e-9),
// and within 2 % in f0, Q and gain with E96/E12. The combinations no form
// can build are listed, with the reason, in unbuildable; every other one
// must succeed in both modes.
func TestExactGainEveryForm(t *testing.T) {
	t.Parallel()
	type form struct {
		top  string
		kind section.Kind
		f0   float64
		qs   []float64 // 0: first order
	}
	forms := []form{
		{RCBuffer, section.Lowpass, 1000, []float64{0}},
		{RCBuffer, section.Highpass, 1000, []float64{0}},
		{InvertingRC, section.Lowpass, 1000, []float64{0}},
		{InvertingRC, section.Highpass, 1000, []float64{0}},
		{SallenKey, section.Lowpass, 1000, []float64{0.5412, 0.785, 1.3066, 3}},
		{SallenKey, section.Highpass, 1892, []float64{0.5412, 0.785, 1.3066, 3}},
		{MultipleFeedback, section.Lowpass, 1000, []float64{0.5412, 0.785, 1.3066, 3}},
		{MultipleFeedback, section.Highpass, 1892, []float64{0.5412, 0.785, 1.3066, 3}},
		{MultipleFeedback, section.Bandpass, 1000, []float64{1, 2, 5}},
	}
	// unbuildable: the combinations no form builds, with a phrase of the
	// error that says why. Sallen-Key with K > 1 keeps |S^Q_R| of the
	// gain resistors ≤ MaxGainSensitivity (for the design before
	// rounding); its least value, as C2/C1 → 0, is
	// (√(1 + 4Q²·(K − 1)) − 1)/2, above 3 once Q²·(K − 1) > 12. The
	// multiple-feedback bandpass with gain g below 2Q² needs
	// R1/(R1‖R2) = Q²·(1 + Ca/Cb)/g ≥ 2Q²/g (Ca ≥ Cb), 500 at Q 5,
	// g 0.1: more than 220 kΩ/1 kΩ.
	sens := "Q sensitivity to the gain resistors is at least"
	unbuildable := map[string]string{
		"sallen-key/lowpass-q1.3066-g10":     sens,
		"sallen-key/lowpass-q3-g3":           sens,
		"sallen-key/lowpass-q3-g10":          sens,
		"sallen-key/highpass-q1.3066-g10":    sens,
		"sallen-key/highpass-q3-g3":          sens,
		"sallen-key/highpass-q3-g10":         sens,
		"multiple-feedback/bandpass-q5-g0.1": "the input divider needs R1/(R1‖R2) = 2Q²/g = 500",
	}
	var mu sync.Mutex
	var failed []string
	seen := map[string]bool{}
	for _, fm := range forms {
		for _, q := range fm.qs {
			for _, g := range exgGains {
				name := fmt.Sprintf("%s/%s-q%g-g%g", fm.top, fm.kind, q, g)
				seen[name] = true
				sec := exgSection(fm.kind, fm.f0, q, g)
				for _, exact := range []bool{true, false} {
					mode := "series"
					if exact {
						mode = "exact"
					}
					t.Run(name+"/"+mode, func(t *testing.T) {
						t.Parallel()
						opt := DefaultOptions()
						opt.Exact = exact
						r, err := Realize(sec, fm.top, opt)
						if why, ok := unbuildable[name]; ok {
							require.Error(t, err)
							require.ErrorIs(t, err, ErrLimits)
							require.Contains(t, err.Error(), why)
							return
						}
						if err != nil {
							mu.Lock()
							failed = append(failed, fmt.Sprintf("%s/%s: %v", name, mode, err))
							mu.Unlock()
							t.Fatal(err)
						}
						if exact {
							exgCheckExact(t, sec, r.Stage, r.Inverting)
							require.InDelta(t, 0, r.GainErrPct, 1e-9)
							require.InDelta(t, 0, r.F0ErrPct, 1e-9)
							require.InDelta(t, 0, r.QErrPct, 1e-9)
						} else {
							exgCheckSeries(t, sec, r)
						}
					})
				}
			}
		}
	}
	for name := range unbuildable {
		require.True(t, seen[name], "%s is a case of the table", name)
	}
	t.Cleanup(func() {
		sort.Strings(failed)
		if len(failed) > 0 {
			t.Logf("failed:\n%s", strings.Join(failed, "\n"))
		}
	})
}

// TestExactGainEqualComponent: the equal-component Sallen-Key lowpass
// (C1 = C2, K = 3 − 1/Q), forced, with its divider for every gain it can
// reach (g ≤ K), is exact with exact resistors.
func TestExactGainEqualComponent(t *testing.T) {
	t.Parallel()
	opt := DefaultOptions()
	opt.Exact = true
	o, err := newOptions(opt)
	require.NoError(t, err)
	for _, q := range []float64{0.5412, 0.785, 1.3066, 3} {
		for _, g := range exgGains {
			k := 3 - 1/q
			if g > k || 2*q-1 > MaxGainSensitivity {
				continue // gain at most K; Q sensitivity 2Q − 1 ≤ 3
			}
			sec := exgSection(section.Lowpass, 1000, q, g)
			tg, err := newTarget(sec)
			require.NoError(t, err)
			amp, e := newAmplifier(SallenKey, o, k)
			require.Nil(t, e)
			alpha := g / amp.k
			if alpha > 1-1e-3 {
				alpha = 1
			}
			d, _, ok := skLowpassSearch(tg, o, amp, alpha, true)
			require.True(t, ok, "q %g g %g", q, g)
			exgCheckExact(t, sec, d.stage, false)
		}
	}
}

// TestExactGainLeadCase: the Chebyshev highpass section of the lead's
// report (f0 1892 Hz, Q 0.785, gain 0.8913) as Sallen-Key, exact and
// series, and as the auto choice.
func TestExactGainLeadCase(t *testing.T) {
	t.Parallel()
	sec := exgSection(section.Highpass, 1892, 0.785, 0.8913)
	for _, top := range []string{SallenKey, Auto, MultipleFeedback} {
		for _, exact := range []bool{true, false} {
			opt := DefaultOptions()
			opt.Exact = exact
			r, err := Realize(sec, top, opt)
			require.NoError(t, err, "%s exact %v", top, exact)
			if exact {
				exgCheckExact(t, sec, r.Stage, r.Inverting)
			} else {
				exgCheckSeries(t, sec, r)
			}
		}
	}
}

// TestSensitivityFloor: the least Q sensitivity to the gain resistors of
// a general-K Sallen-Key stage over its capacitor ratio, from the closed
// forms of the search (S = Q·ω0·R1·C1·(K − 1) lowpass, Q·(K − 1)/(ω0·R1·C1)
// highpass, with R1 the design value), approaches
// (√(1 + 4Q²·(K − 1)) − 1)/2 from above as C2/C1 → 0, as the comment on
// sallenKey states.
func TestSensitivityFloor(t *testing.T) {
	t.Parallel()
	w0, c1 := 2*math.Pi*1000, 10e-9
	for _, q := range []float64{0.5412, 1.3066, 3} {
		for _, k := range []float64{1.5, 3, 10} {
			floor := (math.Sqrt(1+4*q*q*(k-1)) - 1) / 2
			lpMin, hpMin := math.Inf(1), math.Inf(1)
			for _, rho := range []float64{1, 0.3, 0.1, 1e-2, 1e-4, 1e-6} {
				c2 := rho * c1
				roots, n := skLowpassR1(w0, q, k, c1, c2)
				for _, r1 := range roots[:n] {
					s := q * w0 * r1 * c1 * (k - 1)
					require.GreaterOrEqual(t, s, floor*(1-1e-9))
					lpMin = min(lpMin, s)
				}
				roots, n = skHighpassR2(w0, q, k, c1, c2)
				for _, r2 := range roots[:n] {
					r1 := 1 / (w0 * w0 * c1 * c2 * r2)
					s := q * (k - 1) / (w0 * r1 * c1)
					require.GreaterOrEqual(t, s, floor*(1-1e-9))
					hpMin = min(hpMin, s)
				}
			}
			require.InDelta(t, floor, lpMin, 1e-4*floor, "lowpass Q %g K %g", q, k)
			require.InDelta(t, floor, hpMin, 1e-4*floor, "highpass Q %g K %g", q, k)
		}
	}
}

// TestExactGainFormsInNgspice: the forms added for exact gains (the
// Sallen-Key highpass divider with a make-up K, the divider with a larger
// K for gains just above one, the multiple-feedback highpass trimmed by
// positive feedback), exported as a SPICE deck and simulated by ngspice
// with ideal op-amps, agree with the nodal analysis within 0.01 dB and
// 0.1°, and with the section itself to the same bound in exact mode.
func TestExactGainFormsInNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	tests := []struct {
		top  string
		kind section.Kind
		f0   float64
		q, g float64
	}{
		{SallenKey, section.Highpass, 1892, 0.785, 0.8913},
		{SallenKey, section.Highpass, 1000, 1.3066, 1.002},
		{SallenKey, section.Lowpass, 1000, 0.7071, 1.002},
		{RCBuffer, section.Lowpass, 1000, 0, 1.002},
		{RCBuffer, section.Highpass, 1000, 0, 1.002},
		{MultipleFeedback, section.Highpass, 1892, 0.785, 0.8913},
		{MultipleFeedback, section.Highpass, 1000, 3, 10},
		{MultipleFeedback, section.Highpass, 1000, 1.3066, 0.3},
	}
	for _, tc := range tests {
		for _, exact := range []bool{true, false} {
			name := fmt.Sprintf("%s/%s-q%g-g%g/exact=%v", tc.top, tc.kind, tc.q, tc.g, exact)
			t.Run(name, func(t *testing.T) {
				t.Parallel()
				sec := exgSection(tc.kind, tc.f0, tc.q, tc.g)
				opt := DefaultOptions()
				opt.Exact = exact
				r, err := Realize(sec, tc.top, opt)
				require.NoError(t, err)
				model := circuit.Model{Ideal: true}
				chain := circuit.Chain{Stages: []circuit.Stage{r.Stage}, Model: model}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{StartHz: tc.f0 / 100, StopHz: tc.f0 * 100, PointsPerDecade: 10}))
				freq, v, err := spicerun.Run(context.Background(), deck.Bytes())
				require.NoError(t, err)
				require.NotEmpty(t, freq)
				sign := complex(1, 0)
				if r.Inverting {
					sign = -1
				}
				for i, f := range freq {
					s := complex(0, 2*math.Pi*f)
					want, err := r.Stage.SolveAt(model, s)
					require.NoError(t, err)
					refs := []complex128{want}
					if exact {
						refs = append(refs, sign*sec.ZPK().At(s))
					}
					for _, ref := range refs {
						dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(ref))
						dDeg := cmplx.Phase(v[i]/ref) * 180 / math.Pi
						require.LessOrEqual(t, math.Abs(dDB), 0.01, "%g Hz: ngspice %v, reference %v", f, v[i], ref)
						require.LessOrEqual(t, math.Abs(dDeg), 0.1, "%g Hz: ngspice %v, reference %v", f, v[i], ref)
					}
				}
			})
		}
	}
}

// BenchmarkRealizeHighpassGain times the highpass forms whose gain is
// trimmed (Sallen-Key divider with its K, multiple-feedback positive
// feedback): the sections of a 1 dB Chebyshev highpass whose first
// section carries the −1 dB, per filter.
func BenchmarkRealizeHighpassGain(b *testing.B) {
	secs := []section.Section{
		exgSection(section.Highpass, 1892, 0.785, 0.8913),
		exgSection(section.Highpass, 1007, 3.559, 1),
		exgSection(section.Highpass, 1000, 1.3066, 0.3),
	}
	for _, top := range []string{SallenKey, MultipleFeedback} {
		for _, exact := range []bool{false, true} {
			opt := DefaultOptions()
			opt.Exact = exact
			b.Run(fmt.Sprintf("%s/exact=%v", top, exact), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					for _, s := range secs {
						if _, err := Realize(s, top, opt); err != nil {
							b.Fatal(err)
						}
					}
				}
			})
		}
	}
}

// TestMultipleFeedbackHighpassTrim: the multiple-feedback highpass is the
// plain form (+ input grounded, gain C1/C2) when two series capacitors
// make the gain, and otherwise the nearest C1/C2 below it trimmed up by the
// positive-feedback divider; the closed forms of mfbHighpassPoles agree
// with nodal analysis, and mfbHighpassSens with a numerical derivative of
// Q by the divider resistor.
func TestMultipleFeedbackHighpassTrim(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		g     float64
		plain bool
	}{{1, true}, {1.5, true}, {10, true}, {0.8913, false}, {0.3, false}, {3, false}} {
		sec := exgSection(section.Highpass, 1000, 0.7071, tc.g)
		opt := DefaultOptions()
		opt.Exact = true
		r, err := Realize(sec, MultipleFeedback, opt)
		require.NoError(t, err, "g %g", tc.g)
		exgCheckExact(t, sec, r.Stage, r.Inverting)
		require.True(t, r.Inverting)
		require.Len(t, r.Stage.OpAmps, 1)
		plus := r.Stage.OpAmps[0].Plus
		if tc.plain {
			require.Equal(t, circuit.Ground, plus, "g %g: %s", tc.g, r.Reason)
			require.Len(t, r.Stage.Parts, 5)
			continue
		}
		require.NotEqual(t, circuit.Ground, plus, "g %g", tc.g)
		require.Len(t, r.Stage.Parts, 7)
		require.Contains(t, r.Reason, "positive feedback")
		val := func(a, b string) float64 {
			for _, p := range r.Stage.Parts {
				if (p.A == a && p.B == b) || (p.A == b && p.B == a) {
					return p.Value
				}
			}
			t.Fatalf("no part %s–%s", a, b)
			return 0
		}
		c1, c2, c3 := val(circuit.In, "a"), val("a", "out"), val("a", "m")
		r1, r2 := val("a", circuit.Ground), val("m", "out")
		ra, rb := val("out", plus), val(plus, circuit.Ground)
		require.Less(t, c1/c2, tc.g)
		lam := rb / (ra + rb)
		w0, q, g := mfbHighpassPoles(r1, r2, c1, c2, c3, lam)
		require.InDelta(t, sec.OmegaRadPerSec(), w0, 1e-9*w0)
		require.InDelta(t, 0.7071, q, 1e-9)
		require.InDelta(t, tc.g, g, 1e-9*tc.g)
		// Q against Rb by a central difference.
		h := 1e-6
		_, qp, _ := mfbHighpassPoles(r1, r2, c1, c2, c3, rb*(1+h)/(ra+rb*(1+h)))
		_, qm, _ := mfbHighpassPoles(r1, r2, c1, c2, c3, rb*(1-h)/(ra+rb*(1-h)))
		num := math.Abs((math.Log(qp) - math.Log(qm)) / (2 * h))
		require.InDelta(t, num, mfbHighpassSens(r1, r2, c1, c2, c3, lam), 1e-6*(1+num))
	}
}
