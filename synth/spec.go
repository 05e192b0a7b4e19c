package synth

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/topology"
)

// Response names the kind of frequency response.
type Response string

// The responses.
const (
	Lowpass  Response = "lowpass"
	Highpass Response = "highpass"
	Bandpass Response = "bandpass"
	Bandstop Response = "bandstop"
)

// IsBand reports whether r has two band edges on each side (bandpass or
// bandstop).
func (r Response) IsBand() bool { return r == Bandpass || r == Bandstop }

// Limits on a spec. Every cost a spec controls is bounded by these.
const (
	MinFrequencyHz = 1e-3  // lowest band edge accepted
	MaxFrequencyHz = 100e6 // highest band edge accepted
	MaxOrder       = 20    // highest prototype order accepted or designed
	MaxAttenDB     = 200   // largest stopband attenuation accepted
	MinGainDB      = -40   // lowest passband gain accepted
	MaxGainDB      = 60    // highest passband gain accepted
	MaxSpecBytes   = 1 << 20
	// Default and extreme part windows.
	DefaultMinOhm   = 1e3
	DefaultMaxOhm   = 220e3
	DefaultMinFarad = 100e-12
	DefaultMaxFarad = 1e-6
	MinOhmLimit     = 1     // lowest resistor window edge accepted
	MaxOhmLimit     = 100e6 // highest resistor window edge accepted
	MinFaradLimit   = 1e-12
	MaxFaradLimit   = 0.1
	// BesselDefaultRippleDB is Amax for Bessel, optimum-L (legendre),
	// Gaussian and linear-phase when the spec gives none: the half-power
	// loss 10·log10(2), so that passband_hz is the −3 dB point.
	BesselDefaultRippleDB = 3.0102999566398121
	// DefaultPhaseErrorDeg is phase_error_deg when the spec gives none:
	// the phase ripple of a linear-phase design, in degrees.
	DefaultPhaseErrorDeg = proto.DefaultPhaseErrorDeg
	// MinPhaseErrorDeg and MaxPhaseErrorDeg bound phase_error_deg, in
	// degrees: the range over which the linear-phase prototype is computed
	// and checked at every order.
	MinPhaseErrorDeg = proto.MinPhaseErrorDeg
	MaxPhaseErrorDeg = proto.MaxPhaseErrorDeg
)

// OpAmp is the amplifier model of a spec: single pole, or ideal, with its
// noise densities and slew rate.
type OpAmp struct {
	// GBWHz is the gain-bandwidth product in Hz.
	GBWHz float64 `json:"gbw_hz"`
	// DCGainDB is the open-loop gain at DC in dB.
	DCGainDB float64 `json:"dc_gain_db"`
	// Ideal selects an ideal amplifier: infinite gain and bandwidth.
	Ideal bool `json:"ideal"`
	// NoiseVPerRtHz and NoiseAPerRtHz are the white input voltage and
	// current noise densities.
	NoiseVPerRtHz float64 `json:"noise_v_per_rthz"`
	NoiseAPerRtHz float64 `json:"noise_a_per_rthz"`
	// SlewVPerS is the slew rate.
	SlewVPerS float64 `json:"slew_v_per_s"`
	// OutputHeadroomV is how close to each rail the output can swing (0:
	// rail to rail).
	OutputHeadroomV float64 `json:"output_headroom_v,omitempty"`
	// InputHeadroomV is how close to each rail the inputs can go (negative:
	// beyond the rail).
	InputHeadroomV float64 `json:"input_headroom_v,omitempty"`
	// OffsetV is the input offset voltage, adding to the non-inverting
	// input.
	OffsetV float64 `json:"offset_v,omitempty"`
	// BiasA is the input bias current, flowing into each input.
	BiasA float64 `json:"bias_a,omitempty"`
	// InputCapacitanceFarad is the capacitance from each input to ground.
	InputCapacitanceFarad float64 `json:"input_capacitance_farad,omitempty"`
	// OutputResistanceOhm is the open-loop output resistance.
	OutputResistanceOhm float64 `json:"output_resistance_ohm,omitempty"`
	// NoiseCornerHz is the 1/f corner of the voltage and current noise (0:
	// white).
	NoiseCornerHz float64 `json:"noise_corner_hz,omitempty"`
}

// Supply is the board's supply: the rails and the reference, the signal's
// zero.
type Supply struct {
	PositiveV  float64 `json:"positive_v"`
	NegativeV  float64 `json:"negative_v"`
	ReferenceV float64 `json:"reference_v"`
}

// MarshalJSON writes o as the spec JSON spells it. An ideal op-amp is
// written without gbw_hz and dc_gain_db (they are 0 and mean nothing), so
// that the echoed design.spec is accepted when fed back: ParseSpec refuses
// an ideal op-amp that also gives either (issue 9 chose omitting them in
// the echo over accepting zeros with ideal: true on input).
func (o OpAmp) MarshalJSON() ([]byte, error) {
	type plain OpAmp // the same fields without this method
	if !o.Ideal {
		return json.Marshal(plain(o))
	}
	return json.Marshal(struct {
		Ideal                 bool    `json:"ideal"`
		NoiseVPerRtHz         float64 `json:"noise_v_per_rthz"`
		NoiseAPerRtHz         float64 `json:"noise_a_per_rthz"`
		SlewVPerS             float64 `json:"slew_v_per_s"`
		OutputHeadroomV       float64 `json:"output_headroom_v,omitempty"`
		InputHeadroomV        float64 `json:"input_headroom_v,omitempty"`
		OffsetV               float64 `json:"offset_v,omitempty"`
		BiasA                 float64 `json:"bias_a,omitempty"`
		InputCapacitanceFarad float64 `json:"input_capacitance_farad,omitempty"`
		OutputResistanceOhm   float64 `json:"output_resistance_ohm,omitempty"`
		NoiseCornerHz         float64 `json:"noise_corner_hz,omitempty"`
	}{o.Ideal, o.NoiseVPerRtHz, o.NoiseAPerRtHz, o.SlewVPerS, o.OutputHeadroomV, o.InputHeadroomV,
		o.OffsetV, o.BiasA, o.InputCapacitanceFarad, o.OutputResistanceOhm, o.NoiseCornerHz})
}

// Tolerance is the spread of part values the Monte Carlo draws from.
type Tolerance struct {
	// ResistorPct and CapacitorPct are the tolerances in percent; an
	// explicit 0 means exact parts. ParseSpec fills in the resistor
	// series' usual tolerance and 5 % for capacitors when the spec leaves
	// them out.
	ResistorPct  float64 `json:"resistor_pct"`
	CapacitorPct float64 `json:"capacitor_pct"`
	// Distribution is "uniform" or "gaussian" (the tolerance taken as 3σ).
	Distribution string `json:"distribution"`
	// GBWPct spreads each op-amp's gain-bandwidth product within ± this
	// percentage (our own field; 0, the default, keeps it).
	GBWPct float64 `json:"gbw_pct"`
}

// MonteCarlo asks for a tolerance Monte Carlo: Trials draws (0: none),
// repeatable with Seed.
type MonteCarlo struct {
	Trials int    `json:"trials"`
	Seed   uint64 `json:"seed"`
}

