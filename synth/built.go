package synth

import (
	"math"
	"slices"

	"github.com/polewright/polewright/synth/accept"
	"github.com/polewright/polewright/synth/circuit"
)

// openBandFactor is how far an open band is judged: up to 100 × its edge
// (the alias band: up to 100 × the sample rate), as INTERFACE.md says.
const openBandFactor = 100

// dcDecades is how far below its edge a band that starts at 0 Hz is
// sampled on a log grid (0 Hz itself is a grid point too).
const dcDecades = 5

// fullPointsPerDecade is the density of the log grid of the full
// (one-board) acceptance plan, before the hints are added.
const fullPointsPerDecade = 50

// BuiltReport is how the board as built sits against the mask: the
// acceptance rule of INTERFACE.md applied to the as-built response, with
// its extremes refined between grid points.
type BuiltReport struct {
	// MeetsMask is the acceptance rule's verdict.
	MeetsMask bool `json:"meets_mask"`
	// PassbandMaxDB and PassbandMinDB are the passband's extremes;
	// PassbandRippleDB is their difference.
	PassbandMaxDB    float64 `json:"passband_max_db"`
	PassbandMinDB    float64 `json:"passband_min_db"`
	PassbandRippleDB float64 `json:"passband_ripple_db"`
	// StopbandWorstDB is the largest response over the stopband; nil
	// without a stopband.
	StopbandWorstDB *float64 `json:"stopband_worst_db"`
	// PassbandMarginDB is Amax − PassbandRippleDB.
	PassbandMarginDB float64 `json:"passband_margin_db"`
	// StopbandMarginDB is PassbandMaxDB − StopbandWorstDB − Amin; nil
	// without a stopband.
	StopbandMarginDB *float64 `json:"stopband_margin_db"`
	// AliasWorstDB and AliasMarginDB are the alias band's (from the
	// passband maximum, against converter.alias_atten_db); nil without a
	// converter or for a response without an upper passband edge.
	AliasWorstDB  *float64 `json:"alias_worst_db"`
	AliasMarginDB *float64 `json:"alias_margin_db"`
	// GainErrorDB is PassbandMaxDB − gain_db and GainMarginDB
	// gain_tolerance_db − |GainErrorDB|; GainMarginDB is nil when the
	// spec sets no gain tolerance.
	GainErrorDB  float64  `json:"gain_error_db"`
	GainMarginDB *float64 `json:"gain_margin_db"`
	// Unstable reports a board whose stages, as built (the op-amps'
	// finite gain-bandwidth included), have a pole on or right of the jω
	// axis: it fails whatever its frequency response says.
	Unstable bool `json:"unstable"`

	result accept.Result
}

// acceptMask returns the spec's mask in the acceptance rule's terms: the
// bands (open ones up to openBandFactor × their edge), Amax and Amin as
// given (not the design margin's), the alias band and the gain rule.
func (s Spec) acceptMask() accept.Mask {
	p, st := s.PassbandHz, s.StopbandHz
	m := accept.Mask{RippleDB: s.PassbandRippleDB, AttenDB: s.StopbandAttenDB, GainDB: s.GainDB}
	if s.GainToleranceDB != nil {
		m.GainTolDB = *s.GainToleranceDB
	}
	band := func(lo, hi float64) accept.Band { return accept.Band{LoHz: lo, HiHz: hi} }
	switch s.Response {
	case Lowpass:
		m.Pass = []accept.Band{band(0, p[0])}
		if s.HasStopband() {
			m.Stop = []accept.Band{band(st[0], openBandFactor*st[0])}
		}
	case Highpass:
		m.Pass = []accept.Band{band(p[0], openBandFactor*p[0])}
		if s.HasStopband() {
			m.Stop = []accept.Band{band(0, st[0])}
		}
	case Bandpass:
		m.Pass = []accept.Band{band(p[0], p[1])}
		if s.HasStopband() {
			m.Stop = []accept.Band{band(0, st[0]), band(st[1], openBandFactor*st[1])}
		}
	case Bandstop:
		m.Pass = []accept.Band{band(0, p[0]), band(p[1], openBandFactor*p[1])}
		if s.HasStopband() {
			m.Stop = []accept.Band{band(st[0], st[1])}
		}
	}
	m.Alias = s.aliasBands()
	if c := s.Converter; c != nil {
		m.AliasAttenDB = c.AliasAttenDB
	}
	return m
}

// aliasBands returns the frequencies that sampling folds onto the
// passband, |f − k·fs| ≤ the passband's upper edge for k ≥ 1, up to
// openBandFactor × fs; nil without a converter or for a response whose
// passband has no upper edge (highpass, bandstop).
func (s Spec) aliasBands() []accept.Band {
	c := s.Converter
	if c == nil || s.Response == Highpass || s.Response == Bandstop {
		return nil
	}
	top := slices.Max(s.PassbandHz)
	fs := c.SampleRateHz
	var out []accept.Band
	for k := 1.0; k*fs-top <= openBandFactor*fs; k++ {
		out = append(out, accept.Band{LoHz: k*fs - top, HiHz: math.Min(k*fs+top, openBandFactor*fs)})
	}
	return out
}

