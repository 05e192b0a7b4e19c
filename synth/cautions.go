package synth

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/polewright/polewright/standards/si"
)

// The ids of the safety cautions. A caution is a [Check] that appears only
// when it applies, never OK, of severity warning: it does not judge the
// filter but defers its use to local codes and licensed practice.
const (
	// CheckSafetyVoltage: the signal somewhere in the chain swings more
	// than common low-voltage rails allow.
	CheckSafetyVoltage = "safety-voltage"
	// CheckSafetyMains: a bandstop takes out a mains frequency or one of
	// its harmonics.
	CheckSafetyMains = "safety-mains"
)

// Caution thresholds.
const (
	// LowVoltageRailsVpp is the largest swing of common low-voltage op-amp
	// circuits: rail to rail of ±15 V supplies, 30 Vpp (common practice:
	// ±15 V is the highest of the usual analog supplies, ±5 V and ±12 V
	// the others). A signal beyond it comes from a source that is no
	// longer a low-voltage signal.
	LowVoltageRailsVpp = 30
	// MainsHarmonics is the highest harmonic of 50 Hz and 60 Hz a mains
	// caution considers: the 40th, as far as IEC 61000-3-2 sets limits
	// on the harmonic currents of equipment (typed from memory).
	MainsHarmonics = 40
)

// MainsFrequenciesHz are the public supply frequencies.
var MainsFrequenciesHz = []float64{50, 60}

// safetyAdvice ends every caution's sentence.
const safetyAdvice = " Follow your local electrical codes and the applicable safety standards (isolation, creepage and clearance, leakage current), and have the design reviewed by a licensed or qualified professional."

// cautionChecks returns the safety cautions that apply to d, in the
// order voltage, mains; none for a design at low voltage that removes no
// mains frequency.
func (d *Design) cautionChecks() []Check {
	var out []Check
	if c, ok := d.voltageCaution(); ok {
		out = append(out, c)
	}
	if c, ok := d.mainsCaution(); ok {
		out = append(out, c)
	}
	return out
}

// SignalSwingVpp returns the largest peak-to-peak swing of a full-scale
// signal anywhere in d's chain, where it is and what it comes from: the
// converter's full scale at the output, FullScaleVpp / 10^(gain_db/20)
// at the input, and FullScaleVpp · 10^(peak/20) at a stage whose output
// peaks above the chain's passband gain (Section.PeakGainDB). stage is
// the 1-based stage of the largest, 0 for the input or the output. ok is
// false without a converter: then the spec gives no signal level.
func (d *Design) SignalSwingVpp() (vpp float64, where string, stage int, ok bool) {
	c := d.Spec.Converter
	if c == nil || !(c.FullScaleVpp > 0) {
		return 0, "", 0, false
	}
	vpp, where = c.FullScaleVpp, "at the output (the converter's full scale)"
	if in := c.FullScaleVpp / math.Pow(10, d.Spec.GainDB/20); in > vpp {
		vpp, where = in, fmt.Sprintf("at the input (full scale %s Vpp at a gain of %s dB)", trimNum(c.FullScaleVpp), trimNum(d.Spec.GainDB))
	}
	for i, s := range d.Sections {
		if v := c.FullScaleVpp * math.Pow(10, s.PeakGainDB/20); v > vpp {
			vpp, where, stage = v, fmt.Sprintf("at stage %d's output (it peaks %s dB above the passband gain)", i+1, trimNum(s.PeakGainDB)), i+1
		}
	}
	return vpp, where, stage, true
}

// voltageCaution applies when the signal swings more than
// LowVoltageRailsVpp somewhere in the chain.
func (d *Design) voltageCaution() (Check, bool) {
	vpp, where, stage, ok := d.SignalSwingVpp()
	if !ok || vpp <= LowVoltageRailsVpp {
		return Check{}, false
	}
	text := fmt.Sprintf("The signal swings %s Vpp %s, beyond the %d Vpp of the ±15 V rails common for op-amp circuits: a level like this comes from a source that can be hazardous, and the op-amps need a high-voltage part or an attenuator ahead of them.",
		trimNum(vpp), where, LowVoltageRailsVpp)
	return newCheck(CheckSafetyVoltage, false, SeverityWarning, vpp, LowVoltageRailsVpp, "Vpp", stage, text+safetyAdvice), true
}

// MainsInStopband returns the mains frequencies (50 Hz, 60 Hz and their
// harmonics up to the MainsHarmonics-th) that a bandstop design's stopped
// band holds, lowest first: the spec's stopband when it gives one, else
// the band between its passband edges. A response other than bandstop
// holds none.
func (d *Design) MainsInStopband() []float64 {
	s := d.Spec
	if s.Response != Bandstop || len(s.PassbandHz) != 2 {
		return nil
	}
	lo, hi := s.PassbandHz[0], s.PassbandHz[1]
	if len(s.StopbandHz) == 2 {
		lo, hi = s.StopbandHz[0], s.StopbandHz[1]
	}
	var out []float64
	for k := 1; k <= MainsHarmonics; k++ {
		for _, f := range MainsFrequenciesHz {
			h := float64(k) * f
			if h >= lo && h <= hi && !slices.Contains(out, h) {
				out = append(out, h)
			}
		}
	}
	slices.Sort(out)
	return out
}

// mainsCaution applies when a bandstop takes out a mains frequency.
func (d *Design) mainsCaution() (Check, bool) {
	hz := d.MainsInStopband()
	if len(hz) == 0 {
		return Check{}, false
	}
	names := make([]string, len(hz))
	for i, f := range hz {
		names[i] = si.Format(f, "Hz", 4)
	}
	list := strings.Join(names, ", ")
	if len(names) > 4 {
		list = strings.Join(names[:4], ", ") + fmt.Sprintf(" and %d more", len(names)-4)
	}
	text := fmt.Sprintf("The stopped band takes out %s: a mains frequency (50 Hz, 60 Hz) or a harmonic of one. A filter against mains hum usually sits in equipment wired to the mains or to a person.", list)
	return newCheck(CheckSafetyMains, false, SeverityWarning, hz[0], 0, "Hz", 0, text+safetyAdvice), true
}

// trimNum formats v with up to 4 significant digits.
func trimNum(v float64) string { return fmt.Sprintf("%.4g", v) }
