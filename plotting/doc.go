// Package plotting draws a [synth.Design] as SVG with gonum.org/v1/plot:
// the magnitude and phase responses ([Bode]), the magnitude over the
// passband against its limits ([Passband]), the group delay
// ([GroupDelay]) and the step response ([Step]), each with the ideal curve
// and, once the design has circuits, the as-built one; and the output
// noise density ([Noise]).
//
// # Verification
//
// With Design.MonteCarlo, the magnitude and passband plots shade the
// envelope of the trials under the curves and under the mask's shading
// (so that the forbidden regions keep their colour): min to max lightly,
// the 1st to 99th percentile darker. With Design.Step, the step plot spans the settling of both
// responses (the time axis reaches 15 % past the later settling time),
// shades the settling band (±Step.SettlingFrac of the final value: ±½ LSB
// with a converter, else ±0.1 %) from the as-built settling time on and
// marks that time, and adds a panel below with each response's distance
// from its own final value on a logarithmic axis, the band shaded. [Noise]
// draws Design.Noise.OutputVPerRtHz on log-log axes and, with a converter,
// a dashed line at LSB/√12/√(fs/2): the converter's quantisation noise
// spread evenly over 0 to fs/2, the density a white noise would need to
// equal it over the band. Logarithmic value axes are drawn as linear axes
// of log10 values (see log10Axis). Designs without these fields draw as
// before.
//
// # Curves
//
// The frequency plots use the design's own response grid
// (Design.Response.FreqHz, log-spaced and clustered round resonances and
// zeros) on a logarithmic axis; a design without one is sampled on 400
// log-spaced points of its transfer function. [Passband] computes its
// curves on 240 log-spaced points of its own range and the design's grid
// points there, from the design's poles and zeros and the circuit's
// stages. The as-built magnitude is
// Design.Response.RealizedDB when it is filled, else it is computed from
// the chain. The as-built phase and group delay come from the poles and
// zeros of every stage of Design.Chain ([circuit.Rational.Poles] and
// [circuit.Rational.Zeros]) in closed form, as package response does for
// the ideal ones, so that no finite differences are involved; a notch zero
// within 0.1 % of the jω axis is put on it, as in the ideal filter (see
// cascadeZPK in sweep.go). The as-built phase is then moved by whole turns
// onto the ideal one's branch: the same anchor at the lowest frequency,
// unwrapped along the grid, and across each notch of the ideal filter
// turned the same way as the ideal phase turns there, so that the two
// never part by 360° at a notch (see alignPhase). The group-delay and step axes follow the ideal curves and
// widen for the as-built ones by at most half their span, so that a diverging circuit
// does not flatten the ideal curve; what lies beyond is clipped. The ideal
// step response comes from the design's sections and the as-built one from
// the chain's rational stages, both by package step. A design without
// circuits ([synth.ErrNoCircuit]) shows the ideal curves only.
//
// # Mask
//
// The magnitude plot shades the regions the mask forbids: below
// gain − passband_ripple_db over the passband and above
// gain − stopband_atten_db over the stopband(s), with gain = 20·log10 of
// Design.Gain and the spec's band edges. The magnitude axis is linear in
// dB, one scale from 30 dB below the stopband floor to just above the
// curves' peak; the passband's ripple is read on [Passband], whose axis
// spans the passband limits (Amax below the gain; with gain_tolerance_db,
// the gain ± the tolerance) and the curves over the passband. Values below
// the axis (−Inf at a zero on the grid) are clamped just outside it, since
// the plotters reject non-finite values; NaN points are left out.
//
// # Legend and text
//
// Each figure's legend is drawn in a strip above its top panel, outside
// every data area, so that it never covers a curve, a band or a mark; it
// wraps onto more rows when the names do not fit one. Text is at least
// [TickFontPt] points in a figure [DefaultWidthPt] points wide, so that a
// page that shows a figure [PageFigureWidthPx] CSS px wide draws it at
// least [MinTextPx] px high (down to [MinFigureWidthPx]).
//
// # Output
//
// Each function writes one complete SVG document that begins with an
// <?xml?> declaration; [InlineSVG] strips it for inlining into HTML.
// Nothing from the spec is written as text: the SVG holds only fixed axis
// labels, legend names ("ideal", "as built", the mask's, the settling
// time's) and numbers, and the SVG canvas escapes all text it writes in
// any case.
//
// A curve is drawn with the points the drawing can show: in canvas
// coordinates, points whose leaving out moves the line by at most a tenth
// of a point are left out (a smooth curve keeps a few dozen to a few
// hundred of its samples).
//
// # The SVG canvas
//
// Plots are drawn by gonum/plot onto plotting/internal/svgcanvas, a
// vg.Canvas whose output is byte for byte what gonum/plot's vgsvg writes
// (its tests compare the two), written into one pooled buffer (or
// straight into the caller's, when that is a bytes.Buffer) with numbers
// formatted without fmt; curves and shapes are stroked and filled as
// polylines, with no vg.Path.
//
// # Fonts and global state
//
// The plots use Liberation Sans from gonum/plot's default font cache and
// do not embed it (the SVG names font-family "Liberation Sans"; a page can
// override it with CSS, `svg text { font-family: sans-serif !important }`).
// The fonts are set on each plot's text styles, not through
// plot.DefaultFont or font.DefaultCache: this package changes no
// package-level state, so it is safe to call concurrently. It keeps only
// caches of its own: the sizes of the texts it has measured (at most 4,096),
// the style strings of the fonts, pooled scratch memory and buffers, and,
// for the last 16 designs drawn, the circuit's rational stages, the
// frequency sweep that [Bode], [Passband] and [GroupDelay] share (curves
// and the as-built phase and delay) and the step plot's responses, held by weak pointer so that no design is
// kept alive by them (a design is not changed after synthesis).
package plotting
