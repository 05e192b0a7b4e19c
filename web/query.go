package web

import (
	"encoding/json"
	"fmt"
	"math"
	"net/url"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/polewright/polewright/synth"
)

// inputKind is how a field is entered and how its text becomes JSON.
type inputKind int

const (
	kindNumber  inputKind = iota // one number
	kindBand                     // a number, or "lo,hi"
	kindChoice                   // one of a list of names (a select)
	kindBool                     // a checkbox: "1" or absent
	kindInteger                  // a whole number (synth checks wholeness)
	kindPair                     // "lo,hi", always a JSON array
)

// field is one control of the spec form and one query parameter. Adding a
// spec field to the page is adding a row to specFields; the JSON path puts
// it where the spec JSON expects it.
type field struct {
	// Name is the query parameter and the form control's name.
	Name string
	// Path is where the value goes in the spec JSON: ["passband_hz"] or
	// ["opamp", "gbw_hz"]. Empty for the converter helper's parameters,
	// which are not part of the spec.
	Path []string
	// Label is the control's label; Noun names the field in a sentence
	// ("the passband edge"), for error messages.
	Label, Noun string
	Kind        inputKind
	// Choices are the accepted values of a kindChoice field, Default the one
	// selected when the field is absent.
	Choices []string
	Default string
	// OmitDefault leaves a choice out of the spec JSON when it is the
	// default: a select always submits a value, and an object that holds
	// only a default (the converter's architecture) is not an object the
	// spec asked for.
	OmitDefault bool
	// Placeholder is shown in an empty control; Hint under it.
	Placeholder, Hint string
	// Initial is the value on the blank form of GET /.
	Initial string
	// Group is the fieldset the control belongs to.
	Group string
}

// jsonName is the field's name as synth.FieldError spells it.
func (f field) jsonName() string { return strings.Join(f.Path, ".") }

// The fieldsets of the form, in order.
const (
	groupBands   = "Response and mask"
	groupCircuit = "Circuit"
	groupOpAmp   = "Op-amp"
	groupBench   = "Tolerances and Monte Carlo"
	groupConv    = "Converter (optional)"
	groupBoard   = "Supply and the op-amp's DC and parasitics (optional)"
	groupHelper  = "Start from the converter: what does it need?"
)

