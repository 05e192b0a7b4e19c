package noise

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// Sampled-noise limits (see the package documentation, # Sampling).
const (
	// SampledRestFrac is the share of the sampled noise power that may be
	// left out above [Sampled].LimitHz: 0.1 % (INTERFACE.md).
	SampledRestFrac = 1e-3
	// SampledCapFactor bounds the sampled integral: it runs at most to
	// SampledCapFactor times the larger of the sample rate and the
	// chain's highest pole frequency (which, with single-pole op-amps,
	// includes the op-amps' closed-loop poles).
	SampledCapFactor = 1e4
	// minExactBands is the least number of bands (band 0 included)
	// integrated one by one; above them the folded density is integrated
	// as a comb average.
	minExactBands = 8
	// maxExactBands bounds the bands integrated one by one.
	maxExactBands = 256
	// sharpDampingHz: a pole whose damping −Re(p)/2π is below
	// sharpDampingHz times the sample rate makes features too narrow for
	// the comb average; the bands up to it (and minExactBands − 1 more)
	// are integrated one by one.
	sharpDampingHz = 2
	// combCorrMax bounds the comb's Euler–Maclaurin correction relative
	// to the comb: beyond it the density falls too fast for the expansion
	// (and the comb is negligible), and the correction is left out.
	combCorrMax = 0.1
	// tailMinSlope is the least fall of the density, as the exponent m of
	// f^−m, at which the tail beyond the cap is taken as finite.
	tailMinSlope = 1.5
)

// Sampling is how a converter samples the filter's output: at
// SampleRateHz (fs, the rate at which it samples its analog input, the
// modulator rate of an oversampling converter), giving output words at
// OutputRateHz (fout).
type Sampling struct {
	// SampleRateHz is fs in Hz, finite and > 0.
	SampleRateHz float64
	// OutputRateHz is fout in Hz, 0 < fout ≤ fs; 0 selects SampleRateHz.
	OutputRateHz float64
}

// Sampled is the noise a converter's output words carry: every frequency
// that sampling at fs folds into [0, fout/2].
type Sampled struct {
	// RMSV is the folded noise in V rms, integrated up to LimitHz.
	RMSV float64
	// LimitHz is the highest frequency integrated: what lies above it is
	// under [SampledRestFrac] of the total, or, when Capped, the cap.
	LimitHz float64
	// Capped reports that the density does not fall fast enough for the
	// integral to converge by the cap ([SampledCapFactor]): ideal op-amps
	// whose output noise stays flat at high frequency (a highpass, a
	// bandstop, or a stage whose noise gain stays above zero). RMSV is
	// then the noise up to the cap, LimitHz.
	Capped bool
}

// OutputSampled is [Output] with, in Result.Sampled, the noise the
// converter's output words carry. The density at every f that sampling
// at fs aliases into [0, fout/2] (|f − k·fs| ≤ fout/2 for some k ≥ 0)
// reaches the output words, so the folded power is
//
//	Σ_k ∫ S(f) df over [k·fs − fout/2, k·fs + fout/2] ∩ [0, ∞),
//
// every frequency from 0 Hz when fout = fs. It is integrated band by band
// until what is left is under [SampledRestFrac] of the total (see the
// package documentation, # Sampling). Band 0, [0, fout/2], is bandHz's
// integral when bandHz is [0, fout/2].
//
// It returns an error wrapping [ErrInvalid] for a sampling that is not
// 0 < fout ≤ fs, finite, as well as [Output]'s errors.
func OutputSampled(ch circuit.Chain, on OpAmpNoise, tempK float64, freqHz []float64, bandHz [2]float64, s Sampling) (Result, error) {
	fs, fout := s.SampleRateHz, s.OutputRateHz
	if fout == 0 {
		fout = fs
	}
	if !(fs > 0) || math.IsInf(fs, 1) {
		return Result{}, invalidf("sample rate %v Hz is not finite and > 0", s.SampleRateHz)
	}
	if !(fout > 0) || fout > fs {
		return Result{}, invalidf("output rate %v Hz is not in (0, %v] (the sample rate)", s.OutputRateHz, fs)
	}
	res, a, power, err := output(ch, on, tempK, freqHz, bandHz)
	if err != nil {
		return Result{}, err
	}
	band0 := power
	if bandHz != [2]float64{0, fout / 2} {
		if band0, _, err = a.integrate(0, fout/2); err != nil {
			return Result{}, err
		}
	}
	sm, err := a.sampled(fs, fout, band0)
	if err != nil {
		return Result{}, err
	}
	res.Sampled = &sm
	return res, nil
}

// folded is the folded density above band 0, integrated to the cap.
type folded struct {
	q      *quad
	band0  float64 // band 0's power
	corr   float64 // the comb's Euler–Maclaurin correction
	beyond float64 // the estimate above the cap, +Inf when it diverges
	capHz  float64
	h      float64 // fout/2
}

// toCap returns the folded power from 0 Hz to the cap.
func (fd *folded) toCap() float64 {
	pool, _ := fd.q.sum()
	return fd.band0 + pool + fd.corr
}