// Converter is the data converter the filter feeds: it sets the alias
// band, the noise band, the LSB and the settling tolerance.
type Converter struct {
	Bits int `json:"bits"`
	// SampleRateHz is the rate at which the converter samples its analog
	// input (the modulator rate of an oversampling converter).
	SampleRateHz float64 `json:"sample_rate_hz"`
	FullScaleVpp float64 `json:"full_scale_vpp"`
	// OutputRateHz is the rate of the converter's output words: below
	// SampleRateHz for an oversampling converter. ParseSpec fills in
	// SampleRateHz when the spec leaves it out.
	OutputRateHz float64 `json:"output_rate_hz"`
	// AliasAttenDB is the least attenuation of everything that sampling
	// folds onto the passband. ParseSpec fills in 6.02·bits + 1.76 dB
	// (common practice: the ideal converter's full-scale SNR) when the
	// spec leaves it out.
	AliasAttenDB float64 `json:"alias_atten_db"`
	// Architecture is "sar", "sigma-delta" or "other"; "" (left out)
	// means other. A "sar" converter gets a driver RC
	// between the last stage and its input ([Driver]).
	Architecture string `json:"architecture,omitempty"`
	// Input is "single-ended" ("", left out, means the same) or
	// "differential": then topology auto builds every section fully
	// differential (the first stage converts the single-ended source),
	// and the single-ended topologies are refused.
	Input string `json:"input,omitempty"`
	// SamplingCapacitanceFarad is the converter's sampling capacitor (a
	// SAR's charge-redistribution array as its input sees it), needed
	// for a sar converter's driver.
	SamplingCapacitanceFarad float64 `json:"sampling_capacitance_farad,omitempty"`
	// AcquisitionTimeS is how long the sampling capacitor stays connected
	// to the input in each conversion, needed for a sar converter's
	// driver.
	AcquisitionTimeS float64 `json:"acquisition_time_s,omitempty"`
	// InputCommonModeV is the common mode the converter's input wants
	// (for a differential input), or nil.
	InputCommonModeV *float64 `json:"input_common_mode_v,omitempty"`
}

// IsSAR reports whether the converter is a SAR, whose input needs a
// driver RC.
func (c *Converter) IsSAR() bool { return c != nil && c.Architecture == ArchitectureSAR }

// The converter architectures and inputs.
const (
	ArchitectureSAR   = "sar"
	ArchitectureOther = "other"
	InputSingleEnded  = "single-ended"
	InputDifferential = "differential"
)

// DefaultAliasAttenDB returns 6.02·bits + 1.76 dB, the full-scale sine's
// SNR of an ideal converter of that resolution (common practice), the
// default of converter.alias_atten_db.
func DefaultAliasAttenDB(bits int) float64 { return 6.02*float64(bits) + 1.76 }

// DesignMargin asks for a design that beats the mask: it is designed to
// Amax − PassbandDB and Amin + StopbandDB and judged against the mask as
// given.
type DesignMargin struct {
	PassbandDB float64 `json:"passband_db"`
	StopbandDB float64 `json:"stopband_db"`
}

// DelayEqualizer asks for all-pass sections appended until the spread of
// the group delay over the passband, (max − min)/mean in linear frequency
// (a lowpass's from 0 Hz), is at most MaxSpreadPct percent.
type DelayEqualizer struct {
	MaxSpreadPct float64 `json:"max_spread_pct"`
}

// Bounds of delay_equalizer.max_spread_pct.
const (
	MinDelaySpreadPct = 0.01
	MaxDelaySpreadPct = 100
)

// Verification limits and defaults.
const (
	MaxTrials            = 100000
	DefaultNoiseVPerRtHz = 10e-9
	DefaultNoiseAPerRtHz = 1e-12
	DefaultSlewVPerS     = 10e6
	DefaultCapacitorPct  = 5
)

// Spec is a validated filter requirement. Frequencies are in Hz; a lowpass
// or highpass has one edge in each band slice, a bandpass or bandstop two
// (lo, hi). See the project's INTERFACE.md for the meaning of each field.
type Spec struct {
	Response         Response  `json:"response"`
	Approximation    string    `json:"approximation"`
	PassbandHz       []float64 `json:"passband_hz"`
	StopbandHz       []float64 `json:"stopband_hz,omitempty"`
	PassbandRippleDB float64   `json:"passband_ripple_db"`
	StopbandAttenDB  float64   `json:"stopband_atten_db"`
	// PhaseErrorDeg is the phase ripple of a linear-phase design in
	// degrees (ignored by the other approximations); 0 in a Spec built in
	// Go stands for [DefaultPhaseErrorDeg].
	PhaseErrorDeg   float64 `json:"phase_error_deg"`
	Order           int     `json:"order"`
	GainDB          float64 `json:"gain_db"`
	Topology        string  `json:"topology"`
	ResistorSeries  string  `json:"resistor_series"`
	CapacitorSeries string  `json:"capacitor_series"`
	OpAmp           OpAmp   `json:"opamp"`
	Values          string  `json:"values"`
	// ResistorRangeOhm and CapacitorRangeFarad are the windows part values
	// are chosen in, [lo, hi].
	ResistorRangeOhm    [2]float64 `json:"resistor_range_ohm"`
	CapacitorRangeFarad [2]float64 `json:"capacitor_range_farad"`
	// Tolerance, MonteCarlo and Converter are the verification options.
	Tolerance  Tolerance  `json:"tolerance"`
	MonteCarlo MonteCarlo `json:"montecarlo"`
	// Converter is nil when the spec names none: no LSB-based figures.
	Converter *Converter `json:"converter,omitempty"`
	// GainToleranceDB, when set, bounds the passband maximum of the board
	// as built to GainDB ± GainToleranceDB (rule 3 of the acceptance
	// rule); nil: the gain is not judged.
	GainToleranceDB *float64 `json:"gain_tolerance_db,omitempty"`
	// DesignMargin is the margin the design is made with (zero: none).
	DesignMargin DesignMargin `json:"design_margin"`
	// TargetYield, when set (0 < y ≤ 1), asks [Synthesize] for the
	// smallest design margin, from DesignMargin up, whose Monte Carlo
	// yield reaches it (see [MarginSearch]); nil: the margin is as given.
	TargetYield *float64 `json:"target_yield,omitempty"`
	// Supply is nil when the spec names none: no rail checks, signals
	// around 0 V.
	Supply *Supply `json:"supply,omitempty"`
	// SignalVpp is the largest input, peak to peak; nil: the default
	// ([Spec.SignalVppV]).
	SignalVpp *float64 `json:"signal_vpp,omitempty"`
	// DelayEqualizer, when set, asks for all-pass sections that flatten
	// the passband's group delay; nil: none.
	DelayEqualizer *DelayEqualizer `json:"delay_equalizer,omitempty"`

	// stopbandFromConverter records that ParseSpec derived the stopband
	// from the converter.
	stopbandFromConverter bool
}

// MarshalJSON writes s as the spec JSON spells it, such that ParseSpec
// reads it back to the same Spec (the echoed design.spec round-trips,
// issue 9): a stopband derived from the converter (fs − passband edge) is
// left out, as the spec left it out, so that it is derived again and the
// design still says where its stopband came from.
func (s Spec) MarshalJSON() ([]byte, error) {
	type plain Spec // the same fields without this method
	p := plain(s)
	if s.stopbandFromConverter {
		p.StopbandHz = nil
	}
	return json.Marshal(p)
}

// StopbandFromConverter reports whether the stopband edge (and, when the
// spec gave no stopband_atten_db, the attenuation) was derived from the
// converter: fs − passband edge, converter.alias_atten_db.
func (s Spec) StopbandFromConverter() bool { return s.stopbandFromConverter }

// DesignRippleDB and DesignAttenDB are the losses the filter is designed
// to: the mask's, tightened by the design margin.
func (s Spec) DesignRippleDB() float64 { return s.PassbandRippleDB - s.DesignMargin.PassbandDB }

// DesignAttenDB is the stopband attenuation the filter is designed to:
// Amin + design_margin.stopband_db.
func (s Spec) DesignAttenDB() float64 { return s.StopbandAttenDB + s.DesignMargin.StopbandDB }

// HasStopband reports whether the spec gives stopband edges.
func (s Spec) HasStopband() bool { return len(s.StopbandHz) > 0 }