// specFields are the spec's fields as the form and the query carry them,
// in the order of the form and of a canonical query.
var specFields = []field{
	{Name: "response", Path: []string{"response"}, Label: "Response", Noun: "the response", Kind: kindChoice,
		Choices: synth.Responses, Default: "lowpass", Group: groupBands},
	{Name: "approximation", Path: []string{"approximation"}, Label: "Approximation", Noun: "the approximation", Kind: kindChoice,
		Choices: synth.Approximations, Default: "butterworth", Group: groupBands},
	{Name: "passband_hz", Path: []string{"passband_hz"}, Label: "Passband edge (Hz)", Noun: "the passband edge", Kind: kindBand,
		Placeholder: "e.g. 1000, or 800,1200 for a band", Hint: "where the loss reaches the passband ripple; lo,hi for bandpass and bandstop",
		Initial: "1000", Group: groupBands},
	{Name: "stopband_hz", Path: []string{"stopband_hz"}, Label: "Stopband edge (Hz)", Noun: "the stopband edge", Kind: kindBand,
		Placeholder: "e.g. 4000", Hint: "where the loss must reach the attenuation; may be empty when the order is given",
		Initial: "4000", Group: groupBands},
	{Name: "passband_ripple_db", Path: []string{"passband_ripple_db"}, Label: "Passband ripple, Amax (dB)", Noun: "the passband ripple", Kind: kindNumber,
		Placeholder: "1 (Bessel, optimum-L, Gaussian, linear phase: 3.0103)", Hint: "most loss allowed in the passband", Group: groupBands},
	{Name: "stopband_atten_db", Path: []string{"stopband_atten_db"}, Label: "Stopband attenuation, Amin (dB)", Noun: "the stopband attenuation", Kind: kindNumber,
		Placeholder: "40", Hint: "least loss required in the stopband", Initial: "40", Group: groupBands},
	{Name: "phase_error_deg", Path: []string{"phase_error_deg"}, Label: "Phase ripple (°)", Noun: "the phase ripple", Kind: kindNumber,
		Placeholder: fmt.Sprint(synth.DefaultPhaseErrorDeg), Hint: fmt.Sprintf("linear phase only: the phase stays within ± this of a pure delay over the passband; %g to %g", float64(synth.MinPhaseErrorDeg), float64(synth.MaxPhaseErrorDeg)), Group: groupBands},
	{Name: "order", Path: []string{"order"}, Label: "Order", Noun: "the order", Kind: kindInteger,
		Placeholder: "lowest that meets the mask", Hint: fmt.Sprintf("0 or empty: the lowest order that meets the mask; at most %d", synth.MaxOrder), Group: groupBands},
	{Name: "gain_db", Path: []string{"gain_db"}, Label: "Passband gain (dB)", Noun: "the passband gain", Kind: kindNumber,
		Placeholder: "0", Hint: fmt.Sprintf("of the whole chain, %d to +%d dB", synth.MinGainDB, synth.MaxGainDB), Group: groupBands},
	{Name: "gain_tolerance_db", Path: []string{"gain_tolerance_db"}, Label: "Gain tolerance (± dB)", Noun: "the gain tolerance", Kind: kindNumber,
		Placeholder: "not judged", Hint: "the board's passband maximum must lie within ± this of the passband gain", Group: groupBands},
	{Name: "design_margin_passband_db", Path: []string{"design_margin", "passband_db"}, Label: "Design margin, passband (dB)", Noun: "the passband design margin", Kind: kindNumber,
		Placeholder: "0", Hint: "design to Amax less this, judge against Amax: room for part tolerances", Group: groupBands},
	{Name: "design_margin_stopband_db", Path: []string{"design_margin", "stopband_db"}, Label: "Design margin, stopband (dB)", Noun: "the stopband design margin", Kind: kindNumber,
		Placeholder: "0", Hint: "design to Amin plus this, judge against Amin", Group: groupBands},
	{Name: "delay_equalizer_max_spread_pct", Path: []string{"delay_equalizer", "max_spread_pct"}, Label: "Delay equaliser, spread (%)", Noun: "the group-delay spread", Kind: kindNumber,
		Placeholder: "none", Hint: fmt.Sprintf("append all-pass stages until the passband's group delay varies by at most this %% of its mean (lowpass, bandpass; %g to %g)", synth.MinDelaySpreadPct, float64(synth.MaxDelaySpreadPct)), Group: groupBands},
	{Name: "target_yield", Path: []string{"target_yield"}, Label: "Target yield", Noun: "the target yield", Kind: kindNumber,
		Placeholder: "none", Hint: "0 to 1: the smallest design margin whose Monte Carlo yield reaches it is chosen (needs trials)", Group: groupBands},
	{Name: "topology", Path: []string{"topology"}, Label: "Stage circuit", Noun: "the stage circuit", Kind: kindChoice,
		Choices: synth.Topologies, Default: "auto", Hint: "auto picks per stage and says why", Group: groupCircuit},
	{Name: "resistor_series", Path: []string{"resistor_series"}, Label: "Resistor series", Noun: "the resistor series", Kind: kindChoice,
		Choices: synth.SeriesNames, Default: "E96", Group: groupCircuit},
	{Name: "capacitor_series", Path: []string{"capacitor_series"}, Label: "Capacitor series", Noun: "the capacitor series", Kind: kindChoice,
		Choices: synth.SeriesNames, Default: "E12", Group: groupCircuit},
	{Name: "values", Path: []string{"values"}, Label: "Part values", Noun: "the part values", Kind: kindChoice,
		Choices: synth.ValueModes, Default: "series", Hint: "exact: unrounded, for checking the synthesis", Group: groupCircuit},
	{Name: "resistor_range_ohm", Path: []string{"resistor_range_ohm"}, Label: "Resistor window (Ω)", Noun: "the resistor window", Kind: kindPair,
		Placeholder: "1k,220k", Hint: "lo,hi: every resistor within it; at least a decade wide", Group: groupCircuit},
	{Name: "capacitor_range_farad", Path: []string{"capacitor_range_farad"}, Label: "Capacitor window (F)", Noun: "the capacitor window", Kind: kindPair,
		Placeholder: "100p,1u", Hint: "lo,hi: every capacitor within it; at least a decade wide", Group: groupCircuit},
	{Name: "opamp_gbw_hz", Path: []string{"opamp", "gbw_hz"}, Label: "Gain-bandwidth product (Hz)", Noun: "the gain-bandwidth product", Kind: kindNumber,
		Placeholder: "10e6", Hint: "1 kHz to 100 GHz", Group: groupOpAmp},
	{Name: "opamp_dc_gain_db", Path: []string{"opamp", "dc_gain_db"}, Label: "Open-loop gain at DC (dB)", Noun: "the open-loop gain", Kind: kindNumber,
		Placeholder: "100", Hint: "20 to 200 dB", Group: groupOpAmp},
	{Name: "opamp_ideal", Path: []string{"opamp", "ideal"}, Label: "Ideal op-amp", Noun: "the ideal op-amp", Kind: kindBool,
		Hint: "infinite gain and bandwidth; leave the two fields above empty when ticked", Group: groupOpAmp},
	{Name: "opamp_noise_v_per_rthz", Path: []string{"opamp", "noise_v_per_rthz"}, Label: "Input voltage noise (V/√Hz)", Noun: "the op-amp's voltage noise", Kind: kindNumber,
		Placeholder: "10n", Hint: "white density, 0 to 10 µV/√Hz; 10n is 10 nV/√Hz", Group: groupOpAmp},
	{Name: "opamp_noise_a_per_rthz", Path: []string{"opamp", "noise_a_per_rthz"}, Label: "Input current noise (A/√Hz)", Noun: "the op-amp's current noise", Kind: kindNumber,
		Placeholder: "1p", Hint: "white density, 0 to 1 µA/√Hz; 1p is 1 pA/√Hz", Group: groupOpAmp},
	{Name: "opamp_slew_v_per_s", Path: []string{"opamp", "slew_v_per_s"}, Label: "Slew rate (V/s)", Noun: "the op-amp's slew rate", Kind: kindNumber,
		Placeholder: "10M", Hint: "10M is 10 V/µs; compared with what each stage needs", Group: groupOpAmp},
	{Name: "tolerance_resistor_pct", Path: []string{"tolerance", "resistor_pct"}, Label: "Resistor tolerance (%)", Noun: "the resistor tolerance", Kind: kindNumber,
		Placeholder: "the series' usual (E96: 1)", Hint: "empty: E3 40, E6 20, E12 10, E24 5, E48 2, E96 1, E192 0.5; 0: exact parts; at most 50", Group: groupBench},
	{Name: "tolerance_capacitor_pct", Path: []string{"tolerance", "capacitor_pct"}, Label: "Capacitor tolerance (%)", Noun: "the capacitor tolerance", Kind: kindNumber,
		Placeholder: fmt.Sprint(synth.DefaultCapacitorPct), Hint: "empty: 5; 0: exact parts; at most 50", Group: groupBench},
	{Name: "tolerance_distribution", Path: []string{"tolerance", "distribution"}, Label: "Part spread", Noun: "the part spread", Kind: kindChoice,
		Choices: synth.Distributions, Default: "uniform", Hint: "gaussian takes the tolerance as 3σ", Group: groupBench},
	{Name: "tolerance_gbw_pct", Path: []string{"tolerance", "gbw_pct"}, Label: "Op-amp GBW spread (%)", Noun: "the op-amp GBW spread", Kind: kindNumber,
		Placeholder: "0 (none)", Hint: "each op-amp's gain-bandwidth drawn within ± this; at most 50", Group: groupBench},
	{Name: "montecarlo_trials", Path: []string{"montecarlo", "trials"}, Label: "Monte Carlo trials", Noun: "the number of trials", Kind: kindInteger,
		Placeholder: "0 (none)", Hint: fmt.Sprintf("boards drawn within the tolerances, e.g. 1000; at most %d (more than %d take a few seconds)", synth.MaxTrials, slowTrials), Group: groupBench},
	{Name: "montecarlo_seed", Path: []string{"montecarlo", "seed"}, Label: "Seed", Noun: "the seed", Kind: kindInteger,
		Placeholder: "1", Hint: "the same seed draws the same boards", Group: groupBench},
	{Name: "converter_sample_rate_hz", Path: []string{"converter", "sample_rate_hz"}, Label: "Sample rate (Hz)", Noun: "the converter's sample rate", Kind: kindNumber,
		Placeholder: "e.g. 48000", Hint: "the noise is integrated up to half of it", Group: groupConv},
	{Name: "converter_bits", Path: []string{"converter", "bits"}, Label: "Resolution (bits)", Noun: "the converter's resolution", Kind: kindInteger,
		Placeholder: "e.g. 16", Hint: "1 to 32; sets the LSB and the ±½ LSB settling band", Group: groupConv},
	{Name: "converter_full_scale_vpp", Path: []string{"converter", "full_scale_vpp"}, Label: "Full scale (V peak to peak)", Noun: "the converter's full scale", Kind: kindNumber,
		Placeholder: "e.g. 4", Hint: "give all three converter fields, or none", Group: groupConv},
	{Name: "converter_output_rate_hz", Path: []string{"converter", "output_rate_hz"}, Label: "Output word rate (Hz)", Noun: "the converter's output rate", Kind: kindNumber,
		Placeholder: "the sample rate", Hint: "below the sample rate for an oversampling converter; the noise its words carry is folded into half of it", Group: groupConv},
	{Name: "converter_alias_atten_db", Path: []string{"converter", "alias_atten_db"}, Label: "Alias attenuation (dB)", Noun: "the alias attenuation", Kind: kindNumber,
		Placeholder: "6.02·bits + 1.76", Hint: "least attenuation of everything sampling folds onto the passband; with a converter the stopband may be left empty (fs − passband edge)", Group: groupConv},
	{Name: "converter_architecture", Path: []string{"converter", "architecture"}, Label: "Architecture", Noun: "the converter's architecture", Kind: kindChoice,
		Choices: synth.Architectures, Default: "other", OmitDefault: true, Hint: "sar: an R–C driver is designed between the last op-amp and the converter's input", Group: groupConv},
	{Name: "converter_input", Path: []string{"converter", "input"}, Label: "Input", Noun: "the converter's input", Kind: kindChoice,
		Choices: synth.ConverterInputs, Default: "single-ended", OmitDefault: true, Hint: "differential: every stage is built fully differential (auto), the first converting the single-ended source; with notch or all-pass sections, single-ended stages and a conversion after the last", Group: groupConv},
	{Name: "converter_sampling_capacitance_farad", Path: []string{"converter", "sampling_capacitance_farad"}, Label: "Sampling capacitor (F)", Noun: "the converter's sampling capacitor", Kind: kindNumber,
		Placeholder: "e.g. 30p", Hint: "sar: the capacitor the input charges at each acquisition", Group: groupConv},
	{Name: "converter_acquisition_time_s", Path: []string{"converter", "acquisition_time_s"}, Label: "Acquisition time (s)", Noun: "the converter's acquisition time", Kind: kindNumber,
		Placeholder: "e.g. 290n", Hint: "sar: how long the sampling capacitor is connected; the driver settles its kick to ½ LSB within it", Group: groupConv},
	{Name: "converter_input_common_mode_v", Path: []string{"converter", "input_common_mode_v"}, Label: "Input common mode (V)", Noun: "the converter's input common mode", Kind: kindNumber,
		Placeholder: "none", Hint: "for a differential input", Group: groupConv},
	{Name: "supply_positive_v", Path: []string{"supply", "positive_v"}, Label: "Positive rail (V)", Noun: "the positive rail", Kind: kindNumber,
		Placeholder: "none: no rail checks", Hint: "e.g. 5 for a single 5 V supply; gives the swing and input-range checks", Group: groupBoard},
	{Name: "supply_negative_v", Path: []string{"supply", "negative_v"}, Label: "Negative rail (V)", Noun: "the negative rail", Kind: kindNumber,
		Placeholder: "0", Hint: "0 for a single supply", Group: groupBoard},
	{Name: "supply_reference_v", Path: []string{"supply", "reference_v"}, Label: "Reference (V)", Noun: "the reference", Kind: kindNumber,
		Placeholder: "mid-supply", Hint: "the signal's zero: every ground connection of the filter goes to it", Group: groupBoard},
	{Name: "signal_vpp", Path: []string{"signal_vpp"}, Label: "Largest input (V peak to peak)", Noun: "the largest input", Kind: kindNumber,
		Placeholder: "full scale over the gain, else 2", Hint: "the sine and step the swing figures take", Group: groupBoard},
	{Name: "opamp_output_headroom_v", Path: []string{"opamp", "output_headroom_v"}, Label: "Output headroom (V)", Noun: "the output headroom", Kind: kindNumber,
		Placeholder: "0 (rail to rail)", Hint: "how close to each rail the output swings", Group: groupBoard},
	{Name: "opamp_input_headroom_v", Path: []string{"opamp", "input_headroom_v"}, Label: "Input headroom (V)", Noun: "the input headroom", Kind: kindNumber,
		Placeholder: "0", Hint: "how close to each rail the inputs may go; negative: beyond the rail", Group: groupBoard},
	{Name: "opamp_offset_v", Path: []string{"opamp", "offset_v"}, Label: "Offset voltage (V)", Noun: "the offset voltage", Kind: kindNumber,
		Placeholder: "0", Hint: "adds to the + input; within ±0.1 V; 1m is 1 mV", Group: groupBoard},
	{Name: "opamp_bias_a", Path: []string{"opamp", "bias_a"}, Label: "Bias current (A)", Noun: "the bias current", Kind: kindNumber,
		Placeholder: "0", Hint: "into each input; 100n is 100 nA", Group: groupBoard},
	{Name: "opamp_input_capacitance_farad", Path: []string{"opamp", "input_capacitance_farad"}, Label: "Input capacitance (F)", Noun: "the input capacitance", Kind: kindNumber,
		Placeholder: "0", Hint: "each input to ground; 3p is 3 pF", Group: groupBoard},
	{Name: "opamp_output_resistance_ohm", Path: []string{"opamp", "output_resistance_ohm"}, Label: "Open-loop output resistance (Ω)", Noun: "the output resistance", Kind: kindNumber,
		Placeholder: "0", Hint: "lifts the stopband of Sallen-Key stages", Group: groupBoard},
	{Name: "opamp_noise_corner_hz", Path: []string{"opamp", "noise_corner_hz"}, Label: "1/f noise corner (Hz)", Noun: "the 1/f corner", Kind: kindNumber,
		Placeholder: "0 (white)", Hint: "where the 1/f noise equals the white; integrals then start at 0.01 Hz", Group: groupBoard},
}

