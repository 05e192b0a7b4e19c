package synth_test

import (
	"context"
	"fmt"

	"github.com/polewright/polewright/synth"
)

// A bandstop against 50 Hz hum, fed at 100 Vpp: both safety cautions
// apply.
func ExampleDesign_MainsInStopband() {
	spec, err := synth.ParseSpecBytes([]byte(`{"response": "bandstop", "passband_hz": [40, 62], "stopband_hz": [48, 52],
		"passband_ripple_db": 3, "stopband_atten_db": 30, "gain_db": -20,
		"converter": {"bits": 16, "sample_rate_hz": 1000, "full_scale_vpp": 10}, "resistor_range_ohm": [1000, 10000000]}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := synth.Synthesize(context.Background(), spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("mains in the stopped band:", d.MainsInStopband())
	vpp, _, _, _ := d.SignalSwingVpp()
	fmt.Printf("largest swing: %.4g Vpp\n", vpp)
	for _, c := range d.Checks {
		if c.ID == synth.CheckSafetyVoltage || c.ID == synth.CheckSafetyMains {
			fmt.Println(c.ID, c.Severity)
		}
	}
	// Output:
	// mains in the stopped band: [50]
	// largest swing: 100 Vpp
	// safety-voltage warning
	// safety-mains warning
}
