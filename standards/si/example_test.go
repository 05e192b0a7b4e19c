package si_test

import (
	"fmt"

	"github.com/polewright/polewright/standards/si"
)

func ExampleFormat() {
	fmt.Println(si.Format(15915.494, "Hz", 4))
	fmt.Println(si.Format(999.96, "Hz", 4)) // rounds up to the next prefix
	fmt.Println(si.Format(2.2e-8, "F", 4))
	fmt.Println(si.Format(-3.3e-10, "F", 2))
	// Output:
	// 15.92 kHz
	// 1 kHz
	// 22 nF
	// −330 pF
}
