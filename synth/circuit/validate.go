package circuit

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
)

// ErrInvalid is wrapped by every error that [Chain.Validate],
// [Stage.Validate] and [Model.Validate] return, and so by every function
// of this package that validates its input first.
var ErrInvalid = errors.New("circuit: invalid")

// ErrSingular is wrapped by the analysis errors of a circuit whose nodal
// equations have no unique solution (for example an op-amp whose inputs
// see no feedback path).
var ErrSingular = errors.New("circuit: singular circuit")

func invalidf(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrInvalid}, args...)...)
}

// finitePositive reports whether v is finite and > 0.
func finitePositive(v float64) bool { return v > 0 && !math.IsInf(v, 1) }

// Validate checks the op-amp model: for a single-pole model GBWHz must be
// finite and > 0 and DCGainDB finite and > 0 (A0 > 1, A0 finite); an
// ideal model ignores both.
func (m Model) Validate() error {
	if err := m.validParasitics(); err != nil {
		return err
	}
	if m.Ideal {
		return nil
	}
	if !finitePositive(m.GBWHz) {
		return invalidf("model: GBWHz %v is not finite and > 0", m.GBWHz)
	}
	if !(m.DCGainDB > 0) || !finitePositive(m.a0()) {
		return invalidf("model: DCGainDB %v is not finite and > 0", m.DCGainDB)
	}
	return nil
}

// a0 returns the DC gain 10^(DCGainDB/20).
func (m Model) a0() float64 { return math.Pow(10, m.DCGainDB/20) }

// Validate checks a stage on its own: every designator is a letter (R for
// resistors, C for capacitors, U for op-amps) and a number 1..99, and
// unique; every node name is ASCII letters, digits or underscores, and no
// two differ only in case (SPICE folds case); every part value is finite
// and > 0, its tolerance finite and ≥ 0, and its two nodes differ; every
// op-amp has three nodes, distinct inputs, and an output that is neither
// [In] nor [Ground] nor another op-amp's output; Out is set and is an
// op-amp output or a converter driver's node (a node of a part with
// Driver set, see [Stage.WithDriver]); every node is connected to at least two terminals and,
// through parts and op-amp outputs (an op-amp output is a source referred
// to ground), to [Ground] — so no node floats.
func (st Stage) Validate() error {
	_, err := st.check()
	return err
}

// check is Validate, returning the stage's node table on success.
func (st Stage) check() (*nodeTable, error) {
	if len(st.OpAmps) == 0 {
		return nil, invalidf("no op-amps: the stage output must be an op-amp output")
	}
	refs := make([]string, 0, 16)
	seen := func(ref string) bool {
		if slices.Contains(refs, ref) {
			return true
		}
		refs = append(refs, ref)
		return false
	}
	t := newNodeTable()
	t.terminals[0]++ // the source drives In
	node := func(owner func() string, field, n string) (int, error) {
		if !validNodeName(n) {
			return 0, invalidf("%s: %s %q is not a node name (ASCII letters, digits, _)", owner(), field, n)
		}
		i, prev := t.add(n)
		if prev != "" {
			return 0, invalidf("%s: %s %q and node %q differ only in case", owner(), field, n, prev)
		}
		t.terminals[i]++
		return i, nil
	}
	for i, p := range st.Parts {
		owner := func() string { return fmt.Sprintf("part %d (%q)", i+1, p.Ref) }
		want, ok := refLetter(p.Kind)
		if !ok {
			return nil, invalidf("%s: Kind %q is neither %q nor %q", owner(), p.Kind, Resistor, Capacitor)
		}
		letter, _, ok := parseLocalRef(p.Ref)
		if !ok || letter != want {
			return nil, invalidf("%s: Ref %q is not %c followed by 1..99", owner(), p.Ref, want)
		}
		if seen(p.Ref) {
			return nil, invalidf("%s: duplicate Ref %q", owner(), p.Ref)
		}
		if !finitePositive(p.Value) {
			return nil, invalidf("%s: Value %v is not finite and > 0", owner(), p.Value)
		}
		if !(p.TolerancePct >= 0) || math.IsInf(p.TolerancePct, 1) {
			return nil, invalidf("%s: TolerancePct %v is not finite and >= 0", owner(), p.TolerancePct)
		}
		a, err := node(owner, "A", p.A)
		if err != nil {
			return nil, err
		}
		b, err := node(owner, "B", p.B)
		if err != nil {
			return nil, err
		}
		if a == b {
			return nil, invalidf("%s: A and B are the same node %q", owner(), p.A)
		}
		t.union(a, b)
	}
	outs := make([]int, 0, len(st.OpAmps))
	for i, u := range st.OpAmps {
		owner := func() string { return fmt.Sprintf("op-amp %d (%q)", i+1, u.Ref) }
		if letter, _, ok := parseLocalRef(u.Ref); !ok || letter != 'U' {
			return nil, invalidf("%s: Ref %q is not U followed by 1..99", owner(), u.Ref)
		}
		if seen(u.Ref) {
			return nil, invalidf("%s: duplicate Ref %q", owner(), u.Ref)
		}
		pl, err := node(owner, "Plus", u.Plus)
		if err != nil {
			return nil, err
		}
		mi, err := node(owner, "Minus", u.Minus)
		if err != nil {
			return nil, err
		}
		o, err := node(owner, "Out", u.Out)
		if err != nil {
			return nil, err
		}
		if pl == mi {
			return nil, invalidf("%s: Plus and Minus are the same node %q", owner(), u.Plus)
		}
		if o == 0 || o == 1 {
			return nil, invalidf("%s: Out %q is the stage input or ground", owner(), u.Out)
		}
		if k := slices.Index(outs, o); k >= 0 {
			return nil, invalidf("%s: Out %q is also the output of %q", owner(), u.Out, st.OpAmps[k/2].Ref)
		}
		on := -1
		if u.FullyDifferential() {
			if on, err = node(owner, "OutN", u.OutN); err != nil {
				return nil, err
			}
			if on == 0 || on == 1 || u.OutN == InN {
				return nil, invalidf("%s: OutN %q is a stage input or ground", owner(), u.OutN)
			}
			if on == o {
				return nil, invalidf("%s: Out and OutN are the same node %q", owner(), u.Out)
			}
			if k := slices.Index(outs, on); k >= 0 {
				return nil, invalidf("%s: OutN %q is also an output of %q", owner(), u.OutN, st.OpAmps[k/2].Ref)
			}
			t.union(on, 1)
		}
		if u.Out == InN {
			return nil, invalidf("%s: Out %q is a stage input", owner(), u.Out)
		}
		outs = append(outs, o, on) // two entries per op-amp: Out, OutN (−1)
		t.union(o, 1)
	}
	if st.Out == "" {
		return nil, invalidf("Out is not set")
	}
	if k := t.index(st.Out); k < 0 || !slices.Contains(outs, k) && !st.drivesOut() {
		return nil, invalidf("Out %q is not an op-amp output", st.Out)
	}
	if st.Differential() {
		fda := slices.IndexFunc(st.OpAmps, func(u OpAmp) bool {
			return u.Out == st.Out && u.OutN == st.OutN || u.Out == st.OutN && u.OutN == st.Out
		})
		if fda < 0 {
			return nil, invalidf("Out %q and OutN %q are not the two outputs of one fully differential op-amp", st.Out, st.OutN)
		}
	}
	inn := t.index(InN)
	switch {
	case st.DiffIn && !st.Differential():
		return nil, invalidf("DiffIn is set on a stage whose output is not differential (OutN unset)")
	case st.DiffIn && inn < 0:
		return nil, invalidf("DiffIn is set but no part uses node %q", InN)
	case st.DiffIn:
		t.terminals[inn]++ // the source drives InN
		t.union(inn, 1)
	case inn >= 0:
		return nil, invalidf("node %q is reserved for the negative input of a stage with DiffIn", InN)
	}
	for i, n := range t.names {
		if i == 1 {
			continue // ground
		}
		if t.terminals[i] < 2 {
			return nil, invalidf("node %q has only one connection", n)
		}
		if t.find(i) != t.find(1) {
			return nil, invalidf("node %q has no path to ground through parts or op-amp outputs", n)
		}
	}
	return t, nil
}

