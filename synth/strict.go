package synth

import (
	"bytes"
	"encoding/json"
	"strings"
)

// The strict pre-pass. encoding/json matches object keys to struct fields
// case-insensitively, keeps the last of duplicate keys and lets a
// json.Number field take a quoted string ("order": "5"). ParseSpecBytes
// therefore first walks the token stream and refuses, as *FieldError
// naming the field:
//   - a key given twice in one object,
//   - a key that is a known field in another case ("Passband_Hz"),
//   - any other unknown key (its name cut to 40 characters),
//   - a string where the field takes a number, or among a band's or a
//     window's numbers.
//
// Everything else (syntax errors, wrong kinds other than quoted numbers,
// ranges) is left to the decoder and to build, which report it as before.

// valueKind is what a spec field's JSON value must be, as far as the
// pre-pass checks it.
type valueKind int

const (
	kindAny     valueKind = iota // a string or a bool: the decoder checks it
	kindNum                      // a JSON number
	kindNumList                  // a JSON number or an array of JSON numbers
	kindObject                   // a nested object with its own fields
)

// schemaField is one field of a spec object.
type schemaField struct {
	name   string
	kind   valueKind
	fields []schemaField // of a kindObject
}

// specSchema lists the spec's fields in the order of INTERFACE.md (the
// order of the "known fields" lists in errors).
var specSchema = []schemaField{
	{name: "response"}, {name: "approximation"},
	{name: "passband_hz", kind: kindNumList}, {name: "stopband_hz", kind: kindNumList},
	{name: "passband_ripple_db", kind: kindNum}, {name: "stopband_atten_db", kind: kindNum},
	{name: "phase_error_deg", kind: kindNum},
	{name: "order", kind: kindNum}, {name: "gain_db", kind: kindNum},
	{name: "topology"}, {name: "resistor_series"}, {name: "capacitor_series"},
	{name: "opamp", kind: kindObject, fields: []schemaField{
		{name: "gbw_hz", kind: kindNum}, {name: "dc_gain_db", kind: kindNum}, {name: "ideal"},
		{name: "noise_v_per_rthz", kind: kindNum}, {name: "noise_a_per_rthz", kind: kindNum}, {name: "slew_v_per_s", kind: kindNum},
		{name: "output_headroom_v", kind: kindNum}, {name: "input_headroom_v", kind: kindNum},
		{name: "offset_v", kind: kindNum}, {name: "bias_a", kind: kindNum},
		{name: "input_capacitance_farad", kind: kindNum}, {name: "output_resistance_ohm", kind: kindNum},
		{name: "noise_corner_hz", kind: kindNum},
	}},
	{name: "values"},
	{name: "resistor_range_ohm", kind: kindNumList}, {name: "capacitor_range_farad", kind: kindNumList},
	{name: "tolerance", kind: kindObject, fields: []schemaField{
		{name: "resistor_pct", kind: kindNum}, {name: "capacitor_pct", kind: kindNum}, {name: "distribution"}, {name: "gbw_pct", kind: kindNum},
	}},
	{name: "montecarlo", kind: kindObject, fields: []schemaField{{name: "trials", kind: kindNum}, {name: "seed", kind: kindNum}}},
	{name: "converter", kind: kindObject, fields: []schemaField{
		{name: "bits", kind: kindNum}, {name: "sample_rate_hz", kind: kindNum}, {name: "full_scale_vpp", kind: kindNum},
		{name: "output_rate_hz", kind: kindNum}, {name: "alias_atten_db", kind: kindNum},
		{name: "architecture"}, {name: "input"}, {name: "sampling_capacitance_farad", kind: kindNum},
		{name: "acquisition_time_s", kind: kindNum}, {name: "input_common_mode_v", kind: kindNum},
	}},
	{name: "gain_tolerance_db", kind: kindNum},
	{name: "design_margin", kind: kindObject, fields: []schemaField{{name: "passband_db", kind: kindNum}, {name: "stopband_db", kind: kindNum}}},
	{name: "target_yield", kind: kindNum},
	{name: "supply", kind: kindObject, fields: []schemaField{{name: "positive_v", kind: kindNum}, {name: "negative_v", kind: kindNum}, {name: "reference_v", kind: kindNum}}},
	{name: "signal_vpp", kind: kindNum},
	{name: "delay_equalizer", kind: kindObject, fields: []schemaField{{name: "max_spread_pct", kind: kindNum}}},
}