// FieldError is a spec that cannot be built: Field names the offending
// field as it is spelt in the spec JSON (nested fields as "opamp.gbw_hz"),
// Reason says why.
type FieldError struct {
	Field  string
	Reason string
}

// Error returns "spec: FIELD: REASON".
func (e *FieldError) Error() string { return "spec: " + e.Field + ": " + e.Reason }

func fieldErr(field, format string, args ...any) error {
	return &FieldError{Field: field, Reason: fmt.Sprintf(format, args...)}
}

// IsFieldError reports whether err is, or wraps, a [*FieldError], and
// returns it.
func IsFieldError(err error) (*FieldError, bool) {
	var fe *FieldError
	ok := errors.As(err, &fe)
	return fe, ok
}

// Accepted names of the enumerated fields.
var (
	Responses      = []string{"lowpass", "highpass", "bandpass", "bandstop"}
	Approximations = []string{"butterworth", "chebyshev1", "chebyshev2", "bessel", "elliptic", "legendre", "gaussian", "linear-phase"}
	Topologies     = []string{"sallen-key", "multiple-feedback", "state-variable", "one-amp-notch", "fully-differential", "auto"}
	SeriesNames    = []string{"E3", "E6", "E12", "E24", "E48", "E96", "E192"}
	ValueModes     = []string{"series", "exact"}
	Distributions  = []string{"uniform", "gaussian"}
)

// Accepted names of the converter's architecture and input.
var (
	Architectures   = []string{"sar", "sigma-delta", "other"}
	ConverterInputs = []string{"single-ended", "differential"}
)

func validPhaseError(deg float64) error {
	if err := finite("phase_error_deg", deg); err != nil {
		return err
	}
	if !(deg >= MinPhaseErrorDeg && deg <= MaxPhaseErrorDeg) {
		return fieldErr("phase_error_deg", "must be from %g to %g degrees (got %g); it sets the phase ripple of a linear-phase design", float64(MinPhaseErrorDeg), float64(MaxPhaseErrorDeg), deg)
	}
	return nil
}

// phaseError returns the phase ripple the design uses, in degrees:
// PhaseErrorDeg, or the default when it is 0.
func (s Spec) phaseError() float64 {
	if s.PhaseErrorDeg == 0 {
		return DefaultPhaseErrorDeg
	}
	return s.PhaseErrorDeg
}

// halfPowerDefault reports whether approximation's default Amax is the
// half-power loss rather than 1 dB: the delay and Gaussian-type filters,
// whose passband edge is by custom their −3 dB point, and optimum-L.
func halfPowerDefault(approximation string) bool {
	switch approximation {
	case "bessel", "legendre", "gaussian", "linear-phase":
		return true
	}
	return false
}

// rawSpec mirrors the JSON with pointers, so that absent fields get their
// defaults and present ones are validated.
type rawSpec struct {
	Response         *string          `json:"response"`
	Approximation    *string          `json:"approximation"`
	PassbandHz       *json.RawMessage `json:"passband_hz"`
	StopbandHz       *json.RawMessage `json:"stopband_hz"`
	PassbandRippleDB *float64         `json:"passband_ripple_db"`
	StopbandAttenDB  *float64         `json:"stopband_atten_db"`
	PhaseErrorDeg    *float64         `json:"phase_error_deg"`
	Order            *json.Number     `json:"order"`
	GainDB           *float64         `json:"gain_db"`
	Topology         *string          `json:"topology"`
	ResistorSeries   *string          `json:"resistor_series"`
	CapacitorSeries  *string          `json:"capacitor_series"`
	OpAmp            *json.RawMessage `json:"opamp"`
	Values           *string          `json:"values"`
	ResistorRange    *[]float64       `json:"resistor_range_ohm"`
	CapacitorRange   *[]float64       `json:"capacitor_range_farad"`
	Tolerance        *json.RawMessage `json:"tolerance"`
	MonteCarlo       *json.RawMessage `json:"montecarlo"`
	Converter        *json.RawMessage `json:"converter"`
	Supply           *json.RawMessage `json:"supply"`
	SignalVpp        *float64         `json:"signal_vpp"`
	GainToleranceDB  *float64         `json:"gain_tolerance_db"`
	DesignMargin     *json.RawMessage `json:"design_margin"`
	DelayEqualizer   *json.RawMessage `json:"delay_equalizer"`
	TargetYield      *float64         `json:"target_yield"`
}

type rawDelayEqualizer struct {
	MaxSpreadPct *float64 `json:"max_spread_pct"`
}

type rawDesignMargin struct {
	PassbandDB *float64 `json:"passband_db"`
	StopbandDB *float64 `json:"stopband_db"`
}

type rawOpAmp struct {
	GBWHz         *float64 `json:"gbw_hz"`
	DCGainDB      *float64 `json:"dc_gain_db"`
	Ideal         *bool    `json:"ideal"`
	NoiseVPerRtHz *float64 `json:"noise_v_per_rthz"`
	NoiseAPerRtHz *float64 `json:"noise_a_per_rthz"`
	SlewVPerS     *float64 `json:"slew_v_per_s"`

	OutputHeadroomV       *float64 `json:"output_headroom_v"`
	InputHeadroomV        *float64 `json:"input_headroom_v"`
	OffsetV               *float64 `json:"offset_v"`
	BiasA                 *float64 `json:"bias_a"`
	InputCapacitanceFarad *float64 `json:"input_capacitance_farad"`
	OutputResistanceOhm   *float64 `json:"output_resistance_ohm"`
	NoiseCornerHz         *float64 `json:"noise_corner_hz"`
}

type rawSupply struct {
	PositiveV  *float64 `json:"positive_v"`
	NegativeV  *float64 `json:"negative_v"`
	ReferenceV *float64 `json:"reference_v"`
}

type rawTolerance struct {
	ResistorPct  *float64 `json:"resistor_pct"`
	CapacitorPct *float64 `json:"capacitor_pct"`
	Distribution *string  `json:"distribution"`
	GBWPct       *float64 `json:"gbw_pct"`
}

type rawMonteCarlo struct {
	Trials *json.Number `json:"trials"`
	Seed   *json.Number `json:"seed"`
}

type rawConverter struct {
	Bits                     *json.Number `json:"bits"`
	SampleRateHz             *float64     `json:"sample_rate_hz"`
	FullScaleVpp             *float64     `json:"full_scale_vpp"`
	OutputRateHz             *float64     `json:"output_rate_hz"`
	AliasAttenDB             *float64     `json:"alias_atten_db"`
	Architecture             *string      `json:"architecture"`
	Input                    *string      `json:"input"`
	SamplingCapacitanceFarad *float64     `json:"sampling_capacitance_farad"`
	AcquisitionTimeS         *float64     `json:"acquisition_time_s"`
	InputCommonModeV         *float64     `json:"input_common_mode_v"`
}

// decodeObject decodes the nested object msg of field into dst, strictly:
// unknown fields are errors named "field.name". It reports false for an
// absent or null object.
func decodeObject(field string, msg *json.RawMessage, dst any, example, known string) (bool, error) {
	if msg == nil || bytes.Equal(bytes.TrimSpace(*msg), []byte("null")) {
		return false, nil
	}
	dec := json.NewDecoder(bytes.NewReader(*msg))
	dec.DisallowUnknownFields()
	dec.UseNumber()
	if err := dec.Decode(dst); err != nil {
		fe, _ := IsFieldError(jsonError(err))
		if fe.Field == "json" {
			return false, fieldErr(field, "must be an object such as %s", example)
		}
		if strings.Contains(fe.Reason, "unknown field") {
			fe.Reason = "unknown field (known fields: " + known + ")"
		}
		fe.Field = field + "." + strings.TrimPrefix(fe.Field, field+".")
		return false, fe
	}
	return true, nil
}