// slowTrials is the number of Monte Carlo trials above which the form
// says that the run may take a few seconds.
const slowTrials = 20000

// converterFields are the converter object's controls: synth needs all
// three or none.
var converterFields = []string{"converter_sample_rate_hz", "converter_bits", "converter_full_scale_vpp"}

// The converter helper's parameters: not part of the spec, carried along so
// that the form keeps them.
const (
	paramRate = "adc_rate_hz"
	paramBits = "adc_bits"
	paramBand = "adc_band_hz"
	paramFill = "fill" // the helper's submit button
	// paramStage picks one stage's schematic on the schematic's download.
	paramStage = "stage"
)

var helperFields = []field{
	{Name: paramRate, Label: "Sample rate (Hz)", Noun: "the sample rate", Kind: kindNumber, Placeholder: "the converter's, or e.g. 200000", Group: groupHelper},
	{Name: paramBits, Label: "Resolution (bits)", Noun: "the resolution", Kind: kindNumber, Placeholder: "the converter's, or e.g. 18", Group: groupHelper},
	{Name: paramBand, Label: "Signal bandwidth (Hz)", Noun: "the signal bandwidth", Kind: kindNumber, Placeholder: "e.g. 20000", Group: groupHelper},
}

// allFields are the spec's fields followed by the helper's.
var allFields = slices.Concat(specFields, helperFields)

