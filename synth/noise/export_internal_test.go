package noise

import "github.com/polewright/polewright/synth/circuit"

// FoldedPower exposes, to the tests of package noise_test, the folded
// power [OutputSampled] integrates before it finds the limit: band 0, the
// bands and the comb to the cap with the comb's correction, and the
// estimate beyond the cap; withoutCorr is the same without the comb's
// Euler–Maclaurin correction.
func FoldedPower(ch circuit.Chain, on OpAmpNoise, tempK float64, s Sampling) (total, withoutCorr float64, err error) {
	a, err := newAnalysis(ch, on, tempK)
	if err != nil {
		return 0, 0, err
	}
	band0, _, err := a.integrate(0, s.OutputRateHz/2)
	if err != nil {
		return 0, 0, err
	}
	fd, err := a.fold(s.SampleRateHz, s.OutputRateHz, band0)
	if err != nil {
		return 0, 0, err
	}
	total = fd.toCap() + fd.beyond
	return total, total - fd.corr, nil
}