// wholeNumber reads a JSON number that must be an integer in [min, max].
func wholeNumber(field string, n *json.Number, min, max float64) (float64, error) {
	v, err := strconv.ParseFloat(n.String(), 64)
	if err != nil || v != math.Trunc(v) || v < min || v > max {
		return 0, fieldErr(field, "must be a whole number from %.0f to %.0f (got %s)", min, max, n.String())
	}
	return v, nil
}

// ParseSpec reads one spec JSON object from r (at most [MaxSpecBytes]),
// applies the defaults and validates it. Every failure is a [*FieldError]:
// malformed JSON, an empty or oversized input and trailing data are
// reported against the field "json".
func ParseSpec(r io.Reader) (Spec, error) {
	data, err := io.ReadAll(io.LimitReader(r, MaxSpecBytes+1))
	if err != nil {
		return Spec{}, fieldErr("json", "cannot read the spec: %v", err)
	}
	if len(data) > MaxSpecBytes {
		return Spec{}, fieldErr("json", "the spec is larger than %d bytes (1 MiB)", MaxSpecBytes)
	}
	return ParseSpecBytes(data)
}

// ParseSpecBytes is [ParseSpec] on a byte slice. Input is read strictly:
// an unknown key, a key given twice in one object, a key in another case
// than the spec's ("Passband_Hz") and a quoted number ("order": "5") are
// each a [*FieldError] naming the field (a long name cut to 40
// characters). A Spec's JSON (its MarshalJSON, the design's echoed spec)
// parses back to the same Spec.
func ParseSpecBytes(data []byte) (Spec, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return Spec{}, fieldErr("json", "the spec is empty; expected a JSON object")
	}
	if len(data) > MaxSpecBytes {
		return Spec{}, fieldErr("json", "the spec is larger than %d bytes (1 MiB)", MaxSpecBytes)
	}
	if err := strictCheck(data); err != nil {
		return Spec{}, err
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	dec.UseNumber()
	var raw rawSpec
	if err := dec.Decode(&raw); err != nil {
		return Spec{}, jsonError(err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return Spec{}, fieldErr("json", "unexpected data after the spec object")
	}
	return raw.build()
}

// jsonError turns a decoding error into a FieldError naming the field.
func jsonError(err error) error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		return fieldErr("json", "malformed JSON at byte %d: %v", syn.Offset, syn)
	case errors.As(err, &typ):
		field := typ.Field
		if field == "" {
			return fieldErr("json", "the spec must be a JSON object (got %s)", typ.Value)
		}
		return fieldErr(field, "must be %s (got %s)", jsonKind(typ.Type.Kind().String()), typ.Value)
	case errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF):
		return fieldErr("json", "the spec ends before its JSON object is complete")
	}
	msg := err.Error()
	if rest, ok := strings.CutPrefix(msg, "json: unknown field "); ok {
		name, _ := strconv.Unquote(rest)
		name = fieldName(name) // cut, and an empty key still needs a visible name
		return fieldErr(name, "unknown field (known fields: response, approximation, passband_hz, stopband_hz, passband_ripple_db, stopband_atten_db, phase_error_deg, order, gain_db, topology, resistor_series, capacitor_series, opamp, values, resistor_range_ohm, capacitor_range_farad, tolerance, montecarlo, converter, gain_tolerance_db, design_margin, supply, signal_vpp, delay_equalizer, target_yield)")
	}
	return fieldErr("json", "%s", strings.TrimPrefix(msg, "json: "))
}

func jsonKind(k string) string {
	switch k {
	case "float64", "int":
		return "a number"
	case "string":
		return "a string"
	case "bool":
		return "true or false"
	case "struct", "ptr":
		return "an object"
	}
	return "a " + k
}

func oneOf(field, value string, allowed []string) (string, error) {
	for _, a := range allowed {
		if strings.EqualFold(a, value) {
			return a, nil
		}
	}
	return "", fieldErr(field, "must be one of %s (got %q)", strings.Join(allowed, ", "), value)
}

func finite(field string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fieldErr(field, "must be a finite number (got %v)", v)
	}
	return nil
}

// parseBand reads a number or a [lo, hi] pair.
func parseBand(field string, msg json.RawMessage) ([]float64, error) {
	t := bytes.TrimSpace(msg)
	if bytes.Equal(t, []byte("null")) {
		return nil, nil
	}
	var one float64
	if err := json.Unmarshal(t, &one); err == nil {
		return []float64{one}, nil
	}
	var many []float64
	if err := json.Unmarshal(t, &many); err != nil {
		return nil, fieldErr(field, "must be a number or a [lo, hi] pair of numbers (got %s)", clip(string(t)))
	}
	return many, nil
}

// clip cuts s to 40 characters (runes) and marks the cut with "…", for
// error messages that quote the input.
func clip(s string) string {
	if r := []rune(s); len(r) > 40 {
		return string(r[:40]) + "…"
	}
	return s
}