func lookupField(name string) (field, bool) {
	for _, f := range allFields {
		if f.Name == name {
			return f, true
		}
	}
	return field{}, false
}

// fieldByJSON returns the form field of a spec field named as
// synth.FieldError names it ("opamp.gbw_hz").
func fieldByJSON(name string) (field, bool) {
	for _, f := range specFields {
		if f.jsonName() == name {
			return f, true
		}
	}
	return field{}, false
}

// formValues are the form's controls as typed, by name.
type formValues map[string]string

// readQuery checks q and returns the values of the known parameters. An
// unknown or repeated parameter is a *synth.FieldError naming it (extra
// names the parameters that are tolerated without being fields, such as
// the helper's button).
func readQuery(q url.Values, extra ...string) (formValues, error) {
	var unknown []string
	vals := formValues{}
	for name, vs := range q {
		if _, ok := lookupField(name); !ok && !slices.Contains(extra, name) {
			unknown = append(unknown, name)
			continue
		}
		if len(vs) > 1 {
			return vals, &synth.FieldError{Field: name, Reason: fmt.Sprintf("is given %d times; give it once", len(vs))}
		}
		vals[name] = vs[0]
	}
	if len(unknown) > 0 {
		slices.Sort(unknown)
		quoted := make([]string, len(unknown))
		for i, u := range unknown {
			quoted[i] = strconv.Quote(clip(u))
		}
		noun := "parameter"
		if len(unknown) > 1 {
			noun = "parameters"
		}
		names := make([]string, len(specFields))
		for i, f := range specFields {
			names[i] = f.Name
		}
		return vals, &synth.FieldError{Field: unknown[0], Reason: fmt.Sprintf("unknown %s %s in the address (the spec's parameters are %s)",
			noun, strings.Join(quoted, ", "), strings.Join(names, ", "))}
	}
	return vals, nil
}

