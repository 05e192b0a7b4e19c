// Command benchdeck writes the SPICE deck of the reference chain that the
// circuit benchmarks time (package benchchain: an 8th-order Butterworth
// lowpass as four unity-gain Sallen-Key stages with 1 MHz single-pole
// op-amps) to standard output, swept from benchchain.StartHz to
// benchchain.StopHz. bench_ngspice.sh runs it:
//
//	go run ./synth/circuit/internal/benchdeck [-ppd 250] [-ideal] > deck.cir
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/internal/benchchain"
)

func main() {
	ppd := flag.Int("ppd", 250, "points per decade (250 over the 4 decades gives 1,001 points)")
	idealOp := flag.Bool("ideal", false, "use ideal op-amps instead of the single-pole model")
	start := flag.Float64("start", benchchain.StartHz, "sweep start, Hz")
	stop := flag.Float64("stop", benchchain.StopHz, "sweep stop, Hz")
	flag.Parse()
	m := benchchain.SinglePole
	if *idealOp {
		m = circuit.Model{Ideal: true}
	}
	opt := circuit.SpiceOptions{
		Title:           "polewright benchmark: 8th-order Butterworth lowpass, 4 Sallen-Key stages",
		Description:     fmt.Sprintf("f0 = %g Hz, %d points per decade from %g Hz to %g Hz", float64(benchchain.F0Hz), *ppd, *start, *stop),
		PointsPerDecade: *ppd,
		StartHz:         *start,
		StopHz:          *stop,
	}
	if err := benchchain.Chain(m).WriteSPICE(os.Stdout, opt); err != nil {
		fmt.Fprintln(os.Stderr, "benchdeck:", err)
		os.Exit(1)
	}
}
