package synth

import (
	"regexp"

	"github.com/polewright/polewright/synth/circuit"
)

// localRef matches a stage-local designator standing alone in a sentence:
// R, C or U and a number from 1 to 99 ("C1/C2", "R3·C1", "R10/R8").
var localRef = regexp.MustCompile(`\b[RCU][1-9][0-9]?\b`)

// chainWideRefs rewrites the stage-local designators in text that name a
// part or an op-amp of stage k (1-based) of ch as their
// chain-wide designators ([circuit.Chain.Ref]: "C1" of stage 2 is
// "C201"), so that a reason names the parts as the schematic, the SPICE
// deck and the bill of materials do. A designator that names nothing in
// the stage is left as it is.
func chainWideRefs(text string, ch circuit.Chain, k int) string {
	if k < 1 || k > len(ch.Stages) {
		return text
	}
	st := ch.Stages[k-1]
	has := map[string]bool{}
	for _, p := range st.Parts {
		has[p.Ref] = true
	}
	for _, u := range st.OpAmps {
		has[u.Ref] = true
	}
	return localRef.ReplaceAllStringFunc(text, func(local string) string {
		if g := ch.Ref(k, local); has[local] && g != "" {
			return g
		}
		return local
	})
}