// Validate checks the whole chain: at least one stage, the model (see
// [Model.Validate]) and every stage (see [Stage.Validate]), that no
// stage but the last carries converter driver parts, and that a stage
// after a differential stage takes a differential input (DiffIn) and
// only such a stage does (the first stage's DiffIn says the source is
// differential). Errors name the
// stage (1-based) and the field, and wrap [ErrInvalid].
func (c Chain) Validate() error {
	if len(c.Stages) == 0 {
		return invalidf("chain has no stages")
	}
	if err := c.Model.Validate(); err != nil {
		return err
	}
	for k, st := range c.Stages {
		if err := st.Validate(); err != nil {
			return fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
		}
		if k < len(c.Stages)-1 && st.HasDriver() {
			return invalidf("stage %d (%s): only the last stage may carry the converter driver", k+1, st.Topology)
		}
		if k > 0 && st.DiffIn != c.Stages[k-1].Differential() {
			return invalidf("stage %d (%s): DiffIn is %v after a stage whose output differential is %v", k+1, st.Topology, st.DiffIn, c.Stages[k-1].Differential())
		}
		if st.Differential() && st.HasDriver() {
			return invalidf("stage %d (%s): a differential stage cannot carry the (single-ended) converter driver", k+1, st.Topology)
		}
	}
	return nil
}

// nodeTable numbers a stage's nodes in order of first appearance, In
// first and Ground second, with a terminal count and a disjoint-set forest
// over them. Stages have few nodes, so lookups are linear scans.
type nodeTable struct {
	names     []string
	terminals []int
	parent    []int
}

func newNodeTable() *nodeTable {
	t := &nodeTable{
		names:     make([]string, 0, 16),
		terminals: make([]int, 0, 16),
		parent:    make([]int, 0, 16),
	}
	t.add(In)
	t.add(Ground)
	t.union(0, 1) // through the source
	return t
}

// index returns the number of node n, or −1.
func (t *nodeTable) index(n string) int { return slices.Index(t.names, n) }

// add returns the number of node n, adding it if new. prev is the name of
// an existing node that differs from n only in case, or "".
func (t *nodeTable) add(n string) (i int, prev string) {
	if i := t.index(n); i >= 0 {
		return i, ""
	}
	for _, m := range t.names {
		if strings.EqualFold(m, n) {
			return -1, m
		}
	}
	t.names = append(t.names, n)
	t.terminals = append(t.terminals, 0)
	t.parent = append(t.parent, len(t.parent))
	return len(t.names) - 1, ""
}

func (t *nodeTable) find(i int) int {
	for t.parent[i] != i {
		t.parent[i] = t.parent[t.parent[i]]
		i = t.parent[i]
	}
	return i
}

func (t *nodeTable) union(a, b int) { t.parent[t.find(a)] = t.find(b) }
