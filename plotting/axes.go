package plotting

import (
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
)

// niceStep returns the smallest step of the form {1, 2, 2.5, 5}·10^k that
// divides span into at most n intervals.
func niceStep(span float64, n int) float64 {
	if !(span > 0) || math.IsInf(span, 1) {
		return 1
	}
	e := math.Pow(10, math.Floor(math.Log10(span/float64(n))))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if span/(m*e) <= float64(n)+1e-9 {
			return m * e
		}
	}
	return 10 * e
}

// linTicks returns labelled ticks at the multiples of step in [lo, hi].
func linTicks(lo, hi, step float64) []plot.Tick {
	var ticks []plot.Tick
	start := math.Ceil(lo/step - 1e-9)
	for k := start; k*step <= hi+1e-9*step && len(ticks) < 100; k++ {
		v := k * step
		ticks = append(ticks, plot.Tick{Value: v, Label: formatTick(v, step)})
	}
	return ticks
}

// formatTick formats v with as many decimals as step needs, with a true
// minus sign.
func formatTick(v, step float64) string {
	dec := 0
	for dec < 6 && math.Abs(step*math.Pow10(dec)-math.Round(step*math.Pow10(dec))) > 1e-6 {
		dec++
	}
	if math.Abs(v) < step*1e-6 {
		v = 0
	}
	return strings.Replace(strconv.FormatFloat(v, 'f', dec, 64), "-", "\u2212", 1)
}

// degreeTicks returns ticks at multiples of a step of degrees suited to
// phase (5°, 10°, 15°, 30°, 45°, 90°, then doublings of 180°), at most
// about six over [lo, hi].
func degreeTicks(lo, hi float64) []plot.Tick {
	span := hi - lo
	step := 5.0
	for _, s := range []float64{5, 10, 15, 30, 45, 90} {
		step = s
		if span/s <= 6 {
			break
		}
	}
	for span/step > 6 {
		if step < 180 {
			step = 180
		} else {
			step *= 2
		}
	}
	return linTicks(lo, hi, step)
}

// siPrefix returns the scale and SI prefix for showing values up to v (> 0)
// as numbers from 1 to 1000: s, ms, µs, ns, ps.
func siPrefix(v float64) (float64, string) {
	switch {
	case !(v < 1) || math.IsNaN(v):
		return 1, ""
	case v >= 1e-3:
		return 1e-3, "m"
	case v >= 1e-6:
		return 1e-6, "\u00b5"
	case v >= 1e-9:
		return 1e-9, "n"
	}
	return 1e-12, "p"
}

// freqLabel writes a frequency in Hz with an SI prefix and no unit:
// 20, 500, 1k, 2.5k, 10M, 100m.
func freqLabel(f float64) string {
	prefixes := []struct {
		scale float64
		p     string
	}{{1e9, "G"}, {1e6, "M"}, {1e3, "k"}, {1, ""}, {1e-3, "m"}, {1e-6, "\u00b5"}}
	for _, pr := range prefixes {
		if f >= pr.scale*(1-1e-9) || pr.scale == 1e-6 {
			return strconv.FormatFloat(f/pr.scale, 'g', 3, 64) + pr.p
		}
	}
	return strconv.FormatFloat(f, 'g', 3, 64)
}

// freqTicks returns the ticks of a log frequency axis over [lo, hi]
// (0 < lo < hi): [decadeTicks] with the labels in SI prefixes.
func freqTicks(lo, hi float64) []plot.Tick { return decadeTicks(lo, hi, freqLabel) }

// decadeTicks returns the ticks of a logarithmic axis over [lo, hi]
// (0 < lo < hi): plot.LogTicks, with the decades labelled by label and the
// 2…9 multiples as minor ticks. A range that holds fewer than two decades
// gets every tick labelled.
func decadeTicks(lo, hi float64, label func(float64) string) []plot.Tick {
	all := plot.LogTicks{Prec: -1}.Ticks(lo, hi)
	ticks := make([]plot.Tick, 0, len(all))
	labelled := 0
	for _, t := range all {
		if t.Value < lo*(1-1e-9) || t.Value > hi*(1+1e-9) {
			continue
		}
		if n := len(ticks); n > 0 && math.Abs(ticks[n-1].Value-t.Value) <= 1e-9*t.Value {
			// The same value as a major and a minor tick: one tick, labelled
			// if either is.
			if t.Label != "" && ticks[n-1].Label == "" {
				ticks[n-1].Label = label(t.Value)
				labelled++
			}
			continue
		}
		if t.Label != "" {
			t.Label = label(t.Value)
			labelled++
		}
		ticks = append(ticks, t)
	}
	if labelled < 2 {
		for i := range ticks {
			ticks[i].Label = label(ticks[i].Value)
		}
	}
	return ticks
}

// unlabelled returns the ticks without their labels (minor tick marks).
func unlabelled(ticks []plot.Tick) []plot.Tick {
	out := make([]plot.Tick, len(ticks))
	for i, t := range ticks {
		out[i] = plot.Tick{Value: t.Value}
	}
	return out
}

// dataRange returns the smallest and largest finite Y of the curves, and
// false if there is none.
func dataRange(vals ...[]float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, vs := range vals {
		for _, v := range vs {
			if finite(v) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return lo, hi, lo <= hi
}

// padRange widens [lo, hi] by frac of its span on each side, and to at
// least minSpan around its centre.
func padRange(lo, hi, frac, minSpan float64) (float64, float64) {
	if hi-lo < minSpan {
		c := (lo + hi) / 2
		lo, hi = c-minSpan/2, c+minSpan/2
	}
	pad := (hi - lo) * frac
	return lo - pad, hi + pad
}

// zoomFreqTicks returns the ticks of a logarithmic frequency axis over a
// short range [lo, hi] (0 < lo < hi), as the passband plot has: from three
// times up, [freqTicks] with the 2 and 5 multiples labelled too; below, a
// labelled tick at every multiple of a round step, about six of them.
func zoomFreqTicks(lo, hi float64) []plot.Tick {
	if hi >= 3*lo {
		ticks := freqTicks(lo, hi)
		for i, t := range ticks {
			m := t.Value / math.Pow(10, math.Floor(math.Log10(t.Value)+1e-9))
			if math.Abs(m-2) < 1e-6 || math.Abs(m-5) < 1e-6 {
				ticks[i].Label = freqLabel(t.Value)
			}
		}
		return ticks
	}
	step := niceStep(hi-lo, 6)
	var ticks []plot.Tick
	for k := math.Ceil(lo/step - 1e-9); k*step <= hi*(1+1e-9) && len(ticks) < 100; k++ {
		ticks = append(ticks, plot.Tick{Value: k * step, Label: freqLabel(k * step)})
	}
	return ticks
}