// clip shortens s for an error message.
func clip(s string) string {
	if r := []rune(s); len(r) > 40 {
		return string(r[:40]) + "…"
	}
	return s
}

// specJSON builds the spec JSON object of vals: empty values are absent,
// numbers become JSON numbers, band edges a number or an array. Text that
// is not a number is a *synth.FieldError naming the field; everything else
// is left to synth.ParseSpecBytes.
func specJSON(vals formValues) ([]byte, error) {
	obj := map[string]any{}
	for _, f := range specFields {
		text := strings.TrimSpace(vals[f.Name])
		if text == "" {
			continue
		}
		var v any
		switch f.Kind {
		case kindNumber, kindInteger:
			n, err := number(f, text)
			if err != nil {
				return nil, err
			}
			v = n
		case kindBand, kindPair:
			parts := strings.Split(text, ",")
			edges := make([]any, len(parts))
			for i, p := range parts {
				p = strings.TrimSpace(p)
				if p == "" {
					return nil, &synth.FieldError{Field: f.jsonName(), Reason: fmt.Sprintf("has an empty edge in %q; give one number, or lo,hi for a band", clip(text))}
				}
				n, err := number(f, p)
				if err != nil {
					return nil, err
				}
				edges[i] = n
			}
			if len(edges) == 1 && f.Kind == kindBand {
				v = edges[0]
			} else {
				v = edges
			}
		case kindBool:
			switch strings.ToLower(text) {
			case "1", "true", "on", "yes":
				v = true
			case "0", "false", "off", "no":
				v = false
			default:
				return nil, &synth.FieldError{Field: f.jsonName(), Reason: fmt.Sprintf("must be 1 (ticked) or 0 (got %q)", clip(text))}
			}
		case kindChoice:
			if f.OmitDefault && strings.EqualFold(text, f.Default) {
				continue
			}
			v = text
		}
		put(obj, f.Path, v)
	}
	return json.Marshal(obj)
}