// fold integrates the folded density above band 0 (whose power is band0)
// to the cap: bands 1 to exactBands − 1 one by one, then the comb average
// of the rest (see the package documentation, # Sampling), and estimates
// what lies beyond the cap.
func (a *analysis) fold(fs, fout, band0 float64) (*folded, error) {
	fd := &folded{band0: band0, h: fout / 2}
	top := fs
	for _, f := range a.poleHz {
		top = math.Max(top, f)
	}
	fd.capHz = SampledCapFactor * top
	eval := func(f float64, _ []float64) (float64, error) { return a.psd(f, a.scratch) }
	q := a.newQuad(0, eval)
	q.nodes = true
	fd.q = q
	w := 1.0 // the comb's weight
	if fout < fs {
		n := a.exactBands(fs)
		for k := 1; k < n; k++ {
			c := float64(k) * fs
			if err := q.add(c-fd.h, c+fd.h, 1); err != nil {
				return nil, err
			}
		}
		w = fout / fs
		start := (float64(n) - 0.5) * fs
		if err := q.add(start, fd.capHz, w); err != nil {
			return nil, err
		}
		lo, err := eval(start-fd.h, nil)
		if err != nil {
			return nil, err
		}
		hi, err := eval(start+fd.h, nil)
		if err != nil {
			return nil, err
		}
		fd.corr = (hi - lo) * (fs*fs - fout*fout) / (24 * fs)
	} else if err := q.add(fd.h, fd.capHz, 1); err != nil {
		return nil, err
	}
	if err := q.refine(band0); err != nil {
		return nil, err
	}
	var comb float64
	for _, p := range q.panels {
		if p.w < 1 {
			comb += p.k
		}
	}
	if !(math.Abs(fd.corr) <= combCorrMax*comb) {
		fd.corr = 0 // the density falls too fast for the expansion, and the comb is negligible
	}
	// Beyond the cap the density falls as f^−m (the local slope between
	// cap/2 and cap): ∫ S over [cap, ∞) = S(cap)·cap/(m − 1) for m > 1.
	s1, err := eval(fd.capHz/2, nil)
	if err != nil {
		return nil, err
	}
	s2, err := eval(fd.capHz, nil)
	if err != nil {
		return nil, err
	}
	if s2 > 0 {
		if m := math.Log2(s1 / s2); m >= tailMinSlope {
			fd.beyond = w * s2 * fd.capHz / (m - 1)
		} else {
			fd.beyond = math.Inf(1)
		}
	}
	return fd, nil
}

// sampled integrates the folded density above band 0 (whose power is
// band0) and finds the limit: it leaves out the highest panels, and then
// the highest nodes' terms of the highest panel kept, while what is left
// out, the estimate beyond the cap included, stays under SampledRestFrac
// of the total. The limit is the top of the last node's share of its
// panel (the nodes' cumulative weights split a panel into cells around
// each node), which places it within a fifth of a panel's width at worst.
func (a *analysis) sampled(fs, fout, band0 float64) (Sampled, error) {
	fd, err := a.fold(fs, fout, band0)
	if err != nil {
		return Sampled{}, err
	}
	toCap := fd.toCap()
	if math.IsInf(fd.beyond, 1) || fd.beyond > SampledRestFrac*(toCap+fd.beyond) {
		return Sampled{RMSV: math.Sqrt(toCap), LimitHz: fd.capHz, Capped: true}, nil
	}
	panels := fd.q.panels
	slices.SortFunc(panels, func(x, y panel) int { return cmp.Compare(x.a, y.a) })
	total := toCap + fd.beyond
	budget := SampledRestFrac * total
	rest, n := fd.beyond, len(panels)
	for n > 0 {
		d := panels[n-1].k
		if panels[n-1].w < 1 && (n == 1 || panels[n-2].w == 1) {
			d += fd.corr // the comb's lowest panel carries its correction
		}
		if rest+d > budget {
			break
		}
		rest += d
		n--
	}
	if n == 0 {
		return Sampled{RMSV: math.Sqrt(fd.band0), LimitHz: fd.h}, nil
	}
	p := panels[n-1]
	cum := 2.0 // the Kronrod weights sum to 2 on [−1, 1]
	for i := 14; i > 0 && rest+p.node[i] <= budget; i-- {
		rest += p.node[i]
		cum -= kronrodWeight(i)
	}
	limit := math.Exp(p.a + (p.b-p.a)/2*cum)
	return Sampled{RMSV: math.Sqrt(math.Max(total-rest, 0)), LimitHz: limit}, nil
}

// exactBands returns the number of bands, band 0 included, to integrate
// one by one at the sample rate fs: minExactBands, plus the bands up to
// the highest pole whose damping is below sharpDampingHz·fs, at most
// maxExactBands.
func (a *analysis) exactBands(fs float64) int {
	var top float64
	for _, p := range a.poles {
		if -real(p)/(2*math.Pi) < sharpDampingHz*fs {
			top = math.Max(top, cmplx.Abs(p)/(2*math.Pi))
		}
	}
	return min(maxExactBands, minExactBands+int(math.Ceil(top/fs)))
}
