// Package schematic draws a filter stage ([circuit.Stage]) as an SVG
// schematic, from the circuit model alone: [Stage] lays out any valid
// stage netlist and writes the SVG text itself; [FormatValue] prints part
// values in engineering notation.
//
// # Layout
//
// The drawing is a layered layout along the signal. Each node gets a rank,
// its longest signal path from the stage input (through parts, and from an
// op-amp's inputs to its output; the edges that close feedback loops are
// left out), and the nodes sit in columns by rank on a main row. Between
// two columns the main row holds the part that joins them or the op-amp
// whose output is the right column; the op-amp's other input, when it is a
// node of its own (a gain divider's tap, a damping divider), is drawn below
// the op-amp. Every node is a vertical trunk at its column from which its
// connections leave horizontally:
//
//   - parts to ground hang below, and their ground symbols line up at the
//     bottom;
//   - parts between non-adjacent columns (feedback) run in lanes above the
//     main row, shortest runs nearest, so that nested loops nest;
//   - parts of the nodes below the op-amps, and the wires from an op-amp's
//     output back to its bottom input, run in lanes below.
//
// Part bodies in lanes sit in a stretch that no other trunk crosses, and
// the layout widens where a stretch is too narrow, so no symbol or label
// overlaps another and wires meet only at junctions, which carry a dot.
// Resistors are zig-zags, capacitors two plates; designators go above (or
// right of) a part and values below it.
//
// # Output
//
// The SVG is self-contained: no scripts, no style sheets, no fonts, no
// external references; strokes and fills are currentColor and text is the
// generic sans-serif family, so a page sets the colour and size. Output is
// deterministic (integer coordinates), so it can be compared byte for byte.
package schematic
