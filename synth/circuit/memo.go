package circuit

import (
	"encoding/binary"
	"math"
	"sync"
)

// Memo remembers the transfer functions of stages by their content (the
// topology, every part and op-amp, the output), the op-amp model, the
// node and the scale, for the analyses of one design that ask for the same
// stage's transfer function again (the as-built response, the op-amp
// needs, the sensitivities, fail_at_pct, the noise). A Chain carries one
// in its Memo field; [Chain.TransferFunctions] and [Memo.TransferFunction]
// consult it. It keeps at most memoMax entries (further ones are computed
// and not kept) and is safe for concurrent use. The zero value is not
// usable: make one with [NewMemo]; a nil *Memo remembers nothing.
type Memo struct {
	mu sync.Mutex
	m  map[string]Rational
	p  map[string]portPolys // Stage.ports
}

// memoMax bounds a Memo (one design has a few dozen distinct stage
// analyses; a Monte Carlo's perturbed stages are not worth keeping).
const memoMax = 256

// NewMemo returns an empty memo.
func NewMemo() *Memo { return &Memo{m: map[string]Rational{}, p: map[string]portPolys{}} }

// TransferFunction is [Stage.TransferFunction] through the memo.
func (mm *Memo) TransferFunction(st Stage, m Model) (Rational, error) {
	if err := m.Validate(); err != nil {
		return Rational{}, err
	}
	t, err := st.check()
	if err != nil {
		return Rational{}, err
	}
	return mm.transfer(st, m, t, 0, st.output())
}

// transfer is nodeTransfer through the memo (a nil memo computes).
func (mm *Memo) transfer(st Stage, m Model, t *nodeTable, scale float64, node string) (Rational, error) {
	if mm == nil {
		return st.nodeTransfer(m, t, scale, node)
	}
	key := memoKey(st, m, node, scale)
	mm.mu.Lock()
	r, ok := mm.m[key]
	mm.mu.Unlock()
	if ok {
		return r.clone(), nil
	}
	// With an output resistance, a single-ended stage's transfer to its
	// output comes with its ports (for Chain.Loading) from the same
	// factorisations.
	if m.OutputResistanceOhm > 0 && !m.Ideal && !st.Differential() && node == st.Out && scale == 0 {
		if r, pp, err := st.nodeTransferPorts(m, t, scale, node, true); err == nil {
			mm.mu.Lock()
			if len(mm.m)+len(mm.p)+2 <= memoMax {
				mm.m[key] = r.clone()
				mm.p[memoKey(st, m, portsNode, 0)] = pp
			}
			mm.mu.Unlock()
			return r, nil
		}
	}
	r, err := st.nodeTransfer(m, t, scale, node)
	if err != nil {
		return r, err
	}
	mm.mu.Lock()
	if len(mm.m)+len(mm.p) < memoMax {
		mm.m[key] = r.clone()
	}
	mm.mu.Unlock()
	return r, nil
}

// portsNode is the node of a memo key for a stage's port functions (see
// Stage.ports): no node is named with a NUL.
const portsNode = "\x00ports"

// ports is Stage.ports through the memo (a nil memo computes). The
// polynomials are shared: callers only read them.
func (mm *Memo) ports(st Stage, m Model) (portPolys, error) {
	if mm == nil {
		return st.ports(m)
	}
	key := memoKey(st, m, portsNode, 0)
	mm.mu.Lock()
	pp, ok := mm.p[key]
	mm.mu.Unlock()
	if ok {
		return pp, nil
	}
	pp, err := st.ports(m)
	if err != nil {
		return pp, err
	}
	mm.mu.Lock()
	if len(mm.m)+len(mm.p) < memoMax {
		mm.p[key] = pp
	}
	mm.mu.Unlock()
	return pp, nil
}

// clone returns r with coefficient slices of its own.
func (r Rational) clone() Rational {
	r.Num = append([]float64(nil), r.Num...)
	r.Den = append([]float64(nil), r.Den...)
	return r
}

// memoKey encodes everything a stage's transfer function depends on:
// every field of Stage, Part, OpAmp and Model (TestMemoKeyCoversFields
// fails when one is added and not encoded here), the node and the scale.
func memoKey(st Stage, m Model, node string, scale float64) string {
	b := make([]byte, 0, 64+48*len(st.Parts)+24*len(st.OpAmps))
	str := func(s string) []byte {
		b = binary.AppendUvarint(b, uint64(len(s)))
		return append(b, s...)
	}
	f64 := func(v float64) []byte { return binary.LittleEndian.AppendUint64(b, math.Float64bits(v)) }
	flag := func(v bool) []byte {
		if v {
			return append(b, 1)
		}
		return append(b, 0)
	}
	b = str(st.Topology)
	b = str(st.Out)
	b = str(st.OutN)
	b = flag(st.DiffIn)
	b = binary.AppendUvarint(b, uint64(len(st.Parts)))
	for _, p := range st.Parts {
		b = str(p.Ref)
		b = str(string(p.Kind))
		b = str(p.A)
		b = str(p.B)
		b = f64(p.Value)
		b = f64(p.Exact)
		b = str(p.Series)
		b = f64(p.TolerancePct)
		b = flag(p.Parasitic)
		b = flag(p.Driver)
	}
	b = binary.AppendUvarint(b, uint64(len(st.OpAmps)))
	for _, u := range st.OpAmps {
		b = str(u.Ref)
		b = str(u.Plus)
		b = str(u.Minus)
		b = str(u.Out)
		b = str(u.OutN)
	}
	b = f64(m.GBWHz)
	b = f64(m.DCGainDB)
	b = flag(m.Ideal)
	b = f64(m.InputCapacitanceFarad)
	b = f64(m.OutputResistanceOhm)
	b = f64(m.OffsetV)
	b = f64(m.BiasA)
	b = str(node)
	b = f64(scale)
	return string(b)
}
