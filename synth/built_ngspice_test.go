package synth_test

import (
	"bytes"
	"cmp"
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// This file checks the verdicts on the board as built (design.built,
// components[].fail_at_pct, the alias band) against the ngspice simulator
// (Debian package ngspice): the exported SPICE deck is run with dense .ac
// sweeps over every band of the mask, and the acceptance rule of
// INTERFACE.md ("Verdicts on the board as built") is applied here, to
// ngspice's data, by code written from the contract's text and nothing of
// package accept.

// ruleBand is a closed frequency interval [lo, hi] in Hz.
type ruleBand struct{ lo, hi float64 }

// ruleMask is the acceptance rule of INTERFACE.md for one spec: the bands
// as the contract lists them (lowpass passband [0, fp], stopband
// [fs_edge, 100·fs_edge]; highpass passband [fp, 100·fp], stopband
// [0, fs_edge]; bandpass passband [p0, p1], stopband [0, s0] ∪
// [s1, 100·s1]; bandstop passband [0, p0] ∪ [p1, 100·p1], stopband
// [s0, s1]; alias band |f − k·fs| ≤ the passband's upper edge, k ≥ 1, up to
// 100·fs), Amax, Amin and the alias attenuation as the spec gives them
// (never the design margin's), and the gain rule.
type ruleMask struct {
	pass, stop, alias []ruleBand
	amax, amin        float64
	aliasAttenDB      float64
	gainDB, gainTolDB float64 // gainTolDB 0: the gain is not judged
}

func ruleMaskOf(s synth.Spec) ruleMask {
	p, st := s.PassbandHz, s.StopbandHz
	m := ruleMask{amax: s.PassbandRippleDB, amin: s.StopbandAttenDB, gainDB: s.GainDB}
	if s.GainToleranceDB != nil {
		m.gainTolDB = *s.GainToleranceDB
	}
	hasStop := len(st) > 0
	switch s.Response {
	case synth.Lowpass:
		m.pass = []ruleBand{{0, p[0]}}
		if hasStop {
			m.stop = []ruleBand{{st[0], 100 * st[0]}}
		}
	case synth.Highpass:
		m.pass = []ruleBand{{p[0], 100 * p[0]}}
		if hasStop {
			m.stop = []ruleBand{{0, st[0]}}
		}
	case synth.Bandpass:
		m.pass = []ruleBand{{p[0], p[1]}}
		if hasStop {
			m.stop = []ruleBand{{0, st[0]}, {st[1], 100 * st[1]}}
		}
	case synth.Bandstop:
		m.pass = []ruleBand{{0, p[0]}, {p[1], 100 * p[1]}}
		if hasStop {
			m.stop = []ruleBand{{st[0], st[1]}}
		}
	}
	// The alias band needs a passband upper edge: lowpass and bandpass.
	if c := s.Converter; c != nil && (s.Response == synth.Lowpass || s.Response == synth.Bandpass) {
		m.alias = aliasIntervals(c.SampleRateHz, p[len(p)-1], math.MaxInt)
		m.aliasAttenDB = c.AliasAttenDB
	}
	return m
}

// aliasIntervals returns the first at most n intervals
// [k·fs − top, k·fs + top], k = 1, 2, …, of the alias band, cut at 100·fs.
func aliasIntervals(fs, top float64, n int) []ruleBand {
	var out []ruleBand
	for k := 1; k <= n && float64(k)*fs-top <= 100*fs; k++ {
		out = append(out, ruleBand{float64(k)*fs - top, math.Min(float64(k)*fs+top, 100*fs)})
	}
	return out
}

// ruleFigures are the acceptance rule's figures of one response.
type ruleFigures struct {
	passMax, passMin      float64
	stopWorst, aliasWorst float64 // −Inf without the band
	margin                float64 // the smallest margin of the rule; ≥ 0 passes
	meets                 bool
}

// spiceData is an AC response sampled by ngspice: frequencies ascending,
// magnitudes in dB.
type spiceData struct{ f, db []float64 }

// in returns the indices of the samples inside b. Band edges come back from
// ngspice within a few ulps of what the deck asked for, hence the
// relative slack of 1e-12.
func (d spiceData) in(b ruleBand) []int {
	lo, hi := b.lo*(1-1e-12), b.hi*(1+1e-12)
	i0 := sort.SearchFloat64s(d.f, lo)
	var idx []int
	for i := i0; i < len(d.f) && d.f[i] <= hi; i++ {
		idx = append(idx, i)
	}
	return idx
}

// extreme returns the largest (sign +1) or smallest (sign −1) sample over
// the bands; −Inf·sign when the bands hold no sample.
func (d spiceData) extreme(bands []ruleBand, sign float64) float64 {
	v := math.Inf(-int(sign))
	for _, b := range bands {
		for _, i := range d.in(b) {
			if sign*d.db[i] > sign*v {
				v = d.db[i]
			}
		}
	}
	return v
}

// figures applies the acceptance rule to the samples.
func (m ruleMask) figures(d spiceData) ruleFigures {
	r := ruleFigures{
		passMax: d.extreme(m.pass, 1), passMin: d.extreme(m.pass, -1),
		stopWorst: d.extreme(m.stop, 1), aliasWorst: d.extreme(m.alias, 1),
	}
	r.margin = m.amax - (r.passMax - r.passMin)
	if len(m.stop) > 0 {
		r.margin = math.Min(r.margin, r.passMax-r.stopWorst-m.amin)
	}
	if len(m.alias) > 0 {
		r.margin = math.Min(r.margin, r.passMax-r.aliasWorst-m.aliasAttenDB)
	}
	if m.gainTolDB > 0 {
		r.margin = math.Min(r.margin, m.gainTolDB-math.Abs(r.passMax-m.gainDB))
	}
	r.meets = r.margin >= 0
	return r
}

// acSweep is one ngspice `ac` command: `ac lin n lo hi` or `ac dec n lo hi`.
type acSweep struct {
	kind   string // "lin" or "dec"
	n      int
	lo, hi float64
}

func (s acSweep) String() string {
	num := func(v float64) string { return strconv.FormatFloat(v, 'e', -1, 64) }
	return fmt.Sprintf("ac %s %d %s %s", s.kind, s.n, num(s.lo), num(s.hi))
}

// coarsePerDecade is the density of the first (coarse) pass over every
// band; zoomPoints the number of points of each zoom pass's `ac lin` sweep
// across the two sample intervals around a candidate extreme: after the
// coarse pass a spacing of 2·ln(10)/1000/200 ≈ 2.3e-5 relative (some 10⁵
// points per decade), after the second zoom ≈ 2.3e-7.
const (
	coarsePerDecade = 1000
	zoomPoints      = 201
	// dcDecadesHere is how far below its upper edge a band that starts at
	// 0 Hz is swept on the log grid (0 Hz itself is an `ac lin` point).
	dcDecadesHere = 6
	// zoomWithinDB: local extremes of the first pass within this of the
	// band kind's extreme are zoomed (a peak between coarse points rises
	// above them by far less: 0.06 dB for Q = 100 at 1000 points per
	// decade).
	zoomWithinDB = 1
	// flatDB: a local extreme whose neighbours are this close is on a flat
	// stretch (a passband near DC), where zooming gains nothing.
	flatDB = 1e-7
	// maxZooms caps the zooms per band kind (the largest extremes first).
	maxZooms = 300
)

// coarseSweeps returns the first pass: every band at coarsePerDecade on a
// log grid plus both its edges exactly (`ac lin 2 lo hi`, which also puts
// 0 Hz on the grid of a band that starts there).
func (m ruleMask) coarseSweeps() []acSweep {
	var out []acSweep
	for _, bs := range [][]ruleBand{m.pass, m.stop, m.alias} {
		for _, b := range bs {
			out = append(out, acSweep{"lin", 2, b.lo, b.hi})
			lo := b.lo
			if lo <= 0 {
				lo = b.hi * math.Pow(10, -dcDecadesHere)
			}
			if coarsePerDecade*math.Log10(b.hi/lo) >= 10 {
				out = append(out, acSweep{"dec", coarsePerDecade, lo, b.hi})
				continue
			}
			// A narrow band (an alias interval far up) is swept linearly, at
			// least as densely as the log grid at its lower edge: ngspice-39
			// never returns from an `ac dec` sweep shorter than one of its
			// steps.
			n := max(3, int(math.Ceil(coarsePerDecade*(b.hi-lo)/(lo*math.Ln10)))+1)
			out = append(out, acSweep{"lin", n, lo, b.hi})
		}
	}
	return out
}

// zoomSweeps returns a zoom pass: an `ac lin` sweep across the two
// neighbouring samples of every local extreme (maxima for the passband maximum, the
// stopband and the alias band, minima for the passband minimum) within
// zoomWithinDB of its kind's extreme.
func (m ruleMask) zoomSweeps(d spiceData) []acSweep {
	var out []acSweep
	for _, k := range []struct {
		bands []ruleBand
		sign  float64
	}{{m.pass, 1}, {m.pass, -1}, {m.stop, 1}, {m.alias, 1}} {
		ext := d.extreme(k.bands, k.sign)
		type cand struct {
			v  float64
			sw acSweep
		}
		var cands []cand
		for _, b := range k.bands {
			idx := d.in(b)
			for j, i := range idx {
				v := k.sign * d.db[i]
				if v < k.sign*ext-zoomWithinDB {
					continue
				}
				lo, hi := i, i
				if j > 0 {
					lo = idx[j-1]
					if k.sign*d.db[lo] > v {
						continue
					}
				}
				if j < len(idx)-1 {
					hi = idx[j+1]
					if k.sign*d.db[hi] > v {
						continue
					}
				}
				if math.Abs(d.db[lo]-d.db[i]) < flatDB && math.Abs(d.db[hi]-d.db[i]) < flatDB {
					continue
				}
				if !(d.f[hi] > d.f[lo]) {
					continue
				}
				cands = append(cands, cand{v, acSweep{"lin", zoomPoints, d.f[lo], d.f[hi]}})
			}
		}
		slices.SortFunc(cands, func(a, b cand) int { return cmp.Compare(b.v, a.v) })
		for i, c := range cands {
			if i == maxZooms {
				break
			}
			out = append(out, c.sw)
		}
	}
	return out
}

// deckOf returns the design's SPICE deck from Chain.WriteSPICE, the writer
// behind `polewright export -as spice` (which adds op-amp noise sources
// that carry no signal, and analyses that withSweeps replaces anyway).
func deckOf(t *testing.T, d *synth.Design) []byte {
	t.Helper()
	ch, err := d.Chain()
	require.NoError(t, err)
	var deck bytes.Buffer
	require.NoError(t, ch.WriteSPICE(&deck, circuit.SpiceOptions{Title: "polewright verdict check"}))
	return deck.Bytes()
}

// withSweeps replaces the deck's own analysis (its .ac line and .control
// block) by the sweeps, each appended to one data file (ngspice's
// appendwrite), and keeps every element line as exported.
func withSweeps(deck []byte, sweeps []acSweep) []byte {
	var b bytes.Buffer
	for _, line := range strings.Split(string(deck), "\n") {
		l := strings.ToLower(strings.TrimSpace(line))
		if strings.HasPrefix(l, ".ac ") || strings.HasPrefix(l, ".control") {
			break
		}
		b.WriteString(line)
		b.WriteByte('\n')
	}
	b.WriteString(".control\nset wr_singlescale\nset numdgt=15\nset appendwrite\n")
	for _, s := range sweeps {
		fmt.Fprintf(&b, "%s\nwrdata rule.data v(out)\n", s)
	}
	b.WriteString("quit\n.endc\n.end\n")
	return b.Bytes()
}

// withPart returns the deck with the value of the element ref (a resistor
// or capacitor line "REF node node value") set to value.
func withPart(t *testing.T, deck []byte, ref string, value float64) []byte {
	t.Helper()
	lines := strings.Split(string(deck), "\n")
	found := 0
	for i, line := range lines {
		f := strings.Fields(line)
		if len(f) == 4 && f[0] == ref {
			f[3] = strconv.FormatFloat(value, 'e', -1, 64)
			lines[i] = strings.Join(f, " ")
			found++
		}
	}
	require.Equal(t, 1, found, "element %s in the deck", ref)
	return []byte(strings.Join(lines, "\n"))
}

// partValue returns the value of the element ref in the deck.
func partValue(t *testing.T, deck []byte, ref string) float64 {
	t.Helper()
	for _, line := range strings.Split(string(deck), "\n") {
		f := strings.Fields(line)
		if len(f) == 4 && f[0] == ref {
			v, err := strconv.ParseFloat(f[3], 64)
			require.NoError(t, err)
			return v
		}
	}
	t.Fatalf("element %s is not in the deck", ref)
	return 0
}

// runSweeps runs the deck with the sweeps in ngspice and returns the
// samples, sorted by frequency.
func runSweeps(ctx context.Context, t *testing.T, deck []byte, sweeps []acSweep) spiceData {
	t.Helper()
	full := withSweeps(deck, sweeps)
	freq, v, err := spicerun.RunDir(ctx, t.TempDir(), full)
	require.NoError(t, err, "deck of %d bytes", len(full))
	db := make([]float64, len(v))
	for i := range v {
		db[i] = 20 * math.Log10(cmplx.Abs(v[i]))
	}
	return sortedData(freq, db)
}

// sortedData returns the samples sorted by frequency, each frequency once
// (a band edge is swept twice).
func sortedData(f, db []float64) spiceData {
	idx := make([]int, len(f))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(f[a], f[b]) })
	var d spiceData
	for _, i := range idx {
		if n := len(d.f); n > 0 && d.f[n-1] == f[i] {
			continue
		}
		d.f, d.db = append(d.f, f[i]), append(d.db, db[i])
	}
	return d
}

