package synth_test

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
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
