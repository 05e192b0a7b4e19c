package topology_test

import (
	"math"
	"testing"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// BenchmarkRealize times the whole part-value search (with its closed-form
// analysis) for the sections of one filter, per filter.
func BenchmarkRealize(b *testing.B) {
	qs := butterworthQ(4) // 0.541, 1.307
	bw4 := []section.Section{lp2(1000, qs[0], 1), lp2(1000, qs[1], 1)}
	cheb8 := chebyshevPairs(8, 0.5, 1000)
	// Four pole pairs with jω-axis zeros, as an 8th-order elliptic
	// lowpass has: every one a state-variable stage with its summer.
	var notch8 []section.Section
	for i, s := range cheb8 {
		notch8 = append(notch8, notch2(s.OmegaRadPerSec()/(2*math.Pi), s.Q(), 1000*(1.3+0.7*float64(i)), 1))
	}
	opt := topology.DefaultOptions()
	exact := opt
	exact.Exact = true
	cases := []struct {
		name string
		secs []section.Section
		top  string
		opt  topology.Options
	}{
		{"butterworth4/auto", bw4, topology.Auto, opt},
		{"butterworth4/auto-exact", bw4, topology.Auto, exact},
		{"chebyshev8/auto", cheb8, topology.Auto, opt},
		{"chebyshev8/multiple-feedback", cheb8, topology.MultipleFeedback, opt},
		{"chebyshev8/state-variable", cheb8, topology.StateVariable, opt},
		{"lowpass-notch8/auto", notch8, topology.Auto, opt},
		{"lowpass-notch8/state-variable", notch8, topology.StateVariable, opt},
		{"lowpass-notch8/two-integrator-notch", notch8, topology.TwoIntegratorNotch, opt},
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				for _, s := range c.secs {
					if _, err := topology.Realize(s, c.top, c.opt); err != nil {
						b.Fatal(err)
					}
				}
			}
		})
	}
}
