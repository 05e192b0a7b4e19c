package explore_test

import (
	"context"
	"fmt"

	"github.com/polewright/polewright/synth/explore"
)

// Explore a second-order 1 kHz lowpass on Sallen-Key stages with E96
// resistors: every approximation at orders 2 to 4, each designed in full.
// Without a design margin the order-2 boards, rounded to E96 and E12,
// miss the 1 dB passband edge as built; the recommendation is the
// smallest board that meets it.
func ExampleExplore() {
	res, err := explore.Explore(context.Background(), []byte(`{"passband_hz": 1000, "order": 2,
		"topology": "sallen-key", "resistor_series": "E96"}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(len(res.Candidates), "candidates,", len(res.Skipped), "not built")
	for _, o := range res.Objectives[:3] {
		fmt.Println(o.Field, o.Goal)
	}
	c := res.Candidates[res.Recommended]
	fmt.Printf("recommended: %s order %d, %d op-amp(s), %d passive parts\n", c.Approximation, c.Order, c.OpAmps, c.PassiveParts)
	// Output:
	// 18 candidates, 6 not built
	// built_meets_mask max
	// yield max
	// opamps min
	// recommended: gaussian order 2, 1 op-amp(s), 4 passive parts
}