func (raw rawSpec) build() (Spec, error) {
	s := Spec{
		Response:            Lowpass,
		Approximation:       "butterworth",
		StopbandAttenDB:     40,
		Topology:            "auto",
		ResistorSeries:      "E96",
		CapacitorSeries:     "E12",
		OpAmp:               OpAmp{GBWHz: 10e6, DCGainDB: 100, NoiseVPerRtHz: DefaultNoiseVPerRtHz, NoiseAPerRtHz: DefaultNoiseAPerRtHz, SlewVPerS: DefaultSlewVPerS},
		Values:              "series",
		ResistorRangeOhm:    [2]float64{DefaultMinOhm, DefaultMaxOhm},
		CapacitorRangeFarad: [2]float64{DefaultMinFarad, DefaultMaxFarad},
		Tolerance:           Tolerance{Distribution: "uniform"},
		MonteCarlo:          MonteCarlo{Seed: 1},
	}
	var err error
	if raw.Response != nil {
		var r string
		if r, err = oneOf("response", *raw.Response, Responses); err != nil {
			return Spec{}, err
		}
		s.Response = Response(r)
	}
	if raw.Approximation != nil {
		if s.Approximation, err = oneOf("approximation", *raw.Approximation, Approximations); err != nil {
			return Spec{}, err
		}
	}
	if raw.PassbandHz == nil {
		return Spec{}, fieldErr("passband_hz", "is required")
	}
	if s.PassbandHz, err = parseBand("passband_hz", *raw.PassbandHz); err != nil {
		return Spec{}, err
	}
	if s.PassbandHz == nil {
		return Spec{}, fieldErr("passband_hz", "is required")
	}
	if raw.StopbandHz != nil {
		if s.StopbandHz, err = parseBand("stopband_hz", *raw.StopbandHz); err != nil {
			return Spec{}, err
		}
	}
	if halfPowerDefault(s.Approximation) {
		s.PassbandRippleDB = BesselDefaultRippleDB
	} else {
		s.PassbandRippleDB = 1
	}
	if raw.PassbandRippleDB != nil {
		s.PassbandRippleDB = *raw.PassbandRippleDB
	}
	if raw.StopbandAttenDB != nil {
		s.StopbandAttenDB = *raw.StopbandAttenDB
	}
	s.PhaseErrorDeg = DefaultPhaseErrorDeg
	if raw.PhaseErrorDeg != nil {
		// Checked here as well as in Validate, where 0 stands for the
		// default: a spec that writes 0 asks for no ripple, which no
		// linear-phase design has.
		if err := validPhaseError(*raw.PhaseErrorDeg); err != nil {
			return Spec{}, err
		}
		s.PhaseErrorDeg = *raw.PhaseErrorDeg
	}
	if raw.Order != nil {
		o, perr := strconv.ParseFloat(raw.Order.String(), 64)
		if perr != nil || math.IsNaN(o) || o != math.Trunc(o) {
			return Spec{}, fieldErr("order", "must be a whole number from 0 to %d (got %s)", MaxOrder, raw.Order.String())
		}
		if o < 0 || o > MaxOrder {
			return Spec{}, fieldErr("order", "must be from 0 to %d (got %s); 0 asks for the lowest order that meets the mask", MaxOrder, raw.Order.String())
		}
		s.Order = int(o)
	}
	if raw.GainDB != nil {
		s.GainDB = *raw.GainDB
	}
	if raw.Topology != nil {
		if s.Topology, err = oneOf("topology", *raw.Topology, Topologies); err != nil {
			return Spec{}, err
		}
	}
	if raw.ResistorSeries != nil {
		if s.ResistorSeries, err = oneOf("resistor_series", *raw.ResistorSeries, SeriesNames); err != nil {
			return Spec{}, err
		}
	}
	if raw.CapacitorSeries != nil {
		if s.CapacitorSeries, err = oneOf("capacitor_series", *raw.CapacitorSeries, SeriesNames); err != nil {
			return Spec{}, err
		}
	}
	var o rawOpAmp
	if ok, err := decodeObject("opamp", raw.OpAmp, &o, `{"gbw_hz": 10e6, "dc_gain_db": 100} or {"ideal": true}`,
		"gbw_hz, dc_gain_db, ideal, noise_v_per_rthz, noise_a_per_rthz, slew_v_per_s, output_headroom_v, input_headroom_v, offset_v, bias_a, input_capacitance_farad, output_resistance_ohm, noise_corner_hz"); err != nil {
		return Spec{}, err
	} else if ok {
		if o.Ideal != nil && *o.Ideal {
			if o.GBWHz != nil || o.DCGainDB != nil {
				return Spec{}, fieldErr("opamp.ideal", "an ideal op-amp takes no gbw_hz or dc_gain_db; give one or the other")
			}
			s.OpAmp.Ideal, s.OpAmp.GBWHz, s.OpAmp.DCGainDB = true, 0, 0
		}
		for _, f := range []struct {
			in  *float64
			out *float64
		}{{o.GBWHz, &s.OpAmp.GBWHz}, {o.DCGainDB, &s.OpAmp.DCGainDB}, {o.NoiseVPerRtHz, &s.OpAmp.NoiseVPerRtHz},
			{o.NoiseAPerRtHz, &s.OpAmp.NoiseAPerRtHz}, {o.SlewVPerS, &s.OpAmp.SlewVPerS},
			{o.OutputHeadroomV, &s.OpAmp.OutputHeadroomV}, {o.InputHeadroomV, &s.OpAmp.InputHeadroomV},
			{o.OffsetV, &s.OpAmp.OffsetV}, {o.BiasA, &s.OpAmp.BiasA},
			{o.InputCapacitanceFarad, &s.OpAmp.InputCapacitanceFarad}, {o.OutputResistanceOhm, &s.OpAmp.OutputResistanceOhm},
			{o.NoiseCornerHz, &s.OpAmp.NoiseCornerHz}} {
			if f.in != nil {
				*f.out = *f.in
			}
		}
	}
	var tol rawTolerance
	// The default tolerances: the resistor series' usual one (its series
	// was read above) and 5 % for capacitors; an explicit 0 means exact.
	if rs, err := eseries.Lookup(s.ResistorSeries); err == nil {
		s.Tolerance.ResistorPct = rs.TolerancePct()
	}
	s.Tolerance.CapacitorPct = DefaultCapacitorPct
	if ok, err := decodeObject("tolerance", raw.Tolerance, &tol, `{"resistor_pct": 1, "capacitor_pct": 5, "distribution": "uniform"}`,
		"resistor_pct, capacitor_pct, distribution, gbw_pct"); err != nil {
		return Spec{}, err
	} else if ok {
		if tol.ResistorPct != nil {
			s.Tolerance.ResistorPct = *tol.ResistorPct
		}
		if tol.CapacitorPct != nil {
			s.Tolerance.CapacitorPct = *tol.CapacitorPct
		}
		if tol.GBWPct != nil {
			s.Tolerance.GBWPct = *tol.GBWPct
		}
		if tol.Distribution != nil {
			if s.Tolerance.Distribution, err = oneOf("tolerance.distribution", *tol.Distribution, Distributions); err != nil {
				return Spec{}, err
			}
		}
	}
	var mc rawMonteCarlo
	if ok, err := decodeObject("montecarlo", raw.MonteCarlo, &mc, `{"trials": 1000, "seed": 1}`, "trials, seed"); err != nil {
		return Spec{}, err
	} else if ok {
		if mc.Trials != nil {
			v, err := wholeNumber("montecarlo.trials", mc.Trials, 0, MaxTrials)
			if err != nil {
				fe, _ := IsFieldError(err)
				fe.Reason += fmt.Sprintf("; at most %d trials", MaxTrials)
				return Spec{}, fe
			}
			s.MonteCarlo.Trials = int(v)
		}
		if mc.Seed != nil {
			v, err := wholeNumber("montecarlo.seed", mc.Seed, 0, 1<<53)
			if err != nil {
				return Spec{}, err
			}
			s.MonteCarlo.Seed = uint64(v)
		}
	}
	var cv rawConverter
	if ok, err := decodeObject("converter", raw.Converter, &cv, `{"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4}`,
		"bits, sample_rate_hz, full_scale_vpp, output_rate_hz, alias_atten_db, architecture, input, sampling_capacitance_farad, acquisition_time_s, input_common_mode_v"); err != nil {
		return Spec{}, err
	} else if ok {
		if cv.Bits == nil || cv.SampleRateHz == nil || cv.FullScaleVpp == nil {
			return Spec{}, fieldErr("converter", "needs bits, sample_rate_hz and full_scale_vpp")
		}
		bits, err := wholeNumber("converter.bits", cv.Bits, 1, 32)
		if err != nil {
			return Spec{}, err
		}
		c := &Converter{Bits: int(bits), SampleRateHz: *cv.SampleRateHz, FullScaleVpp: *cv.FullScaleVpp,
			OutputRateHz: *cv.SampleRateHz, AliasAttenDB: DefaultAliasAttenDB(int(bits))}
		if cv.OutputRateHz != nil {
			c.OutputRateHz = *cv.OutputRateHz
		}
		if cv.AliasAttenDB != nil {
			c.AliasAttenDB = *cv.AliasAttenDB
		}
		// Left out, architecture and input stay "" (other, single-ended),
		// so that the spec as echoed is the spec as given.
		if cv.Architecture != nil {
			if c.Architecture, err = oneOf("converter.architecture", *cv.Architecture, Architectures); err != nil {
				return Spec{}, err
			}
		}
		if cv.Input != nil {
			if c.Input, err = oneOf("converter.input", *cv.Input, ConverterInputs); err != nil {
				return Spec{}, err
			}
		}
		if cv.SamplingCapacitanceFarad != nil {
			c.SamplingCapacitanceFarad = *cv.SamplingCapacitanceFarad
			if !(c.SamplingCapacitanceFarad > 0) {
				return Spec{}, fieldErr("converter.sampling_capacitance_farad", "must be above 0 F (got %g)", c.SamplingCapacitanceFarad)
			}
		}
		if cv.AcquisitionTimeS != nil {
			c.AcquisitionTimeS = *cv.AcquisitionTimeS
			if !(c.AcquisitionTimeS > 0) {
				return Spec{}, fieldErr("converter.acquisition_time_s", "must be above 0 s (got %g)", c.AcquisitionTimeS)
			}
		}
		c.InputCommonModeV = cv.InputCommonModeV
		s.Converter = c
		if s.Response == Lowpass && s.StopbandHz == nil {
			// The stopband comes from the converter: everything from
			// fs − fp up folds onto the passband.
			if fp := s.PassbandHz[0]; !(c.SampleRateHz > 2*fp) {
				return Spec{}, fieldErr("converter.sample_rate_hz", "must be above twice the passband edge, %g Hz, for the stopband to come from the converter (fs − passband edge; got %g)", 2*fp, c.SampleRateHz)
			}
			s.StopbandHz = []float64{c.SampleRateHz - s.PassbandHz[0]}
			if raw.StopbandAttenDB == nil {
				s.StopbandAttenDB = c.AliasAttenDB
			}
			s.stopbandFromConverter = true
		}
	}
	var sup rawSupply
	if ok, err := decodeObject("supply", raw.Supply, &sup, `{"positive_v": 5, "negative_v": 0, "reference_v": 2.5}`, "positive_v, negative_v, reference_v"); err != nil {
		return Spec{}, err
	} else if ok {
		if sup.PositiveV == nil {
			return Spec{}, fieldErr("supply.positive_v", "is required (the positive rail in V)")
		}
		s.Supply = &Supply{PositiveV: *sup.PositiveV}
		if sup.NegativeV != nil {
			s.Supply.NegativeV = *sup.NegativeV
		}
		s.Supply.ReferenceV = (s.Supply.PositiveV + s.Supply.NegativeV) / 2
		if sup.ReferenceV != nil {
			s.Supply.ReferenceV = *sup.ReferenceV
		}
	}
	if raw.SignalVpp != nil {
		v := *raw.SignalVpp
		s.SignalVpp = &v
	}
	if raw.GainToleranceDB != nil {
		v := *raw.GainToleranceDB
		s.GainToleranceDB = &v
	}
	var dm rawDesignMargin
	if ok, err := decodeObject("design_margin", raw.DesignMargin, &dm, `{"passband_db": 0.02, "stopband_db": 3}`, "passband_db, stopband_db"); err != nil {
		return Spec{}, err
	} else if ok {
		if dm.PassbandDB != nil {
			s.DesignMargin.PassbandDB = *dm.PassbandDB
		}
		if dm.StopbandDB != nil {
			s.DesignMargin.StopbandDB = *dm.StopbandDB
		}
	}
	var de rawDelayEqualizer
	if ok, err := decodeObject("delay_equalizer", raw.DelayEqualizer, &de, `{"max_spread_pct": 2}`, "max_spread_pct"); err != nil {
		return Spec{}, err
	} else if ok {
		if de.MaxSpreadPct == nil {
			return Spec{}, fieldErr("delay_equalizer.max_spread_pct", "is required in delay_equalizer (the group delay's largest spread over the passband, in %% of its mean)")
		}
		s.DelayEqualizer = &DelayEqualizer{MaxSpreadPct: *de.MaxSpreadPct}
	}
	if raw.TargetYield != nil {
		v := *raw.TargetYield
		s.TargetYield = &v
	}
	if raw.Values != nil {
		if s.Values, err = oneOf("values", *raw.Values, ValueModes); err != nil {
			return Spec{}, err
		}
	}
	for _, r := range []struct {
		field string
		in    *[]float64
		out   *[2]float64
	}{{"resistor_range_ohm", raw.ResistorRange, &s.ResistorRangeOhm}, {"capacitor_range_farad", raw.CapacitorRange, &s.CapacitorRangeFarad}} {
		if r.in == nil {
			continue
		}
		if len(*r.in) != 2 {
			return Spec{}, fieldErr(r.field, "must be a [lo, hi] pair (got %d values)", len(*r.in))
		}
		*r.out = [2]float64{(*r.in)[0], (*r.in)[1]}
	}
	return s, s.Validate()
}

