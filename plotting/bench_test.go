package plotting_test

import (
	"context"
	"io"
	"strings"
	"testing"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/synth"
)

// BenchmarkPlots draws the plots of an 8th-order design (a Chebyshev
// lowpass and a 2×4-pole elliptic bandpass), with the as-built curves when
// synth maps the design onto circuits. The result page shows all four
// ("all"; "all-but-passband" is the three it showed before the passband
// plot, for comparison).
func BenchmarkPlots(b *testing.B) {
	specs := []struct{ name, json string }{
		{"chebyshev1-lowpass-8", `{"approximation": "chebyshev1", "passband_hz": 1000, "order": 8, "passband_ripple_db": 0.5}`},
		{"elliptic-bandpass-8", `{"response": "bandpass", "approximation": "elliptic", "passband_hz": [900, 1100], "order": 4, "passband_ripple_db": 0.5, "stopband_atten_db": 50}`},
	}
	for _, sp := range specs {
		s, err := synth.ParseSpec(strings.NewReader(sp.json))
		if err != nil {
			b.Fatal(err)
		}
		d, err := synth.Synthesize(context.Background(), s)
		if err != nil {
			b.Fatal(err)
		}
		plots := []struct {
			name string
			fn   func(io.Writer, *synth.Design, plotting.Options) error
		}{{"bode", plotting.Bode}, {"delay", plotting.GroupDelay}, {"step", plotting.Step}, {"passband", plotting.Passband}}
		for _, pl := range plots {
			b.Run(sp.name+"/"+pl.name, func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if err := pl.fn(io.Discard, d, plotting.Options{}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
		for _, set := range []struct {
			name string
			n    int
		}{{"all", len(plots)}, {"all-but-passband", 3}} {
			b.Run(sp.name+"/"+set.name, func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					for _, pl := range plots[:set.n] {
						if err := pl.fn(io.Discard, d, plotting.Options{}); err != nil {
							b.Fatal(err)
						}
					}
				}
			})
		}
	}
}
