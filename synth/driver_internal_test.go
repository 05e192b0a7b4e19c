package synth

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// TestDriverSettlingClosedForm: with an ideal op-amp the full circuit's
// acquisition is the single-RC closed form. Charge sharing steps the node
// by Vfs·Cs/(Cs + C) (charge conservation), which then decays with
// τ = R·(C + Cs): e(t) = −Vfs·Cs/(Cs + C)·exp(−t/τ), so that it reaches
// ½ LSB at t = τ·ln(step/½ LSB).
func TestDriverSettlingClosedForm(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name         string
		r, c, cs, fs float64
	}{
		{"49.9 Ohm, 2.2 nF, 30 pF, 4.096 V", 49.9, 2.2e-9, 30e-12, 4.096},
		{"1 kOhm, 680 pF, 10 pF, 5 V", 1e3, 680e-12, 10e-12, 5},
		{"10 Ohm, 100 nF, 5 nF, 2 V", 10, 100e-9, 5e-9, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := circuit.Stage{Topology: "buffer", OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: circuit.In, Minus: "out", Out: "out"}}, Out: "out"}
			st = st.WithDriver(circuit.Part{Value: tc.r, Exact: tc.r}, circuit.Part{Value: tc.c, Exact: tc.c})
			tau := tc.r * (tc.c + tc.cs)
			step := tc.fs * tc.cs / (tc.cs + tc.c)
			tS := []float64{0, 0.5 * tau, 3 * tau, 12 * tau}
			e, err := driverSettledErrorV(st, circuit.Model{Ideal: true}, tc.cs, tc.fs, tS)
			require.NoError(t, err)
			for i, ts := range tS {
				want := -step * math.Exp(-ts/tau)
				require.InDelta(t, want, e[i], 1e-9*step, "t = %g s", ts)
			}
			// The closed-form time to ½ LSB of 16 bits leaves ½ LSB.
			half := 0.5 * tc.fs / 65536
			tHalf := tau * math.Log(step/half)
			e, err = driverSettledErrorV(st, circuit.Model{Ideal: true}, tc.cs, tc.fs, []float64{0, tHalf})
			require.NoError(t, err)
			require.InEpsilon(t, half, -e[1], 1e-6)
		})
	}
}

// TestDriverDesign: a SAR spec gets a driver whose C is the first E12
// value ≥ 20·Cs and whose R is the largest E96 value whose full-circuit
// error is within ¼ LSB (the next larger one is not, judged on the same
// circuit); with an ideal op-amp the error is the closed form's
// (kick/LSB)·exp(−t/(R·(C + Cs))).
func TestDriverDesign(t *testing.T) {
	t.Parallel()
	base := func(opamp string) string {
		return `{"approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.1,
		  "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4.096, "alias_atten_db": 80,
		                "architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9},
		  "opamp": ` + opamp + `}`
	}
	for _, tc := range []struct {
		name, spec string
		ideal      bool
	}{
		{"ideal op-amp", base(`{"ideal": true}`), true},
		{"50 MHz, 40 Ohm", base(`{"gbw_hz": 50e6, "output_resistance_ohm": 40}`), false},
		{"20 MHz, 100 Ohm", base(`{"gbw_hz": 20e6, "output_resistance_ohm": 100}`), false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := Synthesize(context.Background(), s)
			require.NoError(t, err)
			dr := d.Driver
			require.NotNil(t, dr)
			require.Equal(t, 680e-12, dr.CFarad, "first E12 value at least 20 × 30 pF")
			require.InEpsilon(t, 4.096*30e-12/(30e-12+680e-12), dr.KickbackV, 1e-12)
			lsb := 4.096 / 65536
			if tc.ideal {
				tau := dr.ROhm * (dr.CFarad + 30e-12)
				require.InEpsilon(t, dr.KickbackV/lsb*math.Exp(-290e-9/tau), dr.SettledErrorLSB, 1e-6)
				require.Nil(t, dr.PhaseMarginDeg)
			} else {
				require.NotNil(t, dr.PhaseMarginDeg)
			}
			require.LessOrEqual(t, dr.SettledErrorLSB, DriverDesignLSB)
			// One E96 step up settles worse than ¼ LSB.
			ch, err := d.Chain()
			require.NoError(t, err)
			last := ch.Stages[len(ch.Stages)-1]
			up := dr.ROhm * math.Pow(10, 1.0/96)
			bigger := last.WithoutDriver().WithDriver(circuit.Part{Value: up, Exact: up}, circuit.Part{Value: dr.CFarad, Exact: dr.CFarad})
			w, _, err := driverErrorLSB(bigger, ch.Model, 30e-12, 4.096, 290e-9, lsb)
			require.NoError(t, err)
			require.Greater(t, w, DriverDesignLSB, "R %g Ohm is the largest that meets ¼ LSB", dr.ROhm)
			w, end, err := driverErrorLSB(last, ch.Model, 30e-12, 4.096, 290e-9, lsb)
			require.NoError(t, err)
			require.LessOrEqual(t, w, DriverDesignLSB)
			require.InDelta(t, dr.SettledErrorLSB, end, 1e-12)
			// Its parts are on the chain's last stage under their designators.
			require.Len(t, dr.Components, 2)
			require.Equal(t, ch.Ref(len(ch.Stages), last.Parts[len(last.Parts)-2].Ref), dr.Components[0].Ref)
			ids := map[string]bool{}
			for _, c := range d.Checks {
				ids[c.ID] = true
			}
			require.True(t, ids[CheckDriverSettling])
			require.Equal(t, !tc.ideal, ids[CheckDriverStability])
		})
	}
}

// TestDriverChecksAtThresholds: driver-settling at ½ LSB and
// driver-stability at 45°, just inside and just outside.
func TestDriverChecksAtThresholds(t *testing.T) {
	t.Parallel()
	f := func(v float64) *float64 { return &v }
	mk := func(errLSB, pm float64) *Design {
		return &Design{Sections: []Section{{}, {}}, Driver: &Driver{ROhm: 49.9, CFarad: 2.2e-9, KickbackV: 0.05, AcquisitionTimeS: 1e-6,
			SettledErrorLSB: errLSB, PhaseMarginDeg: f(pm), CrossoverHz: f(5e6)}}
	}
	for _, tc := range []struct {
		name  string
		check func(d *Design) (Check, bool)
		d     *Design
		ok    bool
		sev   Severity
	}{
		{"settling inside", (*Design).driverSettlingCheck, mk(0.4999, 60), true, SeverityInfo},
		{"settling outside", (*Design).driverSettlingCheck, mk(0.5001, 60), false, SeverityError},
		{"stability inside", (*Design).driverStabilityCheck, mk(0.1, 45.01), true, SeverityInfo},
		{"stability outside", (*Design).driverStabilityCheck, mk(0.1, 44.99), false, SeverityWarning},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c, present := tc.check(tc.d)
			require.True(t, present)
			require.Equal(t, tc.ok, c.OK)
			require.Equal(t, tc.sev, c.Severity)
			require.NotNil(t, c.Stage)
			require.Equal(t, 2, *c.Stage)
			require.NotEmpty(t, c.Text)
		})
	}
	_, present := (&Design{}).driverSettlingCheck()
	require.False(t, present)
	d := mk(0.1, 60)
	d.Driver.PhaseMarginDeg = nil
	_, present = d.driverStabilityCheck()
	require.False(t, present, "no stability check for an ideal op-amp")
}