// HasAliasBand reports whether the spec has an alias band: a converter
// and a passband with an upper edge.
func (s Spec) HasAliasBand() bool { return len(s.aliasBands()) > 0 }

// bandGrid returns a log grid over every band of m at perDecade points per
// decade (at least 3 per band), bands that start at 0 Hz from dcDecades
// below their upper edge, and 0 Hz itself when a band starts there.
func bandGrid(m accept.Mask, perDecade float64) []float64 {
	var g []float64
	for _, bs := range [][]accept.Band{m.Pass, m.Stop, m.Alias} {
		for _, b := range bs {
			lo := b.LoHz
			if lo <= 0 {
				g = append(g, 0)
				lo = b.HiHz * math.Pow(10, -dcDecades)
			}
			n := max(3, int(math.Ceil(perDecade*math.Log10(b.HiHz/lo)))+1)
			for i := range n {
				g = append(g, lo*math.Pow(b.HiHz/lo, float64(i)/float64(n-1)))
			}
		}
	}
	return g
}

// sectionHints returns the frequencies where a response of the design's
// sections has its features: every pole pair's f0 and its half-power
// neighbours f0·(1 ± 1/(2Q)), every jω-axis zero with neighbours 0.5 %
// away, and the geometric means between neighbouring zeros (where the
// stopband's lobes peak).
func (d *Design) sectionHints() []float64 {
	var h, zeros []float64
	for _, s := range d.Sections {
		h = append(h, s.F0Hz)
		if s.Q != nil && *s.Q > 0.5 {
			h = append(h, s.F0Hz*(1-1/(2**s.Q)), s.F0Hz*(1+1/(2**s.Q)))
		}
		if s.ZeroHz != nil {
			z := *s.ZeroHz
			zeros = append(zeros, z)
			h = append(h, z, z*0.995, z*1.005)
		}
	}
	slices.Sort(zeros)
	for i := 1; i < len(zeros); i++ {
		h = append(h, math.Sqrt(zeros[i-1]*zeros[i]))
	}
	return h
}

// judgeBuilt applies the acceptance rule to the board as built (the
// chain's cascade of rational transfer functions with its inter-stage
// loading) and fills d.Built.
func (d *Design) judgeBuilt(tfs circuit.Cascade, load circuit.Loading) {
	m := d.Spec.acceptMask()
	plan := accept.NewPlan(m, bandGrid(m, fullPointsPerDecade), d.sectionHints())
	eval := func(f float64) float64 {
		return dbOf(tfs.AtHz(f)) + load.DBAt(f)
	}
	grid := plan.Grid()
	db := make([]float64, len(grid))
	for i, f := range grid {
		db[i] = dbOf(tfs.AtHz(f))
	}
	load.ApplyDB(db, grid)
	r := plan.Judge(db, eval, accept.Full)
	d.Built = newBuiltReport(r, d.Spec)
	for _, t := range tfs {
		for _, p := range t.Poles() {
			if !(real(p) < 0) {
				d.Built.Unstable = true
			}
		}
	}
	if d.Built.Unstable {
		d.Built.MeetsMask = false
	}
	d.chainTFs, d.chainLoad = tfs, load
}

// dbOf returns 20·log10|h|.
func dbOf(h complex128) float64 {
	return 20 * math.Log10(math.Hypot(real(h), imag(h)))
}

// newBuiltReport words an acceptance result as the design's report.
func newBuiltReport(r accept.Result, s Spec) *BuiltReport {
	b := &BuiltReport{
		MeetsMask: r.Meets, PassbandMaxDB: clampDB(r.PassMaxDB), PassbandMinDB: clampDB(r.PassMinDB),
		PassbandMarginDB: clampDB(r.PassMarginDB), GainErrorDB: clampDB(r.PassMaxDB - s.GainDB),
		result: r,
	}
	b.PassbandRippleDB = b.PassbandMaxDB - b.PassbandMinDB
	if s.HasStopband() {
		b.StopbandWorstDB = ptr(clampDB(r.StopWorstDB))
		b.StopbandMarginDB = ptr(clampDB(r.StopMarginDB))
	}
	if s.HasAliasBand() {
		b.AliasWorstDB = ptr(clampDB(r.AliasWorstDB))
		b.AliasMarginDB = ptr(clampDB(r.AliasMarginDB))
	}
	if s.GainToleranceDB != nil {
		b.GainMarginDB = ptr(clampDB(r.GainMarginDB))
	}
	return b
}

// clampDB keeps a dB figure finite for the JSON: ±Inf and NaN become
// ±1000 dB (NaN: −1000), far beyond any mask.
func clampDB(v float64) float64 {
	switch {
	case v != v || v < -1000:
		return -1000
	case v > 1000:
		return 1000
	}
	return v
}

func ptr[T any](v T) *T { return &v }