// Validate checks every field of s and returns the first failure as a
// [*FieldError]. [ParseSpec] calls it; callers that build a Spec in Go
// should too.
func (s Spec) Validate() error {
	if _, err := oneOf("response", string(s.Response), Responses); err != nil {
		return err
	}
	if _, err := oneOf("approximation", s.Approximation, Approximations); err != nil {
		return err
	}
	if err := s.validateEdges("passband_hz", s.PassbandHz); err != nil {
		return err
	}
	if s.HasStopband() {
		if err := s.validateEdges("stopband_hz", s.StopbandHz); err != nil {
			return err
		}
		if err := s.validateBands(); err != nil {
			return err
		}
	} else if s.Order == 0 {
		return fieldErr("stopband_hz", "is required unless order is given (the lowest order is found from the stopband edge)")
	}
	if err := finite("passband_ripple_db", s.PassbandRippleDB); err != nil {
		return err
	}
	if !(s.PassbandRippleDB > 0) {
		return fieldErr("passband_ripple_db", "must be above 0 dB (got %g)", s.PassbandRippleDB)
	}
	if err := finite("stopband_atten_db", s.StopbandAttenDB); err != nil {
		return err
	}
	if !(s.StopbandAttenDB > 0) || s.StopbandAttenDB > MaxAttenDB {
		return fieldErr("stopband_atten_db", "must be above 0 dB and at most %d dB (got %g)", MaxAttenDB, s.StopbandAttenDB)
	}
	if !(s.PassbandRippleDB < s.StopbandAttenDB) {
		return fieldErr("passband_ripple_db", "must be below stopband_atten_db (got %g >= %g)", s.PassbandRippleDB, s.StopbandAttenDB)
	}
	if s.PhaseErrorDeg != 0 { // 0: a Spec built in Go without it, the default
		if err := validPhaseError(s.PhaseErrorDeg); err != nil {
			return err
		}
	}
	if s.Order < 0 || s.Order > MaxOrder {
		return fieldErr("order", "must be from 0 to %d (got %d)", MaxOrder, s.Order)
	}
	if err := finite("gain_db", s.GainDB); err != nil {
		return err
	}
	if s.GainDB < MinGainDB || s.GainDB > MaxGainDB {
		return fieldErr("gain_db", "must be from %d to +%d dB (got %g)", MinGainDB, MaxGainDB, s.GainDB)
	}
	if _, err := oneOf("topology", s.Topology, Topologies); err != nil {
		return err
	}
	if _, err := oneOf("resistor_series", s.ResistorSeries, SeriesNames); err != nil {
		return err
	}
	if _, err := oneOf("capacitor_series", s.CapacitorSeries, SeriesNames); err != nil {
		return err
	}
	if _, err := oneOf("values", s.Values, ValueModes); err != nil {
		return err
	}
	if err := validWindow("resistor_range_ohm", s.ResistorRangeOhm, MinOhmLimit, MaxOhmLimit, "Ω"); err != nil {
		return err
	}
	if err := validWindow("capacitor_range_farad", s.CapacitorRangeFarad, MinFaradLimit, MaxFaradLimit, "F"); err != nil {
		return err
	}
	if err := s.validateVerification(); err != nil {
		return err
	}
	if err := s.validateDelayEqualizer(); err != nil {
		return err
	}
	if err := s.OpAmp.validate(); err != nil {
		return err
	}
	return s.validateBoard()
}

// Bounds of the board fields.
const (
	// MaxRailV bounds the magnitude of each supply rail and reference, in
	// V: op-amp boards beyond ±100 V are outside this tool's job.
	MaxRailV = 100
	// MaxSignalVpp bounds signal_vpp, in V.
	MaxSignalVpp = 200
)

// SignalVppV returns the largest input, peak to peak, in V: signal_vpp when
// given, else the converter's full scale over the passband gain, else 2 V.
func (s Spec) SignalVppV() float64 {
	switch {
	case s.SignalVpp != nil:
		return *s.SignalVpp
	case s.Converter != nil:
		return s.Converter.FullScaleVpp / math.Pow(10, s.GainDB/20)
	default:
		return 2
	}
}

