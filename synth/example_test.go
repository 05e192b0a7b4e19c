package synth_test

import (
	"context"
	"fmt"
	"strings"

	"github.com/polewright/polewright/synth"
)

// A 1 kHz Chebyshev I lowpass with 0.5 dB ripple that must be 50 dB down
// at 3 kHz: the lowest order, and its sections in signal order (the same
// f0 and Q as the poles of scipy.signal.cheby1(5, 0.5, 2π·1000, analog=True)).
func ExampleSynthesize() {
	spec, err := synth.ParseSpec(strings.NewReader(`{"approximation": "chebyshev1",
		"passband_hz": 1000, "stopband_hz": 3000, "passband_ripple_db": 0.5, "stopband_atten_db": 50}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := synth.Synthesize(context.Background(), spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("order", d.Order, "meets mask", d.MeetsMask)
	for _, s := range d.Sections {
		q := "-"
		if s.Q != nil {
			q = fmt.Sprintf("%.4g", *s.Q)
		}
		fmt.Printf("%d %-8s f0 %.4g Hz  Q %s\n", s.Order, s.Kind, s.F0Hz, q)
	}
	// Output:
	// order 5 meets mask true
	// 1 lowpass  f0 362.3 Hz  Q -
	// 2 lowpass  f0 690.5 Hz  Q 1.178
	// 2 lowpass  f0 1018 Hz  Q 4.545
}

// A spec that cannot be built names the field and the reason.
func ExampleParseSpec() {
	_, err := synth.ParseSpec(strings.NewReader(`{"passband_hz": 1000, "stopband_hz": 800}`))
	fmt.Println(err)
	// Output:
	// spec: stopband_hz: must be above passband_hz for a lowpass (got 800 <= 1000)
}
