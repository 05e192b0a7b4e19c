package schematic

import (
	"io"
	"testing"
)

// BenchmarkStageStateVariable renders the four-op-amp state-variable notch
// stage (13 parts).
func BenchmarkStageStateVariable(b *testing.B) {
	st := stateVariable("out", true)
	opt := Options{Title: "state-variable notch", Refs: chainRefs}
	b.ReportAllocs()
	for b.Loop() {
		if err := Stage(io.Discard, st, opt); err != nil {
			b.Fatal(err)
		}
	}
}
