package circuit

// PartKind names the kind of a passive part.
type PartKind string

// The part kinds.
const (
	Resistor  PartKind = "resistor"
	Capacitor PartKind = "capacitor"
)

// Node names reserved in every stage: In is the stage input (driven by the
// previous stage's op-amp output, or by the source for the first stage),
// Ground is the reference node.
const (
	In     = "in"
	Ground = "0"
)

// InN is the reserved node of a differentially driven stage's negative
// input (see Stage.DiffIn): the previous stage's negative output, or the
// source's negative half for the first stage.
const InN = "inn"

// DiffOut names, wherever a node is asked for (a node transfer, a DC
// node transfer), the differential output V(Out) − V(OutN) of a
// differential stage. It is not a node name (it holds '-'), so it cannot
// clash with one.
const DiffOut = "out-outn"

// Part is a two-terminal passive part of a stage.
type Part struct {
	// Ref is the designator local to its stage ("R1", "C2"); [Chain.Ref]
	// gives the chain-wide designator used in the deck and the BOM.
	Ref string
	// Kind is resistor or capacitor.
	Kind PartKind
	// A and B are the stage-local nodes the part connects.
	A, B string
	// Value is the value as built, in Ohm or Farad: rounded to Series, or
	// the exact value when the spec asks for exact values.
	Value float64
	// Exact is the unrounded design value, in Ohm or Farad.
	Exact float64
	// Series is the IEC 60063 series of Value ("E96"), or "" when exact.
	Series string
	// TolerancePct is the part's tolerance in percent.
	TolerancePct float64
	// Parasitic marks a part that stands for the op-amp model's input
	// capacitance or output resistance ([Stage.WithParasitics]): it is
	// analysed like any part but is not bought, drawn or toleranced.
	Parasitic bool
	// Driver marks a part of the converter driver: the R–C between the
	// chain's last op-amp and a sampling converter's input, appended to
	// the last stage by [Stage.WithDriver]. It is bought, drawn,
	// toleranced and in the deck like any part; [Stage.WithoutDriver]
	// gives the section's own circuit back.
	Driver bool
}

// OpAmp is one amplifier of a stage, by its stage-local nodes.
type OpAmp struct {
	// Ref is the stage-local designator ("U1").
	Ref string
	// Plus, Minus and Out are the non-inverting input, inverting input and
	// output nodes.
	Plus, Minus, Out string
	// OutN, when set, makes the amplifier fully differential (an FDA):
	// Out is its positive and OutN its negative output, and
	//
	//	V(Out) − V(OutN) = A(s)·(V(Plus) − V(Minus)),
	//	(V(Out) + V(OutN))/2 = Vocm,
	//
	// with A(s) the chain's [Model] and the output common mode Vocm held
	// at the reference (0 V in every small-signal analysis) by an ideal
	// common-mode loop. Raising Plus raises Out and lowers OutN.
	OutN string
}

// FullyDifferential reports whether the amplifier is an FDA (OutN set).
func (u OpAmp) FullyDifferential() bool { return u.OutN != "" }

// Stage is the circuit of one section. Its nodes are local: [In] is the
// input, [Ground] the reference, Out the output (an op-amp output, or,
// in the last stage of a chain with a converter driver, the driver's
// capacitor node: see [Stage.WithDriver]).
type Stage struct {
	// Topology names the circuit ("sallen-key", "multiple-feedback",
	// "state-variable", "rc-buffer", "inverting-rc", ...).
	Topology string
	// Parts are the passive parts.
	Parts []Part
	// OpAmps are the amplifiers.
	OpAmps []OpAmp
	// Out is the node that carries the stage's output.
	Out string
	// OutN, when set, makes the stage differential: its output is
	// V(Out) − V(OutN), the two outputs of one FDA (Out its Out and OutN
	// its OutN, or crossed: see [Stage.CrossOutputs]). Every transfer "to the output" ([Stage.TransferFunction],
	// [Stage.SolveAt], [Stage.SourceTransfers], [Stage.DCSourceTransfers])
	// is then to that difference; a node transfer to Out or OutN is to the
	// node itself, and [DiffOut] names the difference.
	OutN string
	// DiffIn makes the stage's input differential: the source drives In
	// at +½ and [InN] at −½ of its value, so that V(In) − V(InN) is the
	// source (in a chain, the previous stage's differential output). A
	// differential stage without DiffIn takes a single-ended input on In;
	// the half that would take InN takes Ground instead (single-ended to
	// differential conversion).
	DiffIn bool
}

// Differential reports whether the stage's output is differential (OutN
// set).
func (st Stage) Differential() bool { return st.OutN != "" }

// output is the name of the stage's output for the transfers "to the
// output": [DiffOut] for a differential stage, Out otherwise.
func (st Stage) output() string {
	if st.Differential() {
		return DiffOut
	}
	return st.Out
}

// Model is the op-amp model shared by every amplifier of a chain: single
// pole, A(s) = A0/(1 + s·A0/(2π·GBW)) with A0 = 10^(DCGainDB/20), or ideal
// (a nullor: infinite gain, zero input current, zero output impedance).
//
// The parasitics (input capacitance, output resistance) apply to either
// form and enter every small-signal analysis (see [Stage.WithParasitics]);
// the DC errors (offset, bias current) enter only the DC solution
// ([Stage.DCTransfers]) and the deck.
type Model struct {
	GBWHz    float64
	DCGainDB float64
	Ideal    bool
	// InputCapacitanceFarad is the capacitance from each input to ground.
	InputCapacitanceFarad float64
	// OutputResistanceOhm is the open-loop output resistance.
	OutputResistanceOhm float64
	// OffsetV is the input offset voltage, in series with the
	// non-inverting input (adds to it).
	OffsetV float64
	// BiasA is the input bias current flowing into each input.
	BiasA float64
}

// Chain is the whole filter: stages in signal order, each driving the next.
type Chain struct {
	Stages []Stage
	Model  Model
	// Memo, when not nil, remembers the stages' transfer functions for
	// [Chain.TransferFunctions] (see [Memo]); copies of the chain share it.
	Memo *Memo
}