// suffixes are the metric prefixes a number may end in on the form
// ("4.7k", "100n"), as powers of ten. "u" stands for µ.
var suffixes = map[string]string{
	"f": "e-15", "p": "e-12", "n": "e-9", "u": "e-6", "µ": "e-6", "m": "e-3",
	"k": "e3", "M": "e6", "G": "e9",
}

// jsonNumber is RFC 8259's number grammar (section 6): no hexadecimal, no
// underscores, no leading "+", "." or zeros, no Inf or NaN, which
// strconv.ParseFloat would take (issue 9: the permalink takes what the
// JSON path takes).
var jsonNumber = regexp.MustCompile(`^-?(?:0|[1-9][0-9]*)(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?$`)

// number parses one number of field f as a JSON number. A metric prefix
// may follow the number ("4.7k" is 4700, "100n" is 1e-07); it is applied
// as a decimal exponent, so the value is rounded once, as typed. The
// number itself, before the prefix, must be in the JSON number syntax.
func number(f field, text string) (json.Number, error) {
	num := text
	for suffix, exp := range suffixes {
		if rest, ok := strings.CutSuffix(text, suffix); ok && rest != "" && !strings.ContainsAny(rest, "eE") {
			num = strings.TrimSpace(rest) + exp
			break
		}
	}
	bad := func() error {
		return &synth.FieldError{Field: f.jsonName(), Reason: fmt.Sprintf("must be a number such as 2000, 0.5, 2e3 or 2k (got %q)", clip(text))}
	}
	if !jsonNumber.MatchString(num) {
		return "", bad()
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return "", bad()
	}
	return json.Number(strconv.FormatFloat(x, 'g', -1, 64)), nil
}

