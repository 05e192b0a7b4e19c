package web

import (
	"fmt"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/components"
)

// driverView lays out the SAR driver (synth's Design.Driver) as the "Into
// the converter" panel; nil without one. Its verdicts are synth's
// driver-settling and driver-stability checks, shown with the others.
func driverView(d *synth.Design) *components.DriverView {
	dr := d.Driver
	if dr == nil || len(dr.Components) != 2 {
		return nil
	}
	pm, pmDetail := "not judged", "an ideal op-amp's loop gain is infinite"
	if dr.PhaseMarginDeg != nil && dr.CrossoverHz != nil {
		pm = fmt.Sprintf("%.0f°", *dr.PhaseMarginDeg)
		pmDetail = "the last op-amp's loop with R–C and its output resistance, crossing at " + si(*dr.CrossoverHz, "Hz", 3)
	}
	return &components.DriverView{
		Figures: []components.Figure{
			{Label: "R", Value: fmt.Sprintf("%s %s", dr.Components[0].Ref, si(dr.ROhm, "Ω", 3)), Detail: dr.Components[0].Series, TestID: "driver-r"},
			{Label: "C", Value: fmt.Sprintf("%s %s", dr.Components[1].Ref, si(dr.CFarad, "F", 3)), Detail: dr.Dielectric + ", " + dr.Components[1].Series, TestID: "driver-c"},
			{Label: "Kick of a full-scale step", Value: si(dr.KickbackV, "V", 3), Detail: "Vfs·Cs/(Cs + C)", TestID: "driver-kick"},
			{Label: "Left at the end of the acquisition", Value: fmt.Sprintf("%.3g LSB", dr.SettledErrorLSB),
				Detail: fmt.Sprintf("after %s; single RC to ½ LSB: %s", si(dr.AcquisitionTimeS, "s", 3), si(dr.ClosedFormSettleS, "s", 3)), TestID: "driver-settled"},
			{Label: "Phase margin", Value: pm, Detail: pmDetail, TestID: "driver-pm"},
			{Label: "R–C pole", Value: si(dr.PoleHz, "Hz", 3), Detail: "in the response as built", TestID: "driver-pole"},
		},
		Reason: dr.Reason,
	}
}