// errStopStrict ends the pre-pass without a verdict: the input is not
// well-formed JSON, which the decoder reports with its position.
type errStopStrict struct{}

func (errStopStrict) Error() string { return "not well-formed" }

// strictCheck runs the pre-pass over data. It returns nil when data is not
// a well-formed object (the decoder then says why) or passes.
func strictCheck(data []byte) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	tok, err := dec.Token()
	if err != nil || tok != json.Delim('{') {
		return nil
	}
	err = strictObject(dec, "", specSchema)
	if _, stop := err.(errStopStrict); stop {
		return nil
	}
	return err
}

// strictObject checks the members of an object whose '{' has been read,
// through its '}'. prefix is "" or "opamp." for nested objects.
func strictObject(dec *json.Decoder, prefix string, fields []schemaField) error {
	seen := map[string]bool{}
	for {
		tok, err := dec.Token()
		if err != nil {
			return errStopStrict{}
		}
		if tok == json.Delim('}') {
			return nil
		}
		key, ok := tok.(string)
		if !ok {
			return errStopStrict{}
		}
		if seen[key] {
			return fieldErr(prefix+fieldName(key), "is given twice; give each field once")
		}
		seen[key] = true
		f, known := lookupSchema(fields, key)
		if !known {
			if f.name != "" {
				return fieldErr(prefix+fieldName(key), "unknown field; field names are case-sensitive: did you mean %q?", f.name)
			}
			return fieldErr(prefix+fieldName(key), "unknown field (known fields: %s)", schemaNames(fields))
		}
		if err := strictValue(dec, prefix+key, f); err != nil {
			return err
		}
	}
}

// strictValue checks the value of field name.
func strictValue(dec *json.Decoder, name string, f schemaField) error {
	tok, err := dec.Token()
	if err != nil {
		return errStopStrict{}
	}
	switch f.kind {
	case kindNum:
		if s, ok := tok.(string); ok {
			return quotedNumber(name, s)
		}
	case kindNumList:
		if s, ok := tok.(string); ok {
			return quotedNumber(name, s)
		}
		if tok == json.Delim('[') {
			for {
				el, err := dec.Token()
				if err != nil {
					return errStopStrict{}
				}
				if el == json.Delim(']') {
					return nil
				}
				if s, ok := el.(string); ok {
					return quotedNumber(name, s)
				}
				if d, ok := el.(json.Delim); ok {
					if err := skipComposite(dec, d); err != nil {
						return err
					}
				}
			}
		}
	case kindObject:
		if tok == json.Delim('{') {
			return strictObject(dec, name+".", f.fields)
		}
	}
	if d, ok := tok.(json.Delim); ok {
		return skipComposite(dec, d)
	}
	return nil
}

func quotedNumber(name, s string) error {
	return fieldErr(name, "must be a JSON number, not a quoted string (got %q)", clip(s))
}

// skipComposite reads the rest of an array or object whose opening
// delimiter d has been read. The decoder refuses its kind later.
func skipComposite(dec *json.Decoder, d json.Delim) error {
	if d != '[' && d != '{' {
		return errStopStrict{}
	}
	for depth := 1; depth > 0; {
		tok, err := dec.Token()
		if err != nil {
			return errStopStrict{}
		}
		switch tok {
		case json.Delim('['), json.Delim('{'):
			depth++
		case json.Delim(']'), json.Delim('}'):
			depth--
		}
	}
	return nil
}

// lookupSchema finds key among fields, exactly. When it is not there but
// a field matches it case-insensitively, that field is returned with
// false.
func lookupSchema(fields []schemaField, key string) (schemaField, bool) {
	for _, f := range fields {
		if f.name == key {
			return f, true
		}
	}
	for _, f := range fields {
		if strings.EqualFold(f.name, key) {
			return f, false
		}
	}
	return schemaField{}, false
}

func schemaNames(fields []schemaField) string {
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = f.name
	}
	return strings.Join(names, ", ")
}

// fieldName is a key as an error names it: cut to 40 characters, and
// `""` for the empty key, so that the message stays short and visible.
func fieldName(key string) string {
	if key == "" {
		return `""`
	}
	return clip(key)
}