// validateBoard checks the supply, the signal and their fit with the
// op-amp's headrooms.
func (s Spec) validateBoard() error {
	if s.SignalVpp != nil {
		v := *s.SignalVpp
		if err := finite("signal_vpp", v); err != nil {
			return err
		}
		if !(v > 0) || v > MaxSignalVpp {
			return fieldErr("signal_vpp", "must be above 0 and at most %d V (got %g)", MaxSignalVpp, v)
		}
	}
	p := s.Supply
	if p == nil {
		return nil
	}
	for _, f := range []struct {
		field string
		v     float64
	}{{"supply.positive_v", p.PositiveV}, {"supply.negative_v", p.NegativeV}, {"supply.reference_v", p.ReferenceV}} {
		if err := finite(f.field, f.v); err != nil {
			return err
		}
		if math.Abs(f.v) > MaxRailV {
			return fieldErr(f.field, "must be within ±%d V (got %g)", MaxRailV, f.v)
		}
	}
	if !(p.PositiveV > p.NegativeV) {
		return fieldErr("supply.positive_v", "must be above negative_v (got %g <= %g)", p.PositiveV, p.NegativeV)
	}
	if !(p.ReferenceV > p.NegativeV && p.ReferenceV < p.PositiveV) {
		return fieldErr("supply.reference_v", "must lie between the rails, %g and %g V (got %g)", p.NegativeV, p.PositiveV, p.ReferenceV)
	}
	if span := p.PositiveV - p.NegativeV; !(2*s.OpAmp.OutputHeadroomV < span) {
		return fieldErr("opamp.output_headroom_v", "leaves no output swing between rails %g V apart (got %g V from each rail)", span, s.OpAmp.OutputHeadroomV)
	}
	if span := p.PositiveV - p.NegativeV; !(2*s.OpAmp.InputHeadroomV < span) {
		return fieldErr("opamp.input_headroom_v", "leaves no input range between rails %g V apart (got %g V from each rail)", span, s.OpAmp.InputHeadroomV)
	}
	return nil
}

// The bounds of the converter's input fields.
const (
	MinSamplingCapacitanceFarad = 0.1e-12
	MaxSamplingCapacitanceFarad = 1e-6
	MinAcquisitionTimeS         = 1e-9
)

// validateConverterInput checks the converter's architecture, input and
// the fields a SAR's driver needs (issue 12).
func (s Spec) validateConverterInput() error {
	c := s.Converter
	if c.Architecture != "" {
		if _, err := oneOf("converter.architecture", c.Architecture, Architectures); err != nil {
			return err
		}
	}
	if c.Input != "" {
		if _, err := oneOf("converter.input", c.Input, ConverterInputs); err != nil {
			return err
		}
	}
	if c.Input == InputDifferential {
		if c.Architecture == ArchitectureSAR {
			return fieldErr("converter.input", "a differential sar converter is not built: its driver RC is single-ended; use sigma-delta or other for a differential converter, or a single-ended sar")
		}
		if s.Topology != "auto" && s.Topology != topology.FullyDifferential {
			return fieldErr("topology", "%s builds single-ended stages, but converter.input is differential: use fully-differential or auto", s.Topology)
		}
	}
	if v := c.SamplingCapacitanceFarad; v != 0 {
		if err := finite("converter.sampling_capacitance_farad", v); err != nil {
			return err
		}
		if v < MinSamplingCapacitanceFarad || v > MaxSamplingCapacitanceFarad {
			return fieldErr("converter.sampling_capacitance_farad", "must be from 0.1 pF to 1 µF (got %g)", v)
		}
	}
	if v := c.AcquisitionTimeS; v != 0 {
		if err := finite("converter.acquisition_time_s", v); err != nil {
			return err
		}
		if v < MinAcquisitionTimeS || !(v < 1/c.SampleRateHz) {
			return fieldErr("converter.acquisition_time_s", "must be from 1 ns to less than one sample period, %g s (got %g)", 1/c.SampleRateHz, v)
		}
	}
	if c.Architecture == ArchitectureSAR {
		if c.SamplingCapacitanceFarad == 0 {
			return fieldErr("converter.sampling_capacitance_farad", "is needed for a sar converter: the driver RC is sized against the sampling capacitor")
		}
		if c.AcquisitionTimeS == 0 {
			return fieldErr("converter.acquisition_time_s", "is needed for a sar converter: the driver RC must settle the sampling capacitor's kick within it")
		}
	}
	if p := c.InputCommonModeV; p != nil {
		if err := finite("converter.input_common_mode_v", *p); err != nil {
			return err
		}
		if math.Abs(*p) > MaxRailV {
			return fieldErr("converter.input_common_mode_v", "must be within ±%d V (got %g)", MaxRailV, *p)
		}
		if sup := s.Supply; sup != nil && !(*p >= sup.NegativeV && *p <= sup.PositiveV) {
			return fieldErr("converter.input_common_mode_v", "must lie between the rails, %g and %g V (got %g)", sup.NegativeV, sup.PositiveV, *p)
		}
	}
	return nil
}

func (s Spec) validateDelayEqualizer() error {
	de := s.DelayEqualizer
	if de == nil {
		return nil
	}
	if err := finite("delay_equalizer.max_spread_pct", de.MaxSpreadPct); err != nil {
		return err
	}
	if de.MaxSpreadPct < MinDelaySpreadPct || de.MaxSpreadPct > MaxDelaySpreadPct {
		return fieldErr("delay_equalizer.max_spread_pct", "must be from %g to %g %% (got %g)", MinDelaySpreadPct, float64(MaxDelaySpreadPct), de.MaxSpreadPct)
	}
	if s.Response == Highpass || s.Response == Bandstop {
		return fieldErr("delay_equalizer", "equalises a lowpass or bandpass passband; a %s's passband reaches infinite frequency, where every delay falls to zero, so its spread has no finite mean", s.Response)
	}
	return nil
}

func (o OpAmp) validate() error {
	for _, f := range []struct {
		field    string
		v, max   float64
		unit     string
		positive bool
	}{
		{"opamp.noise_v_per_rthz", o.NoiseVPerRtHz, 1e-5, "V/√Hz", false},
		{"opamp.noise_a_per_rthz", o.NoiseAPerRtHz, 1e-6, "A/√Hz", false},
		{"opamp.slew_v_per_s", o.SlewVPerS, 1e12, "V/s", true},
		{"opamp.output_headroom_v", o.OutputHeadroomV, 50, "V", false},
		{"opamp.input_capacitance_farad", o.InputCapacitanceFarad, 1e-9, "F", false},
		{"opamp.output_resistance_ohm", o.OutputResistanceOhm, 1e4, "Ω", false},
		{"opamp.noise_corner_hz", o.NoiseCornerHz, 1e6, "Hz", false},
	} {
		if err := finite(f.field, f.v); err != nil {
			return err
		}
		if f.v < 0 || f.v > f.max || (f.positive && f.v == 0) {
			lo := "0"
			if f.positive {
				lo = "above 0"
			}
			return fieldErr(f.field, "must be from %s to %g %s (got %g)", lo, f.max, f.unit, f.v)
		}
	}
	for _, f := range []struct {
		field, unit string
		v, max      float64
	}{
		{"opamp.input_headroom_v", "V", o.InputHeadroomV, 50},
		{"opamp.offset_v", "V", o.OffsetV, 0.1},
		{"opamp.bias_a", "A", o.BiasA, 1e-3},
	} {
		if err := finite(f.field, f.v); err != nil {
			return err
		}
		if math.Abs(f.v) > f.max {
			return fieldErr(f.field, "must be within ±%g %s (got %g)", f.max, f.unit, f.v)
		}
	}
	if o.Ideal {
		return nil
	}
	if err := finite("opamp.gbw_hz", o.GBWHz); err != nil {
		return err
	}
	if o.GBWHz < 1e3 || o.GBWHz > 100e9 {
		return fieldErr("opamp.gbw_hz", "must be from 1 kHz to 100 GHz (got %g)", o.GBWHz)
	}
	if err := finite("opamp.dc_gain_db", o.DCGainDB); err != nil {
		return err
	}
	if o.DCGainDB < 20 || o.DCGainDB > 200 {
		return fieldErr("opamp.dc_gain_db", "must be from 20 to 200 dB (got %g)", o.DCGainDB)
	}
	return nil
}

