package schematic

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/stretchr/testify/require"
)

// chainRefs maps local designators to those of stage 1 of a chain.
func chainRefs(local string) string {
	return circuit.Chain{Stages: make([]circuit.Stage, 1)}.Ref(1, local)
}

func TestLayoutInvariants(t *testing.T) {
	t.Parallel()
	for _, tc := range stages() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.NoError(t, tc.st.Validate())
			d := lay(&tc.st, chainRefs, tc.name)
			require.NoError(t, checkDrawing(d))
			require.Len(t, d.parts, len(tc.st.Parts))
			require.Len(t, d.amps, len(tc.st.OpAmps))
		})
	}
}

// TestLayoutRenamed renames the internal nodes and shuffles the parts and
// op-amps of every stage: the layout must not depend on names or order.
func TestLayoutRenamed(t *testing.T) {
	t.Parallel()
	for _, tc := range stages() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rng := rand.New(rand.NewPCG(1, uint64(len(tc.name))))
			for trial := range 20 {
				st := renamed(tc.st, rng)
				require.NoError(t, st.Validate())
				d := lay(&st, nil, "")
				require.NoError(t, checkDrawing(d), "trial %d: %+v", trial, st)
				require.Len(t, d.parts, len(st.Parts))
				require.Len(t, d.amps, len(st.OpAmps))
			}
		})
	}
}

// renamed returns st with its internal nodes renamed n1, n2, ... in a
// random order and its parts and op-amps shuffled.
func renamed(st circuit.Stage, rng *rand.Rand) circuit.Stage {
	var names []string
	note := func(n string) {
		if n != circuit.In && n != circuit.Ground && !slices.Contains(names, n) {
			names = append(names, n)
		}
	}
	for _, p := range st.Parts {
		note(p.A)
		note(p.B)
	}
	for _, u := range st.OpAmps {
		note(u.Plus)
		note(u.Minus)
		note(u.Out)
	}
	perm := rng.Perm(len(names))
	to := func(n string) string {
		if i := slices.Index(names, n); i >= 0 {
			return fmt.Sprintf("n%d", perm[i]+1)
		}
		return n
	}
	out := circuit.Stage{Topology: st.Topology, Out: to(st.Out)}
	for _, i := range rng.Perm(len(st.Parts)) {
		p := st.Parts[i]
		p.A, p.B = to(p.A), to(p.B)
		if rng.IntN(2) == 0 {
			p.A, p.B = p.B, p.A
		}
		out.Parts = append(out.Parts, p)
	}
	for _, i := range rng.Perm(len(st.OpAmps)) {
		u := st.OpAmps[i]
		u.Plus, u.Minus, u.Out = to(u.Plus), to(u.Minus), to(u.Out)
		out.OpAmps = append(out.OpAmps, u)
	}
	return out
}

// TestLayoutLongLabels: designators and values wider than a part widen the
// layout instead of overlapping.
func TestLayoutLongLabels(t *testing.T) {
	t.Parallel()
	refs := func(local string) string { return "stage-twelve/" + local + "/long" }
	for _, tc := range stages() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := lay(&tc.st, refs, tc.name)
			require.NoError(t, checkDrawing(d))
		})
	}
}

// FuzzLayout builds small random netlists: Stage never panics, rejects the
// invalid ones, and lays out the valid ones by the layout rules.
func FuzzLayout(f *testing.F) {
	for _, seed := range []string{
		"\x00\x01\x02\x10\x22\x33\x44",
		"\x05\x10\x21\x32\x43\x54\x65\x76\x87\x98",
		"\x02\x01\x00\x10\x20\x30\x40\x50",
		"\xff\xfe\xfd\xfc\xfb\xfa",
		"\x03\x02\x01\x06\x14\x25\x36\x47\x50\x61\x72\x83\x94",
	} {
		f.Add([]byte(seed))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		st := netlistFrom(data)
		var b countWriter
		err := Stage(&b, st, Options{Title: "fuzz"})
		if verr := st.Validate(); verr != nil {
			require.Error(t, err)
			require.Zero(t, b.n)
			return
		}
		require.NoError(t, err)
		require.NoError(t, checkDrawing(lay(&st, nil, "fuzz")), "%+v", st)
	})
}

type countWriter struct{ n int }

func (w *countWriter) Write(p []byte) (int, error) { w.n += len(p); return len(p), nil }

// netlistFrom decodes fuzz bytes into a stage over a few nodes: the first
// byte gives the number of op-amps (0..3), each op-amp takes one byte
// (plus, minus: two bits each from the pool; output: a fixed node), each
// following byte a part (kind bit, two nodes of three bits).
func netlistFrom(data []byte) circuit.Stage {
	pool := [...]string{circuit.In, circuit.Ground, "a", "b", "c", "o1", "o2", "o3"}
	st := circuit.Stage{Topology: "fuzz"}
	if len(data) == 0 {
		return st
	}
	na := int(data[0] % 4)
	data = data[1:]
	for k := 0; k < na && len(data) > 0; k++ {
		v := data[0]
		data = data[1:]
		pick := func(b byte) string { return pool[b%8] }
		st.OpAmps = append(st.OpAmps, circuit.OpAmp{
			Ref: fmt.Sprintf("U%d", k+1), Plus: pick(v), Minus: pick(v >> 3), Out: pool[5+k%3],
		})
	}
	if len(st.OpAmps) > 0 {
		st.Out = st.OpAmps[len(st.OpAmps)-1].Out
	}
	nr, nc := 0, 0
	for i, v := range data {
		if i >= 12 {
			break
		}
		a, b := pool[v%8], pool[(v>>3)%8]
		if v&0x40 != 0 {
			nc++
			st.Parts = append(st.Parts, circuit.Part{Ref: fmt.Sprintf("C%d", nc), Kind: circuit.Capacitor, A: a, B: b, Value: 1e-9 * float64(1+v%7)})
		} else {
			nr++
			st.Parts = append(st.Parts, circuit.Part{Ref: fmt.Sprintf("R%d", nr), Kind: circuit.Resistor, A: a, B: b, Value: 1e3 * float64(1+v%13)})
		}
	}
	return st
}
