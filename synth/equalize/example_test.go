package equalize_test

import (
	"context"
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/equalize"
	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/xform"
)

// An order-4 Butterworth lowpass at 1 kHz has a group delay that rises by
// about 40 % of its mean towards the edge; all-pass sections bring it
// within 2 %.
func ExampleEqualize() {
	p, _ := proto.Lowpass(proto.Butterworth, 4, 3.0103, 40)
	h := xform.LowpassToLowpass(p, 2*math.Pi*1000)
	r, err := equalize.Equalize(context.Background(), h, 0, 1000, 2)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("filter %.0f %%, equalised below 2 %%: %v, sections: %d\n", r.FilterSpreadPct, r.SpreadPct <= 2, len(r.Sections))
	// Output: filter 41 %, equalised below 2 %: true, sections: 2
}
