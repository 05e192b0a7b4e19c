package synth_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"
	"time"

	"github.com/polewright/polewright/synth"
)

// FuzzSynthesize parses and designs arbitrary input: never a panic, never a
// NaN or Inf in the design (it must encode as JSON), and every error names
// a field. The seed corpus is the example specs, a few hand-written edge
// cases here, and the files under testdata/fuzz/FuzzSynthesize.
func FuzzSynthesize(f *testing.F) {
	files, _ := filepath.Glob("../testdata/examples/*.json")
	for _, file := range files {
		if b, err := os.ReadFile(file); err == nil {
			f.Add(b)
		}
	}
	for _, s := range []string{
		`{"passband_hz": 1000, "order": 20, "approximation": "bessel"}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "elliptic", "stopband_atten_db": 200, "passband_ripple_db": 0.001}`,
		`{"response": "bandstop", "passband_hz": [0.001, 1e8], "stopband_hz": [1, 2], "approximation": "chebyshev2"}`,
		`{"response": "bandpass", "passband_hz": [1e7, 1.00001e7], "order": 20}`,
		`{"response": "highpass", "passband_hz": 1e8, "stopband_hz": 0.001, "stopband_atten_db": 200}`,
		`{"passband_hz": [1], "order": 1}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "elliptic", "passband_ripple_db": 0.5, "stopband_atten_db": 1}`,
		`{"passband_hz": 1000, "stopband_hz": 1000.0000001, "approximation": "elliptic", "stopband_atten_db": 3}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "chebyshev2", "passband_ripple_db": 199, "stopband_atten_db": 200}`,
		`{"passband_hz": 1e-3, "stopband_hz": 1.0001e-3, "approximation": "elliptic"}`,
		`{"response": "bandpass", "passband_hz": [1e7, 1.00001e7], "order": 20, "approximation": "elliptic", "delay_equalizer": {"max_spread_pct": 0.01}}`,
		`{"passband_hz": 1e8, "order": 20, "approximation": "chebyshev1", "delay_equalizer": {"max_spread_pct": 100}}`,
		`{"passband_hz": 1000, "order": 8, "approximation": "elliptic", "supply": {"positive_v": 5}, "opamp": {"gbw_hz": 1e3, "offset_v": 0.1, "bias_a": 1e-3, "input_capacitance_farad": 1e-9, "output_resistance_ohm": 1e4, "noise_corner_hz": 1e6}}`,
		`{"passband_hz": 1e-3, "order": 4, "supply": {"positive_v": 100, "negative_v": -100, "reference_v": 99.999}, "signal_vpp": 200, "opamp": {"ideal": true, "output_resistance_ohm": 1e4, "input_capacitance_farad": 1e-9}}`,
		`{"response": "bandstop", "passband_hz": [40, 60], "stopband_hz": [49, 51], "supply": {"positive_v": 3.3}, "opamp": {"output_headroom_v": 1.6, "input_headroom_v": -50}}`,
		`{"passband_hz": 1e-3, "order": 1, "delay_equalizer": {"max_spread_pct": 0.01}}`,
		`{"response": "bandpass", "passband_hz": [0.001, 1e8], "order": 3, "delay_equalizer": {"max_spread_pct": 1}}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "gaussian"}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "legendre", "passband_ripple_db": 100, "stopband_atten_db": 200}`,
		`{"passband_hz": 1000, "stopband_hz": 1200, "approximation": "linear-phase", "phase_error_deg": 0.5}`,
		`{"passband_hz": 1000, "stopband_hz": 5000, "approximation": "gaussian", "stopband_atten_db": 80}`,
		`{"passband_hz": 1000, "order": 4, "approximation": "linear-phase", "phase_error_deg": 0}`,
		`{"passband_hz": 1000, "order": 4, "approximation": "linear-phase", "phase_error_deg": 1e300}`,
		`{"passband_hz": 1000, "order": 12, "approximation": "linear-phase", "phase_error_deg": 2, "passband_ripple_db": 0.001}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := synth.ParseSpecBytes(data)
		if err != nil {
			checkFieldError(t, err)
			return
		}
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		defer cancel()
		d, err := synth.Synthesize(ctx, s)
		if err != nil {
			checkFieldError(t, err)
			return
		}
		if _, err := json.Marshal(d); err != nil {
			t.Fatalf("design of %s does not encode: %v", data, err)
		}
	})
}

func checkFieldError(t *testing.T, err error) {
	t.Helper()
	fe, ok := synth.IsFieldError(err)
	if !ok || fe.Field == "" || fe.Reason == "" {
		t.Fatalf("error %v does not name a field", err)
	}
}

// FuzzDesignFinite designs arbitrary specs and fails on a NaN or Inf
// anywhere in the design: in any float of its JSON fields (found by
// walking the Design, so that the failure names the field) and in the
// JSON itself, which encoding/json refuses to write with one (a marshal
// error is a failure too). Unlike FuzzSynthesize, whose seeds are about
// parsing, the seeds here are specs of every response and approximation
// that design (among them the order-20 elliptic bandstop with wide part
// windows whose as-built circuit is unstable), with and without a
// converter; the files under testdata/fuzz/FuzzDesignFinite are added.
// The Monte Carlo is capped at 50 trials to keep an execution short.
//
//	go test -run XXX -fuzz '^FuzzDesignFinite$' -fuzztime 3000x ./synth/
func FuzzDesignFinite(f *testing.F) {
	wide := `"resistor_range_ohm": [10, 10e6], "capacitor_range_farad": [1e-12, 1e-3]`
	conv := `"converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4}`
	for _, resp := range []struct{ kind, edges string }{
		{"lowpass", `"passband_hz": 1000, "stopband_hz": 3000`},
		{"highpass", `"passband_hz": 1000, "stopband_hz": 300`},
		{"bandpass", `"passband_hz": [900, 1100], "stopband_hz": [700, 1400]`},
		{"bandstop", `"passband_hz": [500, 2000], "stopband_hz": [800, 1250]`},
	} {
		for _, approx := range synth.Approximations {
			f.Add([]byte(fmt.Sprintf(`{"response": %q, "approximation": %q, %s, "stopband_atten_db": 20}`, resp.kind, approx, resp.edges)))
			f.Add([]byte(fmt.Sprintf(`{"response": %q, "approximation": %q, %s, "order": 4, %s}`, resp.kind, approx, resp.edges, conv)))
		}
	}
	for _, s := range []string{
		// Unstable as built: Q enhancement by the op-amps' bandwidth.
		`{"response": "bandstop", "approximation": "elliptic", "order": 20, "passband_hz": [500, 2000], "stopband_hz": [800, 1250], "passband_ripple_db": 0.5, "stopband_atten_db": 60, ` + wide + `}`,
		`{"response": "bandstop", "approximation": "elliptic", "order": 20, "passband_hz": [100, 10000], "stopband_hz": [900, 1100], "stopband_atten_db": 40, ` + wide + `}`,
		`{"response": "bandstop", "approximation": "elliptic", "order": 20, "passband_hz": [10, 1000], "stopband_hz": [50, 200], "stopband_atten_db": 80, ` + wide + `}`,
		// Even-order equiripple highpass: DC gain at the stopband level.
		`{"response": "highpass", "approximation": "elliptic", "order": 4, "passband_hz": 1000, "stopband_atten_db": 40, ` + conv + `}`,
		`{"response": "highpass", "approximation": "chebyshev2", "order": 6, "passband_hz": 1000, "stopband_atten_db": 30}`,
		`{"response": "bandpass", "approximation": "butterworth", "order": 20, "passband_hz": [1e4, 1.001e4], ` + wide + `}`,
		`{"passband_hz": 1000, "order": 20, "approximation": "elliptic", "stopband_atten_db": 120, "passband_ripple_db": 0.01, "montecarlo": {"trials": 20, "seed": 3}}`,
		`{"response": "highpass", "approximation": "bessel", "order": 1, "passband_hz": 0.01, "opamp": {"ideal": true}, ` + wide + `}`,
		// Output resistance on slow op-amps: every boundary loaded
		// (circuit.Loading), through the Monte Carlo too, stable and not.
		`{"passband_hz": 1000, "stopband_hz": 3000, "topology": "multiple-feedback", "opamp": {"gbw_hz": 1e5, "output_resistance_ohm": 500, "input_capacitance_farad": 1e-11}, "supply": {"positive_v": 5}, "montecarlo": {"trials": 20, "seed": 2}}`,
		`{"response": "bandstop", "approximation": "elliptic", "passband_hz": [500, 2000], "stopband_hz": [800, 1250], "stopband_atten_db": 60, "opamp": {"gbw_hz": 2e5, "output_resistance_ohm": 1000}, "montecarlo": {"trials": 20, "seed": 2}, ` + wide + `}`,
		// The new approximations at their extremes: order 20, the widest
		// and narrowest phase ripple, a tiny and a large Amax.
		`{"approximation": "linear-phase", "order": 20, "passband_hz": 1000, "phase_error_deg": 2}`,
		`{"approximation": "linear-phase", "order": 20, "passband_hz": 1000, "phase_error_deg": 0.01, "passband_ripple_db": 0.001}`,
		`{"response": "bandstop", "approximation": "legendre", "order": 20, "passband_hz": [500, 2000], "stopband_hz": [800, 1250], "passband_ripple_db": 0.01, ` + wide + `}`,
		`{"response": "bandpass", "approximation": "gaussian", "order": 20, "passband_hz": [900, 1100], "passband_ripple_db": 20, "stopband_atten_db": 60, ` + wide + `}`,
		// The board at its extremes: rails, every op-amp parasitic and DC
		// error at its bound, an ideal op-amp with parasitics.
		`{"response": "bandstop", "approximation": "elliptic", "order": 12, "passband_hz": [500, 2000], "stopband_hz": [800, 1250], "supply": {"positive_v": 5},
		  "opamp": {"gbw_hz": 1e6, "offset_v": 0.1, "bias_a": 1e-3, "input_capacitance_farad": 1e-9, "output_resistance_ohm": 1e4, "noise_corner_hz": 1e6}, ` + conv + `}`,
		`{"response": "highpass", "approximation": "chebyshev2", "order": 6, "passband_hz": 1000, "supply": {"positive_v": 1, "negative_v": -1},
		  "opamp": {"ideal": true, "input_capacitance_farad": 1e-9, "output_resistance_ohm": 1e4}, "signal_vpp": 200}`,
		// Differential converters: fully differential stages, and notch
		// sections built single-ended and converted at the end, on a
		// supply with every parasitic.
		`{"approximation": "butterworth", "order": 8, "passband_hz": 1000, "converter": {"bits": 24, "sample_rate_hz": 512000, "output_rate_hz": 8000, "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"}}`,
		`{"approximation": "elliptic", "order": 7, "passband_hz": 1000, "stopband_atten_db": 90, "converter": {"bits": 24, "sample_rate_hz": 512000, "output_rate_hz": 8000, "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"},
		  "supply": {"positive_v": 5}, "opamp": {"gbw_hz": 1e6, "offset_v": 1e-3, "bias_a": 1e-6, "input_capacitance_farad": 1e-11, "output_resistance_ohm": 100}, "montecarlo": {"trials": 30, "seed": 2}}`,
		`{"response": "bandstop", "approximation": "chebyshev2", "order": 6, "passband_hz": [40, 70], "stopband_hz": [48, 52], "topology": "fully-differential", ` + wide + `}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) { requireFiniteDesign(t, data) })
}

// FuzzDesignFiniteParams is FuzzDesignFinite over specs built from typed
// parameters, so that most inputs are specs that parse (byte mutations of
// JSON mostly are not): the response and approximation by index, the
// order (0: the least that meets the mask), the lower passband edge
// (0.1 Hz to 100 kHz), the band's width and the stopband's distance as
// ratios, Amax and Amin, the converter's bits (0: none), wide part
// windows or not, and the op-amp's gain-bandwidth (0: ideal; else 100 kHz
// to 100 MHz). A parameter outside its range is folded into it.
//
//	go test -run XXX -fuzz '^FuzzDesignFiniteParams$' -fuzztime 1000x ./synth/
func FuzzDesignFiniteParams(f *testing.F) {
	f.Add(uint8(3), uint8(4), uint8(20), 500.0, 4.0, 1.6, 0.5, 60.0, uint8(0), true, 10e6)
	f.Add(uint8(3), uint8(4), uint8(20), 100.0, 100.0, 9.0, 1.0, 40.0, uint8(16), true, 10e6)
	f.Add(uint8(1), uint8(4), uint8(4), 1000.0, 1.0, 3.0, 1.0, 46.0, uint8(16), false, 10e6)
	f.Add(uint8(2), uint8(1), uint8(0), 900.0, 1.22, 1.3, 1.0, 40.0, uint8(0), false, 1e6)
	f.Add(uint8(0), uint8(2), uint8(0), 1000.0, 1.0, 1.5, 0.1, 80.0, uint8(24), false, 0.0)
	f.Add(uint8(1), uint8(3), uint8(8), 0.5, 1.0, 10.0, 3.0, 20.0, uint8(12), true, 1e5)
	f.Fuzz(func(t *testing.T, resp, approx, order uint8, loHz, width, stopRatio, rippleDB, attenDB float64, bits uint8, wide bool, gbwHz float64) {
		loHz = fold(loHz, 0.1, 1e5)
		width = fold(width, 1.001, 1000)
		stopRatio = fold(stopRatio, 1.001, 100)
		rippleDB = fold(rippleDB, 0.001, 10)
		attenDB = fold(attenDB, rippleDB+0.1, 200)
		if gbwHz != 0 {
			gbwHz = fold(gbwHz, 1e5, 1e8)
		}
		responses := []string{"lowpass", "highpass", "bandpass", "bandstop"}
		approxes := synth.Approximations
		spec := map[string]any{
			"response":           responses[int(resp)%len(responses)],
			"approximation":      approxes[int(approx)%len(approxes)],
			"order":              int(order) % 21,
			"passband_ripple_db": rippleDB,
			"stopband_atten_db":  attenDB,
		}
		hi := loHz * width
		switch spec["response"] {
		case "lowpass":
			spec["passband_hz"], spec["stopband_hz"] = loHz, loHz*stopRatio
		case "highpass":
			spec["passband_hz"], spec["stopband_hz"] = loHz, loHz/stopRatio
		case "bandpass":
			spec["passband_hz"], spec["stopband_hz"] = []float64{loHz, hi}, []float64{loHz / stopRatio, hi * stopRatio}
		default:
			c := math.Sqrt(loHz * hi)
			spec["passband_hz"], spec["stopband_hz"] = []float64{loHz, hi}, []float64{c / math.Pow(width, 0.5/stopRatio), c * math.Pow(width, 0.5/stopRatio)}
		}
		if bits > 0 {
			spec["converter"] = map[string]any{"bits": int(bits)%32 + 1, "sample_rate_hz": 48000, "full_scale_vpp": 4}
		}
		if wide {
			spec["resistor_range_ohm"] = []float64{10, 10e6}
			spec["capacitor_range_farad"] = []float64{1e-12, 1e-3}
		}
		if gbwHz == 0 {
			spec["opamp"] = map[string]any{"ideal": true}
		} else {
			spec["opamp"] = map[string]any{"gbw_hz": gbwHz}
		}
		data, err := json.Marshal(spec)
		if err != nil {
			return // a NaN or Inf parameter: not a spec
		}
		requireFiniteDesign(t, data)
	})
}

// fold returns x when it is in [lo, hi], else lo + (|x| mod (hi − lo)):
// NaN for a NaN or an infinite x.
func fold(x, lo, hi float64) float64 {
	if x >= lo && x <= hi {
		return x
	}
	return lo + math.Mod(math.Abs(x), hi-lo)
}

// requireFiniteDesign designs the spec data, when it is one, and fails on
// an error that is not a spec error, a NaN or Inf anywhere in the design,
// or a design that does not encode as JSON.
func requireFiniteDesign(t *testing.T, data []byte) {
	t.Helper()
	s, err := synth.ParseSpecBytes(data)
	if err != nil {
		return
	}
	s.MonteCarlo.Trials = min(s.MonteCarlo.Trials, 50)
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	d, err := synth.Synthesize(ctx, s)
	if err != nil {
		if _, ok := synth.IsFieldError(err); !ok {
			t.Fatalf("design of %s: %v, not a spec error", data, err)
		}
		return
	}
	if path, ok := nonFinite(reflect.ValueOf(d), "design"); ok {
		t.Fatalf("design of %s: %s is not finite", data, path)
	}
	if _, err := json.Marshal(d); err != nil {
		t.Fatalf("design of %s does not encode: %v", data, err)
	}
}

// nonFinite returns the path of the first NaN or Inf float in v, walking
// pointers, interfaces, slices, arrays, maps and the exported fields of
// structs that JSON encodes (not those tagged "-").
func nonFinite(v reflect.Value, path string) (string, bool) {
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		if x := v.Float(); math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Sprintf("%s = %v", path, x), true
		}
	case reflect.Complex64, reflect.Complex128:
		if x := v.Complex(); math.IsNaN(real(x)) || math.IsInf(real(x), 0) || math.IsNaN(imag(x)) || math.IsInf(imag(x), 0) {
			return fmt.Sprintf("%s = %v", path, x), true
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			return nonFinite(v.Elem(), path)
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			if p, ok := nonFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i)); ok {
				return p, true
			}
		}
	case reflect.Map:
		it := v.MapRange()
		for it.Next() {
			if p, ok := nonFinite(it.Value(), fmt.Sprintf("%s[%v]", path, it.Key())); ok {
				return p, true
			}
		}
	case reflect.Struct:
		ty := v.Type()
		for i := range ty.NumField() {
			fl := ty.Field(i)
			if !fl.IsExported() || fl.Tag.Get("json") == "-" {
				continue
			}
			if p, ok := nonFinite(v.Field(i), path+"."+fl.Name); ok {
				return p, true
			}
		}
	}
	return "", false
}
