package export_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
)

// The file names a download of each kind is offered under, and the
// grouped part list of a small lowpass.
func ExampleDesignFileName() {
	spec, err := synth.ParseSpecBytes([]byte(`{"approximation": "elliptic", "order": 5, "passband_hz": 20000, "stopband_hz": 25000,
		"passband_ripple_db": 0.5, "stopband_atten_db": 60}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := synth.Synthesize(context.Background(), spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, kind := range []string{"bode-svg", "schematic-svg", "report", "parts"} {
		fmt.Println(export.DesignFileName(d, kind))
	}
	small, err := synth.ParseSpecBytes([]byte(`{"order": 2, "passband_hz": 1000, "opamp": {"ideal": true}}`))
	if err != nil {
		fmt.Println(err)
		return
	}
	if d, err = synth.Synthesize(context.Background(), small); err != nil {
		fmt.Println(err)
		return
	}
	var b bytes.Buffer
	if err := export.Write(&b, d, "parts"); err != nil {
		fmt.Println(err)
		return
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, row := range rows { // quantity, kind, display, dielectric, refs
		fmt.Println(strings.Join([]string{row[0], row[1], row[4], row[7], row[8]}, " | "))
	}
	// Output:
	// polewright-elliptic-5-lowpass-20kHz-bode.svg
	// polewright-elliptic-5-lowpass-20kHz-schematic.svg
	// polewright-elliptic-5-lowpass-20kHz-report.html
	// polewright-elliptic-5-lowpass-20kHz-parts.csv
	// quantity | kind | display | dielectric | refs
	// 1 | resistor | 20 kΩ |  | R101
	// 1 | resistor | 28.7 kΩ |  | R102
	// 1 | capacitor | 3.3 nF | C0G/NP0 | C102
	// 1 | capacitor | 6.8 nF | C0G/NP0 | C101
	// 1 | opamp | ideal |  | U101
}