// zoomPasses is the number of zoom passes after the coarse one: each
// narrows the sampling around every candidate extreme by about 100 (a
// spacing near 2e-7 relative after two, where a peak of Q = 100 lies
// within 1e-8 dB of its samples).
const zoomPasses = 2

// spiceFigures runs the deck in ngspice 1 + zoomPasses times — the coarse
// pass over every band, then the zooms around its extremes — and applies
// the acceptance rule to all the samples.
func spiceFigures(ctx context.Context, t *testing.T, deck []byte, m ruleMask) ruleFigures {
	t.Helper()
	all := runSweeps(ctx, t, deck, m.coarseSweeps())
	for range zoomPasses {
		zooms := m.zoomSweeps(all)
		if len(zooms) == 0 {
			break
		}
		all = mergeData(all, runSweeps(ctx, t, deck, zooms))
	}
	return m.figures(all)
}

// mergeData returns the samples of a and b together.
func mergeData(a, b spiceData) spiceData {
	return sortedData(slices.Concat(a.f, b.f), slices.Concat(a.db, b.db))
}

// worstDiff collects the largest |ngspice − polewright| per quantity over a
// test's subtests, for the log.
type worstDiff struct {
	mu    sync.Mutex
	worst map[string]float64
	where map[string]string
	count map[string]int
}

