package eseries_test

import (
	"fmt"

	"github.com/polewright/polewright/standards/eseries"
)

func ExampleLookup() {
	s, err := eseries.Lookup("e24")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s.Name(), s.Len(), s.TolerancePct())
	// A computed 4.8 kΩ resistor is bought as 4.7 kΩ, a 9.9 nF capacitor
	// as 10 nF (the next decade is nearer by ratio).
	fmt.Println(s.Nearest(4.8e3))
	fmt.Println(s.Nearest(9.9e-9))

	_, err = eseries.Lookup("E7")
	fmt.Println(err)
	// Output:
	// E24 24 5
	// 4700
	// 1e-08
	// eseries: unknown series "E7" (valid: E3, E6, E12, E24, E48, E96, E192)
}

func ExampleSeries_InRange() {
	e12, _ := eseries.Lookup("E12")
	fmt.Println(e12.InRange(1e3, 10e3))
	// Values below 1 are exact decimals too, not mantissa×1e-9 products.
	e6, _ := eseries.Lookup("E6")
	fmt.Println(e6.InRange(1e-9, 10e-9))
	// Output:
	// [1000 1200 1500 1800 2200 2700 3300 3900 4700 5600 6800 8200 10000]
	// [1e-09 1.5e-09 2.2e-09 3.3e-09 4.7e-09 6.8e-09 1e-08]
}

func ExampleSeries_Neighbours() {
	e24, _ := eseries.Lookup("E24")
	fmt.Println(e24.Neighbours(9.9))
	fmt.Println(e24.Neighbours(4.3e3))
	// Output:
	// 9.1 10
	// 4300 4300
}

func ExampleSeries_Decades() {
	e3, _ := eseries.Lookup("E3")
	for v := range e3.Decades(1e-12, 1e-9) {
		fmt.Print(v, " ")
	}
	fmt.Println()
	// Output:
	// 1e-12 2.2e-12 4.7e-12 1e-11 2.2e-11 4.7e-11 1e-10 2.2e-10 4.7e-10 1e-09
}