func (s Spec) validateEdges(field string, edges []float64) error {
	want := 1
	if s.Response.IsBand() {
		want = 2
	}
	if len(edges) != want {
		if want == 1 {
			return fieldErr(field, "must be a single number for a %s (got %d values)", s.Response, len(edges))
		}
		return fieldErr(field, "must be a [lo, hi] pair for a %s (got %d values)", s.Response, len(edges))
	}
	for _, f := range edges {
		if err := finite(field, f); err != nil {
			return err
		}
		if f < MinFrequencyHz || f > MaxFrequencyHz {
			return fieldErr(field, "must be from 1 mHz to 100 MHz (got %g Hz)", f)
		}
	}
	if want == 2 && !(edges[0] < edges[1]) {
		return fieldErr(field, "lo must be below hi (got %g >= %g)", edges[0], edges[1])
	}
	return nil
}

func (s Spec) validateBands() error {
	p, st := s.PassbandHz, s.StopbandHz
	switch s.Response {
	case Lowpass:
		if !(st[0] > p[0]) {
			return fieldErr("stopband_hz", "must be above passband_hz for a lowpass (got %g <= %g)", st[0], p[0])
		}
	case Highpass:
		if !(st[0] < p[0]) {
			return fieldErr("stopband_hz", "must be below passband_hz for a highpass (got %g >= %g)", st[0], p[0])
		}
	case Bandpass:
		if !(st[0] < p[0]) {
			return fieldErr("stopband_hz", "lower edge must be below the passband's lower edge for a bandpass (got %g >= %g)", st[0], p[0])
		}
		if !(st[1] > p[1]) {
			return fieldErr("stopband_hz", "upper edge must be above the passband's upper edge for a bandpass (got %g <= %g)", st[1], p[1])
		}
	case Bandstop:
		if !(st[0] > p[0]) {
			return fieldErr("stopband_hz", "lower edge must be above the passband's lower edge for a bandstop (got %g <= %g)", st[0], p[0])
		}
		if !(st[1] < p[1]) {
			return fieldErr("stopband_hz", "upper edge must be below the passband's upper edge for a bandstop (got %g >= %g)", st[1], p[1])
		}
	}
	return nil
}

// validWindow checks a [lo, hi] part window against its limits. A window
// must span at least a factor 10, so that every value series has a whole
// decade in it.
func validWindow(field string, w [2]float64, min, max float64, unit string) error {
	for _, v := range w {
		if err := finite(field, v); err != nil {
			return err
		}
		if v < min || v > max {
			return fieldErr(field, "edges must be from %g %s to %g %s (got %g)", min, unit, max, unit, v)
		}
	}
	if !(w[1] >= 10*w[0]) {
		return fieldErr(field, "hi must be at least 10 times lo, a whole decade of values (got [%g, %g])", w[0], w[1])
	}
	return nil
}

func (s Spec) validateVerification() error {
	t := s.Tolerance
	for _, f := range []struct {
		field string
		v     float64
	}{{"tolerance.resistor_pct", t.ResistorPct}, {"tolerance.capacitor_pct", t.CapacitorPct}, {"tolerance.gbw_pct", t.GBWPct}} {
		if err := finite(f.field, f.v); err != nil {
			return err
		}
		if f.v < 0 || f.v > 50 {
			return fieldErr(f.field, "must be from 0 to 50 %% (got %g); 0 means exact parts, absent the default", f.v)
		}
	}
	if _, err := oneOf("tolerance.distribution", t.Distribution, Distributions); err != nil {
		return err
	}
	if s.MonteCarlo.Trials < 0 || s.MonteCarlo.Trials > MaxTrials {
		return fieldErr("montecarlo.trials", "must be from 0 to %d (got %d)", MaxTrials, s.MonteCarlo.Trials)
	}
	if c := s.Converter; c != nil {
		if c.Bits < 1 || c.Bits > 32 {
			return fieldErr("converter.bits", "must be from 1 to 32 (got %d)", c.Bits)
		}
		if err := finite("converter.sample_rate_hz", c.SampleRateHz); err != nil {
			return err
		}
		if c.SampleRateHz < 2*MinFrequencyHz || c.SampleRateHz > 2*MaxFrequencyHz {
			return fieldErr("converter.sample_rate_hz", "must be from 2 mHz to 200 MHz (got %g)", c.SampleRateHz)
		}
		if err := finite("converter.full_scale_vpp", c.FullScaleVpp); err != nil {
			return err
		}
		if c.FullScaleVpp < 1e-3 || c.FullScaleVpp > 100 {
			return fieldErr("converter.full_scale_vpp", "must be from 1 mV to 100 V peak to peak (got %g)", c.FullScaleVpp)
		}
		if err := finite("converter.output_rate_hz", c.OutputRateHz); err != nil {
			return err
		}
		if !(c.OutputRateHz >= 2*MinFrequencyHz) || c.OutputRateHz > c.SampleRateHz {
			return fieldErr("converter.output_rate_hz", "must be from 2 mHz up to converter.sample_rate_hz = %g Hz (got %g)", c.SampleRateHz, c.OutputRateHz)
		}
		if err := finite("converter.alias_atten_db", c.AliasAttenDB); err != nil {
			return err
		}
		if !(c.AliasAttenDB > 0) || c.AliasAttenDB > MaxAttenDB {
			return fieldErr("converter.alias_atten_db", "must be above 0 dB and at most %d dB (got %g)", MaxAttenDB, c.AliasAttenDB)
		}
		if top := slices.Max(s.PassbandHz); s.Response != Highpass && s.Response != Bandstop && !(c.SampleRateHz > 2*top) {
			return fieldErr("converter.sample_rate_hz", "must be above twice the passband's upper edge, %g Hz, or the passband folds onto itself (got %g)", 2*top, c.SampleRateHz)
		}
		if err := s.validateConverterInput(); err != nil {
			return err
		}
	}
	if g := s.GainToleranceDB; g != nil {
		if err := finite("gain_tolerance_db", *g); err != nil {
			return err
		}
		if !(*g > 0) || *g > 20 {
			return fieldErr("gain_tolerance_db", "must be above 0 dB and at most 20 dB (got %g)", *g)
		}
	}
	if err := s.validateTargetYield(); err != nil {
		return err
	}
	m := s.DesignMargin
	if err := finite("design_margin.passband_db", m.PassbandDB); err != nil {
		return err
	}
	if !(m.PassbandDB >= 0) || !(m.PassbandDB < s.PassbandRippleDB) {
		return fieldErr("design_margin.passband_db", "must be from 0 dB to below passband_ripple_db = %g dB (got %g)", s.PassbandRippleDB, m.PassbandDB)
	}
	if err := finite("design_margin.stopband_db", m.StopbandDB); err != nil {
		return err
	}
	if !(m.StopbandDB >= 0) || s.StopbandAttenDB+m.StopbandDB > MaxAttenDB {
		return fieldErr("design_margin.stopband_db", "must be at least 0 dB and keep stopband_atten_db + stopband_db at most %d dB (got %g)", MaxAttenDB, m.StopbandDB)
	}
	return nil
}