func newWorstDiff() *worstDiff {
	return &worstDiff{worst: map[string]float64{}, where: map[string]string{}, count: map[string]int{}}
}

func (w *worstDiff) add(quantity, name string, diff float64) {
	w.mu.Lock()
	defer w.mu.Unlock()
	w.count[quantity]++
	if d := math.Abs(diff); d >= w.worst[quantity] {
		w.worst[quantity], w.where[quantity] = d, name
	}
}

func (w *worstDiff) tally(key string) {
	w.mu.Lock()
	defer w.mu.Unlock()
	w.count[key]++
}

func (w *worstDiff) log(t *testing.T) {
	w.mu.Lock()
	defer w.mu.Unlock()
	keys := make([]string, 0, len(w.count))
	for k := range w.count {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if _, ok := w.worst[k]; ok {
			t.Logf("%-22s worst |ngspice − polewright| %.3g dB over %d designs (%s)", k, w.worst[k], w.count[k], w.where[k])
		} else {
			t.Logf("%-22s %d", k, w.count[k])
		}
	}
}

// builtCase is a design whose as-built verdict is checked against ngspice.
type builtCase struct {
	name string
	spec string // spec JSON, as a user writes it
}

// builtCases cover every response (lowpass, highpass, bandpass, bandstop),
// every topology asked for by name and auto with notch sections, E96 and
// E24 resistors, finite-GBW op-amps, converters, and boards that pass and
// fail as built. Designs to pass carry a design_margin.
func builtCases() []builtCase {
	return []builtCase{
		// Lowpass.
		{"lp-butter-sk-e96-margin", `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 3000, "passband_ripple_db": 1, "stopband_atten_db": 40,
			"topology": "sallen-key", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"lp-cheb1-sk-1mhz-fails", `{"response": "lowpass", "approximation": "chebyshev1", "passband_hz": 10000, "stopband_hz": 20000, "order": 6, "passband_ripple_db": 0.5, "stopband_atten_db": 30,
			"topology": "sallen-key", "opamp": {"gbw_hz": 1e6}}`},
		{"lp-cheb1-mfb-e24-converter", `{"response": "lowpass", "approximation": "chebyshev1", "passband_hz": 4000, "passband_ripple_db": 0.5,
			"topology": "multiple-feedback", "resistor_series": "E24", "converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 4},
			"design_margin": {"passband_db": 0.2, "stopband_db": 3}}`},
		{"lp-ellip-auto-notch-margin", `{"response": "lowpass", "approximation": "elliptic", "passband_hz": 3400, "stopband_hz": 4600, "passband_ripple_db": 0.2, "stopband_atten_db": 50,
			"design_margin": {"passband_db": 0.15, "stopband_db": 2}}`},
		{"lp-ellip-sv-converter", `{"response": "lowpass", "approximation": "elliptic", "passband_hz": 20000, "passband_ripple_db": 0.1,
			"topology": "state-variable", "opamp": {"gbw_hz": 20e6}, "converter": {"bits": 16, "sample_rate_hz": 192000, "full_scale_vpp": 4},
			"design_margin": {"passband_db": 0.05, "stopband_db": 3}}`},
		{"lp-cheb2-auto-e24-fails", `{"response": "lowpass", "approximation": "chebyshev2", "passband_hz": 2000, "stopband_hz": 3000, "passband_ripple_db": 0.5, "stopband_atten_db": 60,
			"resistor_series": "E24", "opamp": {"gbw_hz": 2e6}}`},
		{"lp-bessel-sk-e24", `{"response": "lowpass", "approximation": "bessel", "passband_hz": 1000, "stopband_hz": 5000, "stopband_atten_db": 30,
			"topology": "sallen-key", "resistor_series": "E24", "design_margin": {"stopband_db": 2}}`},
		{"lp-legendre-sk-e24", `{"response": "lowpass", "approximation": "legendre", "passband_hz": 1000, "stopband_hz": 2500, "passband_ripple_db": 1, "stopband_atten_db": 40,
			"topology": "sallen-key", "resistor_series": "E24", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"lp-gaussian-mfb", `{"response": "lowpass", "approximation": "gaussian", "passband_hz": 2000, "stopband_hz": 8000, "stopband_atten_db": 30,
			"topology": "multiple-feedback", "design_margin": {"stopband_db": 2}}`},
		{"lp-linphase-auto-converter", `{"response": "lowpass", "approximation": "linear-phase", "phase_error_deg": 0.5, "passband_hz": 5000, "order": 7,
			"converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 4}}`},
		{"hp-legendre-sv", `{"response": "highpass", "approximation": "legendre", "passband_hz": 1000, "stopband_hz": 400, "passband_ripple_db": 0.5, "stopband_atten_db": 40,
			"topology": "state-variable"}`},
		{"lp-butter-sk-oversampling", `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.5,
			"topology": "sallen-key", "converter": {"bits": 16, "sample_rate_hz": 3072000, "full_scale_vpp": 4, "output_rate_hz": 48000},
			"design_margin": {"passband_db": 0.2, "stopband_db": 3}}`},
		{"lp-butter-sk-alias-fails", `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 3000, "stopband_atten_db": 40,
			"topology": "sallen-key", "converter": {"bits": 12, "sample_rate_hz": 5000, "full_scale_vpp": 4}, "design_margin": {"passband_db": 0.3}}`},
		// Highpass.
		{"hp-butter-sk-e24-margin", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 500, "stopband_hz": 100, "stopband_atten_db": 50,
			"topology": "sallen-key", "resistor_series": "E24", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"hp-cheb1-mfb-margin", `{"response": "highpass", "approximation": "chebyshev1", "passband_hz": 1000, "stopband_hz": 400, "passband_ripple_db": 1, "stopband_atten_db": 45,
			"topology": "multiple-feedback", "resistor_range_ohm": [100, 2.2e6], "design_margin": {"passband_db": 0.4, "stopband_db": 3}}`},
		{"hp-ellip-auto-notch", `{"response": "highpass", "approximation": "elliptic", "passband_hz": 1000, "stopband_hz": 700, "passband_ripple_db": 0.5, "stopband_atten_db": 55,
			"design_margin": {"passband_db": 0.2, "stopband_db": 2}}`},
		{"hp-cheb2-sv-1mhz", `{"response": "highpass", "approximation": "chebyshev2", "passband_hz": 5000, "stopband_hz": 2500, "passband_ripple_db": 1, "stopband_atten_db": 50,
			"topology": "state-variable", "opamp": {"gbw_hz": 1e6}}`},
		{"hp-butter-sk-converter-no-alias-band", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 2000, "stopband_hz": 500, "stopband_atten_db": 40,
			"topology": "sallen-key", "converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 4}, "design_margin": {"passband_db": 0.3}}`},
		{"hp-cheb1-sk-e24-fails", `{"response": "highpass", "approximation": "chebyshev1", "passband_hz": 2000, "stopband_hz": 1000, "passband_ripple_db": 0.1, "stopband_atten_db": 40,
			"topology": "sallen-key", "resistor_series": "E24"}`},
		// Bandpass.
		{"bp-butter-mfb-margin", `{"response": "bandpass", "approximation": "butterworth", "passband_hz": [800, 1250], "stopband_hz": [400, 2500], "passband_ripple_db": 1, "stopband_atten_db": 30,
			"topology": "multiple-feedback", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"bp-cheb1-sv-1mhz", `{"response": "bandpass", "approximation": "chebyshev1", "passband_hz": [9000, 11000], "stopband_hz": [7000, 14000], "passband_ripple_db": 0.5, "stopband_atten_db": 40,
			"topology": "state-variable", "opamp": {"gbw_hz": 1e6}}`},
		{"bp-ellip-auto-notch", `{"response": "bandpass", "approximation": "elliptic", "passband_hz": [900, 1100], "stopband_hz": [800, 1250], "passband_ripple_db": 0.5, "stopband_atten_db": 40,
			"design_margin": {"passband_db": 0.25, "stopband_db": 2}}`},
		{"bp-butter-mfb-converter", `{"response": "bandpass", "approximation": "butterworth", "passband_hz": [1000, 3000], "stopband_hz": [300, 10000], "passband_ripple_db": 1, "stopband_atten_db": 30,
			"topology": "multiple-feedback", "converter": {"bits": 10, "sample_rate_hz": 32000, "full_scale_vpp": 2},
			"design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"bp-cheb2-auto-e24", `{"response": "bandpass", "approximation": "chebyshev2", "passband_hz": [2000, 3000], "stopband_hz": [1500, 4000], "passband_ripple_db": 1, "stopband_atten_db": 40,
			"resistor_series": "E24"}`},
		// Bandstop.
		{"bs-butter-auto-notch-margin", `{"response": "bandstop", "approximation": "butterworth", "passband_hz": [300, 3000], "stopband_hz": [800, 1100], "passband_ripple_db": 1, "stopband_atten_db": 30,
			"design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{"bs-cheb1-sv", `{"response": "bandstop", "approximation": "chebyshev1", "passband_hz": [500, 2000], "stopband_hz": [900, 1100], "passband_ripple_db": 0.5, "stopband_atten_db": 40,
			"topology": "state-variable", "opamp": {"gbw_hz": 5e6}}`},
		{"bs-ellip-auto-notch", `{"response": "bandstop", "approximation": "elliptic", "passband_hz": [700, 1400], "stopband_hz": [900, 1100], "passband_ripple_db": 0.5, "stopband_atten_db": 45,
			"design_margin": {"passband_db": 0.2, "stopband_db": 2}}`},
		{"bs-cheb1-auto-converter-no-alias-band", `{"response": "bandstop", "approximation": "chebyshev1", "passband_hz": [45, 70], "stopband_hz": [48, 52], "passband_ripple_db": 1, "stopband_atten_db": 30,
			"converter": {"bits": 16, "sample_rate_hz": 1000, "full_scale_vpp": 4}, "design_margin": {"passband_db": 0.4}}`},
		{"bs-cheb2-sv-e24-fails", `{"response": "bandstop", "approximation": "chebyshev2", "passband_hz": [1000, 4000], "stopband_hz": [1800, 2200], "passband_ripple_db": 0.05, "stopband_atten_db": 50,
			"topology": "state-variable", "resistor_series": "E24", "opamp": {"gbw_hz": 1e6}}`},
	}
}

func designOf(t *testing.T, spec string) *synth.Design {
	t.Helper()
	s, err := synth.ParseSpecBytes([]byte(spec))
	require.NoError(t, err, spec)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err, spec)
	return d
}

// TestBuiltAgainstNgspice: design.built's passband maximum and minimum,
// stopband worst and alias worst agree within 0.01 dB with the acceptance
// rule applied here to ngspice's AC data of the exported deck (the outside
// reference: the ngspice simulator, Debian package ngspice), and its
// verdict is ngspice's.
func TestBuiltAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	w := newWorstDiff()
	t.Cleanup(func() { w.log(t) })
	for _, tc := range builtCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
			defer cancel()
			d := designOf(t, tc.spec)
			top := d.Spec.Topology
			for _, sec := range d.Sections {
				if top == "auto" && sec.ZeroHz != nil {
					top = "auto with notch sections"
				}
			}
			w.tally("designs " + string(d.Spec.Response))
			w.tally("designs " + top)
			if d.Spec.Converter != nil {
				w.tally("designs with converter")
			}
			m := ruleMaskOf(d.Spec)
			got := spiceFigures(ctx, t, deckOf(t, d), m)
			b := d.Built
			t.Logf("ngspice: max %.6f min %.6f stop %.6f alias %.6f margin %.4f | polewright: max %.6f min %.6f stop %v alias %v meets %v",
				got.passMax, got.passMin, got.stopWorst, got.aliasWorst, got.margin, b.PassbandMaxDB, b.PassbandMinDB, fmtPtr(b.StopbandWorstDB), fmtPtr(b.AliasWorstDB), b.MeetsMask)

			// ngspice's figures, the acceptance rule on ngspice's samples.
			require.InDelta(t, got.passMax, b.PassbandMaxDB, 0.01, "passband maximum")
			require.InDelta(t, got.passMin, b.PassbandMinDB, 0.01, "passband minimum")
			w.add("passband max", tc.name, got.passMax-b.PassbandMaxDB)
			w.add("passband min", tc.name, got.passMin-b.PassbandMinDB)
			require.NotNil(t, b.StopbandWorstDB)
			require.InDelta(t, got.stopWorst, *b.StopbandWorstDB, 0.01, "stopband worst")
			w.add("stopband worst", tc.name, got.stopWorst-*b.StopbandWorstDB)
			// The margins, from ngspice's figures and the mask as given (not
			// the design margin's).
			require.InDelta(t, m.amax-(got.passMax-got.passMin), b.PassbandMarginDB, 0.01, "passband margin")
			require.InDelta(t, got.passMax-got.stopWorst-m.amin, *b.StopbandMarginDB, 0.01, "stopband margin")
			if len(m.alias) > 0 {
				require.NotNil(t, b.AliasWorstDB)
				require.InDelta(t, got.passMax-got.aliasWorst-m.aliasAttenDB, *b.AliasMarginDB, 0.01, "alias margin")
				require.InDelta(t, got.aliasWorst, *b.AliasWorstDB, 0.01, "alias worst")
				w.add("alias worst", tc.name, got.aliasWorst-*b.AliasWorstDB)
			} else {
				require.Nil(t, b.AliasWorstDB)
			}
			if math.Abs(got.margin) < 0.01 {
				t.Logf("verdict not compared: ngspice's margin %.4g dB is within 0.01 dB of zero", got.margin)
				w.tally("verdict skipped")
				return
			}
			require.Equal(t, got.meets, b.MeetsMask, "verdict: ngspice's smallest margin %.4f dB", got.margin)
			require.Equal(t, got.meets, checkByID(t, d, synth.CheckBuiltMask).OK, "the built-mask check")
			if got.meets {
				w.tally("verdict pass")
			} else {
				w.tally("verdict fail")
			}
		})
	}
}

func fmtPtr(p *float64) string {
	if p == nil {
		return "nil"
	}
	return strconv.FormatFloat(*p, 'f', 6, 64)
}

// checkByID returns the design's check id.
func checkByID(t *testing.T, d *synth.Design, id string) synth.Check {
	t.Helper()
	for _, c := range d.Checks {
		if c.ID == id {
			return c
		}
	}
	t.Fatalf("no check %q in %v", id, d.Checks)
	return synth.Check{}
}

// failAtCase is a design that passes as built, whose parts' fail_at_pct
// figures are checked in ngspice.
type failAtCase struct {
	name, spec string
	// notch: check the zero-setting resistors (R8, R9: the notch summer's
	// highpass and lowpass weights, ωz² = (R10/R9)/((R10/R8)·τ1·τ2), see
	// synth/topology's state-variable form) of the first state-variable
	// notch stage.
	notch bool
	// gain: check the resistors on each op-amp's inverting input of the
	// first stage (Rf and Rg of K = 1 + Rf/Rg), found in the deck.
	gain bool
	// known, when set, is a known disagreement of fail_at_pct with the
	// ngspice reference that this case shows: the case is skipped, with
	// ngspice's figures in the message, while the disagreement lasts, and
	// checked like the others once it is gone.
	known string
}

func failAtCases() []failAtCase {
	return []failAtCase{
		{name: "lp-ellip-auto-notch", notch: true, spec: `{"response": "lowpass", "approximation": "elliptic", "passband_hz": 3400, "stopband_hz": 4600,
			"passband_ripple_db": 0.2, "stopband_atten_db": 50, "design_margin": {"passband_db": 0.15, "stopband_db": 2}}`},
		{name: "bs-butter-auto-notch", notch: true, spec: `{"response": "bandstop", "approximation": "butterworth", "passband_hz": [300, 3000], "stopband_hz": [800, 1100],
			"passband_ripple_db": 1, "stopband_atten_db": 30, "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{name: "hp-ellip-auto-notch", notch: true, spec: `{"response": "highpass", "approximation": "elliptic", "passband_hz": 1000, "stopband_hz": 700,
			"passband_ripple_db": 0.5, "stopband_atten_db": 55, "design_margin": {"passband_db": 0.2, "stopband_db": 2}}`},
		{name: "lp-butter-sk-gain-tolerance", gain: true, spec: `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 3000,
			"gain_db": 6, "gain_tolerance_db": 0.5, "topology": "sallen-key", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{name: "lp-cheb1-mfb-converter", spec: `{"response": "lowpass", "approximation": "chebyshev1", "passband_hz": 4000, "passband_ripple_db": 0.5,
			"topology": "multiple-feedback", "resistor_series": "E24", "converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 4},
			"design_margin": {"passband_db": 0.2, "stopband_db": 3}}`},
		// Known: every stage of these has an exact zero at 0 Hz, a point of
		// their stopband [0, s0]. The board passes as built (and in
		// ngspice, with any part changed by 0.1 %), yet every fail_at_pct
		// is 0, "the nominal fails". synth/verify.FailAt forms a changed
		// board's response as the nominal chain's dB − the changed stage's
		// nominal dB + its new dB, which at 0 Hz is −Inf − (−Inf) = NaN,
		// and the acceptance rule takes a NaN stopband sample as the worst.
		{name: "hp-butter-sk-e24", spec: `{"response": "highpass", "approximation": "butterworth", "passband_hz": 500, "stopband_hz": 100,
			"stopband_atten_db": 50, "topology": "sallen-key", "resistor_series": "E24", "design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
		{name: "bp-butter-mfb-gain-tolerance", gain: true, spec: `{"response": "bandpass", "approximation": "butterworth", "passband_hz": [800, 1250], "stopband_hz": [400, 2500],
			"passband_ripple_db": 1, "stopband_atten_db": 30, "gain_db": 10, "gain_tolerance_db": 0.3, "topology": "multiple-feedback",
			"design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
	}
}

// failAtPart is one part and direction to check.
type failAtPart struct {
	ref string
	dir float64 // −1 down, +1 up
	pct float64 // the design's fail_at_pct
	why string
}

// inputResistors returns the resistors of the deck's element lines that
// touch the inverting input of the op-amp instance xref ("XU101 plus minus
// out pw_opamp").
func inputResistors(t *testing.T, deck []byte, xref string) []string {
	t.Helper()
	lines := strings.Split(string(deck), "\n")
	minus := ""
	for _, line := range lines {
		if f := strings.Fields(line); len(f) == 5 && f[0] == xref {
			minus = f[2]
		}
	}
	require.NotEmpty(t, minus, "op-amp %s in the deck", xref)
	var refs []string
	for _, line := range lines {
		if f := strings.Fields(line); len(f) == 4 && strings.HasPrefix(f[0], "R") && (f[1] == minus || f[2] == minus) {
			refs = append(refs, f[0])
		}
	}
	return refs
}

// TestFailAtAgainstNgspice: for parts of designs that pass as built, the
// part alone changed to value·(1 ± 0.9·fail_at_pct/100) passes the
// acceptance rule on ngspice's data of the exported deck, and changed to
// value·(1 ± 1.1·fail_at_pct/100) fails it. The reference is the ngspice
// simulator (Debian package ngspice) with the rule applied here
// (ruleMask.figures). Checked: the zero-setting resistors of a
// state-variable notch stage (or R4 and R3 of a two-integrator notch), the gain resistors of a board with
// gain_tolerance_db, and per design the parts with the smallest and the
// largest finite figure (up to 80 %).
func TestFailAtAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, tc := range failAtCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ctx, cancel := context.WithTimeout(context.Background(), 120*time.Second)
			defer cancel()
			d := designOf(t, tc.spec)
			require.True(t, d.Built.MeetsMask, "the case must pass as built")
			m := ruleMaskOf(d.Spec)
			deck := deckOf(t, d)
			nominal := spiceFigures(ctx, t, deck, m)
			require.True(t, nominal.meets, "ngspice: the nominal board passes (margin %.4f dB)", nominal.margin)

			figure := map[string][2]*float64{}
			var order []string
			for _, sec := range d.Sections {
				for _, c := range sec.Components {
					figure[c.Ref] = c.FailAtPct
					order = append(order, c.Ref)
				}
			}
			// A figure of 0 says the board fails at any change of the part:
			// on a board that passes, ngspice says otherwise when the part
			// changed by 0.1 % still passes.
			var zero []string
			for _, ref := range order {
				for _, p := range figure[ref] {
					if p != nil && *p == 0 {
						zero = append(zero, ref)
						break
					}
				}
			}
			if len(zero) > 0 {
				ref := zero[0]
				v := partValue(t, deck, ref)
				got := spiceFigures(ctx, t, withPart(t, deck, ref, v*1.001), m)
				if got.meets && tc.known != "" {
					t.Skipf("known: %s (%d of %d parts; ngspice: %s changed by +0.1 %% still passes, margin %.4f dB)", tc.known, len(zero), len(order), ref, got.margin)
				}
				require.Empty(t, zero, "fail_at_pct 0 on a board that passes as built; ngspice with %s changed by +0.1 %%: meets %v, margin %.4f dB", ref, got.meets, got.margin)
			}
			if tc.known != "" {
				t.Logf("the known disagreement (%s) no longer shows", tc.known)
			}

			var parts []failAtPart
			add := func(ref, why string) {
				f, ok := figure[ref]
				require.True(t, ok, "part %s", ref)
				finite := false
				for i, p := range f {
					if p != nil && *p <= 80 {
						parts = append(parts, failAtPart{ref, float64(2*i - 1), *p, why})
						finite = true
					}
				}
				require.True(t, finite, "%s (%s) must have a finite fail_at_pct, got [%s %s]", ref, why, fmtPtr(f[0]), fmtPtr(f[1]))
			}
			if tc.notch {
				stage, top := 0, ""
				for k, sec := range d.Sections {
					if (sec.Topology == "state-variable" || sec.Topology == "two-integrator-notch") && sec.ZeroHz != nil {
						stage, top = k+1, sec.Topology
						break
					}
				}
				require.NotZero(t, stage, "a state-variable or two-integrator notch stage")
				if top == "state-variable" {
					add(fmt.Sprintf("R%d08", stage), "notch zero")
					add(fmt.Sprintf("R%d09", stage), "notch zero")
				} else {
					// R4 (input to the second integrator) sets the zeros,
					// R3 with R2 the poles' f0.
					add(fmt.Sprintf("R%d04", stage), "notch zero")
					add(fmt.Sprintf("R%d03", stage), "notch f0")
				}
			}
			if tc.gain {
				refs := inputResistors(t, deck, "XU101")
				require.NotEmpty(t, refs, "gain resistors on U101's inverting input")
				for _, ref := range refs {
					add(ref, "gain")
				}
			}
			lo, hi := "", ""
			for _, ref := range order {
				for _, p := range figure[ref] {
					if p == nil || *p > 80 {
						continue
					}
					if lo == "" || *p < minFigure(figure[lo]) {
						lo = ref
					}
					if hi == "" || *p > maxFigure(figure[hi]) {
						hi = ref
					}
				}
			}
			add(lo, "smallest figure")
			add(hi, "largest figure")

			for _, p := range parts {
				v := partValue(t, deck, p.ref)
				for _, k := range []struct {
					scale float64
					meets bool
				}{{0.9, true}, {1.1, false}} {
					change := p.dir * k.scale * p.pct
					got := spiceFigures(ctx, t, withPart(t, deck, p.ref, v*(1+change/100)), m)
					t.Logf("%s (%s) %+.4f %% (%.1f × fail_at_pct): ngspice margin %+.5f dB", p.ref, p.why, change, k.scale, got.margin)
					require.Equal(t, k.meets, got.meets, "%s (%s) changed by %+.4f %% (fail_at_pct %.4f): ngspice's margin %.5f dB", p.ref, p.why, change, p.pct, got.margin)
				}
			}
		})
	}
}

func minFigure(f [2]*float64) float64 {
	v := math.Inf(1)
	for _, p := range f {
		if p != nil && *p <= 80 {
			v = math.Min(v, *p)
		}
	}
	return v
}

func maxFigure(f [2]*float64) float64 {
	v := math.Inf(-1)
	for _, p := range f {
		if p != nil && *p <= 80 {
			v = math.Max(v, *p)
		}
	}
	return v
}

// aliasIntervalsChecked is how many alias intervals TestAliasAgainstNgspice
// sweeps, and aliasPoints the points of its `ac lin` sweep over each.
const (
	aliasIntervalsChecked = 4
	aliasPoints           = 4001
)

// TestAliasAgainstNgspice: design.built's alias_worst_db is, within
// 0.01 dB, the largest response that ngspice (Debian package ngspice)
// finds for the exported deck over the first alias intervals
// [k·fs − fp, k·fs + fp], k = 1…4 (fp the passband's upper edge, fs
// converter.sample_rate_hz; INTERFACE.md's alias band), each swept
// linearly at 4001 points; alias_margin_db is ngspice's passband maximum
// less that worst less converter.alias_atten_db, and the alias check's
// verdict is ngspice's. The designs' worst lies in these intervals: their
// responses fall further above them.
func TestAliasAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	cases := []builtCase{
		{"lp-ellip-sv-16bit", `{"response": "lowpass", "approximation": "elliptic", "passband_hz": 20000, "passband_ripple_db": 0.1,
			"topology": "state-variable", "opamp": {"gbw_hz": 20e6}, "converter": {"bits": 16, "sample_rate_hz": 192000, "full_scale_vpp": 4},
			"design_margin": {"passband_db": 0.05, "stopband_db": 3}}`},
		{"lp-butter-sk-oversampling", `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.5,
			"topology": "sallen-key", "converter": {"bits": 16, "sample_rate_hz": 3072000, "full_scale_vpp": 4, "output_rate_hz": 48000},
			"design_margin": {"passband_db": 0.2, "stopband_db": 3}}`},
		{"lp-cheb1-mfb-12bit", `{"response": "lowpass", "approximation": "chebyshev1", "passband_hz": 4000, "passband_ripple_db": 0.5,
			"topology": "multiple-feedback", "resistor_series": "E24", "converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 4},
			"design_margin": {"passband_db": 0.2, "stopband_db": 3}}`},
		{"lp-ellip-auto-alias-atten-given", `{"response": "lowpass", "approximation": "elliptic", "passband_hz": 3000, "passband_ripple_db": 0.5,
			"converter": {"bits": 24, "sample_rate_hz": 8000, "full_scale_vpp": 4, "alias_atten_db": 60}, "design_margin": {"passband_db": 0.2, "stopband_db": 1}}`},
		{"lp-butter-sk-alias-fails", `{"response": "lowpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 3000, "stopband_atten_db": 40,
			"topology": "sallen-key", "converter": {"bits": 12, "sample_rate_hz": 5000, "full_scale_vpp": 4}, "design_margin": {"passband_db": 0.3}}`},
		{"bp-butter-mfb-10bit", `{"response": "bandpass", "approximation": "butterworth", "passband_hz": [1000, 3000], "stopband_hz": [300, 10000], "passband_ripple_db": 1, "stopband_atten_db": 30,
			"topology": "multiple-feedback", "converter": {"bits": 10, "sample_rate_hz": 32000, "full_scale_vpp": 2},
			"design_margin": {"passband_db": 0.3, "stopband_db": 3}}`},
	}
	w := newWorstDiff()
	t.Cleanup(func() { w.log(t) })
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
			defer cancel()
			d := designOf(t, tc.spec)
			c := d.Spec.Converter
			require.NotNil(t, c)
			b := d.Built
			require.NotNil(t, b.AliasWorstDB)
			require.NotNil(t, b.AliasMarginDB)
			deck := deckOf(t, d)
			full := ruleMaskOf(d.Spec)
			// The passband maximum, from the coarse and zoom passes over
			// the passband alone.
			pass := spiceFigures(ctx, t, deck, ruleMask{pass: full.pass, amax: full.amax}).passMax
			top := slices.Max(d.Spec.PassbandHz)
			intervals := aliasIntervals(c.SampleRateHz, top, aliasIntervalsChecked)
			var sweeps []acSweep
			for _, iv := range intervals {
				sweeps = append(sweeps, acSweep{"lin", aliasPoints, iv.lo, iv.hi})
			}
			data := runSweeps(ctx, t, deck, sweeps)
			worst := data.extreme(intervals, 1)
			margin := pass - worst - c.AliasAttenDB
			t.Logf("ngspice: passband max %.6f, alias worst %.6f (k ≤ %d), margin %.4f | polewright: %s, %s",
				pass, worst, aliasIntervalsChecked, margin, fmtPtr(b.AliasWorstDB), fmtPtr(b.AliasMarginDB))
			require.InDelta(t, worst, *b.AliasWorstDB, 0.01, "alias worst")
			require.InDelta(t, margin, *b.AliasMarginDB, 0.01, "alias margin")
			w.add("alias worst", tc.name, worst-*b.AliasWorstDB)
			w.add("alias margin", tc.name, margin-*b.AliasMarginDB)
			check := checkByID(t, d, synth.CheckAlias)
			require.InDelta(t, *b.AliasMarginDB, check.Figure, 1e-9, "the alias check's figure is the margin")
			if math.Abs(margin) < 0.01 {
				t.Logf("verdict not compared: ngspice's alias margin %.4g dB is within 0.01 dB of zero", margin)
				return
			}
			require.Equal(t, margin >= 0, check.OK, "alias verdict: ngspice's margin %.4f dB", margin)
			if margin >= 0 {
				w.tally("alias verdict pass")
			} else {
				w.tally("alias verdict fail")
			}
		})
	}
}