// put sets obj[path...] = v, making the nested objects on the way.
func put(obj map[string]any, path []string, v any) {
	for _, p := range path[:len(path)-1] {
		next, ok := obj[p].(map[string]any)
		if !ok {
			next = map[string]any{}
			obj[p] = next
		}
		obj = next
	}
	obj[path[len(path)-1]] = v
}

// parseQuery reads the spec of a result page's query: the form values as
// typed and the validated spec. The error, if any, is a *synth.FieldError.
func parseQuery(q url.Values) (formValues, synth.Spec, error) {
	vals, err := readQuery(q, paramFill)
	if err != nil {
		return vals, synth.Spec{}, err
	}
	data, err := specJSON(vals)
	if err != nil {
		return vals, synth.Spec{}, err
	}
	spec, err := synth.ParseSpecBytes(data)
	return vals, spec, err
}

// canonicalQuery encodes the non-empty values of vals in the order of the
// form: the query of the page's permalink and download links. The
// helper's button is dropped; its other fields are kept so the form keeps
// them.
func canonicalQuery(vals formValues) string {
	var b strings.Builder
	for _, f := range allFields {
		v := strings.TrimSpace(vals[f.Name])
		if v == "" || f.OmitDefault && strings.EqualFold(v, f.Default) {
			continue
		}
		if b.Len() > 0 {
			b.WriteByte('&')
		}
		b.WriteString(url.QueryEscape(f.Name))
		b.WriteByte('=')
		// Commas are kept readable in band edges: passband_hz=18000,22000.
		b.WriteString(strings.ReplaceAll(url.QueryEscape(v), "%2C", ","))
	}
	return b.String()
}

// specWord matches the spec's JSON field names inside a reason text: a
// snake_case name, or a dotted nested one ("opamp.gbw_hz",
// "montecarlo.trials").
var specWord = regexp.MustCompile(`\b(?:(?:opamp|tolerance|montecarlo|converter|design_margin|supply|delay_equalizer)\.[a-z][a-z0-9_]*|[a-z][a-z0-9]*(?:_[a-z0-9]+)+)\b`)

// nestedObjects are the spec's objects whose fields are named bare inside
// their own messages ("needs bits, sample_rate_hz and full_scale_vpp").
var nestedObjects = []string{"opamp", "converter", "tolerance", "montecarlo", "design_margin", "supply", "delay_equalizer"}

// practitionerReason rewrites the JSON field names in a synth reason as
// the nouns of the form ("must be above the passband edge for a lowpass").
func practitionerReason(reason string) string {
	return specWord.ReplaceAllStringFunc(reason, func(w string) string {
		if f, ok := fieldByJSON(w); ok {
			return f.Noun
		}
		switch w {
		case "gbw_hz": // as in "an ideal op-amp takes no gbw_hz or dc_gain_db"
			return "gain-bandwidth product"
		case "dc_gain_db":
			return "open-loop gain"
		}
		for _, obj := range nestedObjects {
			if f, ok := fieldByJSON(obj + "." + w); ok {
				return f.Noun
			}
		}
		return w
	})
}
