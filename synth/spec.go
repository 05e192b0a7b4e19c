package synth

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
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
	// BesselDefaultRippleDB is Amax for Bessel when the spec gives none:
	// 10·log10(2), so that passband_hz is the −3 dB point.
	BesselDefaultRippleDB = 3.0102999566398121
)

// OpAmp is the amplifier model of a spec: single pole, or ideal.
type OpAmp struct {
	// GBWHz is the gain-bandwidth product in Hz.
	GBWHz float64 `json:"gbw_hz"`
	// DCGainDB is the open-loop gain at DC in dB.
	DCGainDB float64 `json:"dc_gain_db"`
	// Ideal selects an ideal amplifier: infinite gain and bandwidth.
	Ideal bool `json:"ideal"`
}

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
	Order            int       `json:"order"`
	GainDB           float64   `json:"gain_db"`
	Topology         string    `json:"topology"`
	ResistorSeries   string    `json:"resistor_series"`
	CapacitorSeries  string    `json:"capacitor_series"`
	OpAmp            OpAmp     `json:"opamp"`
	Values           string    `json:"values"`
	// ResistorRangeOhm and CapacitorRangeFarad are the windows part values
	// are chosen in, [lo, hi].
	ResistorRangeOhm    [2]float64 `json:"resistor_range_ohm"`
	CapacitorRangeFarad [2]float64 `json:"capacitor_range_farad"`
}

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
	Approximations = []string{"butterworth", "chebyshev1", "chebyshev2", "bessel", "elliptic"}
	Topologies     = []string{"sallen-key", "multiple-feedback", "state-variable", "auto"}
	SeriesNames    = []string{"E3", "E6", "E12", "E24", "E48", "E96", "E192"}
	ValueModes     = []string{"series", "exact"}
)

// rawSpec mirrors the JSON with pointers, so that absent fields get their
// defaults and present ones are validated.
type rawSpec struct {
	Response         *string          `json:"response"`
	Approximation    *string          `json:"approximation"`
	PassbandHz       *json.RawMessage `json:"passband_hz"`
	StopbandHz       *json.RawMessage `json:"stopband_hz"`
	PassbandRippleDB *float64         `json:"passband_ripple_db"`
	StopbandAttenDB  *float64         `json:"stopband_atten_db"`
	Order            *json.Number     `json:"order"`
	GainDB           *float64         `json:"gain_db"`
	Topology         *string          `json:"topology"`
	ResistorSeries   *string          `json:"resistor_series"`
	CapacitorSeries  *string          `json:"capacitor_series"`
	OpAmp            *json.RawMessage `json:"opamp"`
	Values           *string          `json:"values"`
	ResistorRange    *[]float64       `json:"resistor_range_ohm"`
	CapacitorRange   *[]float64       `json:"capacitor_range_farad"`
}

type rawOpAmp struct {
	GBWHz    *float64 `json:"gbw_hz"`
	DCGainDB *float64 `json:"dc_gain_db"`
	Ideal    *bool    `json:"ideal"`
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

// ParseSpecBytes is [ParseSpec] on a byte slice.
func ParseSpecBytes(data []byte) (Spec, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return Spec{}, fieldErr("json", "the spec is empty; expected a JSON object")
	}
	if len(data) > MaxSpecBytes {
		return Spec{}, fieldErr("json", "the spec is larger than %d bytes (1 MiB)", MaxSpecBytes)
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
		if name == "" {
			name = `""` // an empty key still needs a visible name
		}
		return fieldErr(name, "unknown field (known fields: response, approximation, passband_hz, stopband_hz, passband_ripple_db, stopband_atten_db, order, gain_db, topology, resistor_series, capacitor_series, opamp, values, resistor_range_ohm, capacitor_range_farad)")
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

func clip(s string) string {
	if len(s) > 40 {
		return s[:40] + "…"
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
		OpAmp:               OpAmp{GBWHz: 10e6, DCGainDB: 100},
		Values:              "series",
		ResistorRangeOhm:    [2]float64{DefaultMinOhm, DefaultMaxOhm},
		CapacitorRangeFarad: [2]float64{DefaultMinFarad, DefaultMaxFarad},
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
	if s.Approximation == "bessel" {
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
	if raw.OpAmp != nil && !bytes.Equal(bytes.TrimSpace(*raw.OpAmp), []byte("null")) {
		var o rawOpAmp
		dec := json.NewDecoder(bytes.NewReader(*raw.OpAmp))
		dec.DisallowUnknownFields()
		if err := dec.Decode(&o); err != nil {
			fe, _ := IsFieldError(jsonError(err))
			if fe.Field == "json" {
				return Spec{}, fieldErr("opamp", "must be an object such as {\"gbw_hz\": 10e6, \"dc_gain_db\": 100} or {\"ideal\": true}")
			}
			if strings.Contains(fe.Reason, "unknown field") {
				fe.Reason = "unknown field (known fields: gbw_hz, dc_gain_db, ideal)"
			}
			fe.Field = "opamp." + strings.TrimPrefix(fe.Field, "opamp.")
			return Spec{}, fe
		}
		if o.Ideal != nil && *o.Ideal {
			if o.GBWHz != nil || o.DCGainDB != nil {
				return Spec{}, fieldErr("opamp.ideal", "an ideal op-amp takes no gbw_hz or dc_gain_db; give one or the other")
			}
			s.OpAmp = OpAmp{Ideal: true}
		}
		if o.GBWHz != nil {
			s.OpAmp.GBWHz = *o.GBWHz
		}
		if o.DCGainDB != nil {
			s.OpAmp.DCGainDB = *o.DCGainDB
		}
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
	return s.OpAmp.validate()
}

func (o OpAmp) validate() error {
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
