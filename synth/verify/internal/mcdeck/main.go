// Command mcdeck writes an ngspice Monte Carlo deck of the reference chain
// of the Monte Carlo benchmark (package mcbench: an 8th-order Butterworth
// lowpass as four unity-gain Sallen-Key stages, 1 MHz single-pole
// op-amps) to standard output, for testdata/bench/montecarlo.sh:
//
//	go run ./synth/verify/internal/mcdeck -trials 200 > mc.cir
//
// The circuit is circuit.Chain.WriteSPICE's deck unchanged; its .control
// block is replaced by ngspice's own Monte Carlo idiom (as in the
// examples/Monte_Carlo decks that ship with ngspice): a dowhile loop
// that, per trial, draws every resistor and capacitor uniformly within
// its tolerance with `alter` and sunif, runs the AC sweep (`ac dec PPD
// 10 100k`, 201 points at the default 50 per decade), takes the
// magnitude in dB and its worst stopband value, and destroys the run's
// plot so that memory stays flat.
package main

import (
	"bufio"
	"bytes"
	"flag"
	"fmt"
	"math"
	"os"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify/internal/mcbench"
)

func main() {
	trials := flag.Int("trials", 100, "Monte Carlo trials")
	ppd := flag.Int("ppd", 50, "points per decade of the AC sweep (50 over 4 decades: 201 points)")
	flag.Parse()
	if err := run(*trials, *ppd); err != nil {
		fmt.Fprintln(os.Stderr, "mcdeck:", err)
		os.Exit(1)
	}
}

func run(trials, ppd int) error {
	ch := mcbench.Chain(mcbench.SinglePole)
	var deck bytes.Buffer
	err := ch.WriteSPICE(&deck, circuit.SpiceOptions{
		Title:           "polewright Monte Carlo benchmark: 8th-order Butterworth lowpass, 4 Sallen-Key stages",
		PointsPerDecade: ppd,
		StartHz:         mcbench.StartHz,
		StopHz:          mcbench.StopHz,
	})
	if err != nil {
		return err
	}
	w := bufio.NewWriter(os.Stdout)
	defer w.Flush()
	in := bufio.NewScanner(&deck)
	skip := false
	var sweep string
	for in.Scan() {
		line := in.Text()
		switch {
		case strings.HasPrefix(line, ".ac "):
			sweep = strings.TrimPrefix(line, ".")
			continue // the loop runs the sweep itself
		case line == ".control":
			skip = true
			continue
		case line == ".endc":
			skip = false
			writeControl(w, ch, trials, sweep)
			continue
		}
		if !skip {
			fmt.Fprintln(w, line)
		}
	}
	if err := in.Err(); err != nil {
		return err
	}
	if sweep == "" {
		return fmt.Errorf("no .ac line in the deck")
	}
	return nil
}

// writeControl writes the Monte Carlo .control block.
func writeControl(w *bufio.Writer, ch circuit.Chain, trials int, sweep string) {
	fmt.Fprintln(w, ".control")
	fmt.Fprintln(w, "define unif(nom, rvar) (nom + (nom*rvar) * sunif(0))")
	fmt.Fprintf(w, "let mc_runs = %d\n", trials)
	fmt.Fprintln(w, "let run = 0")
	fmt.Fprintln(w, "let worst = -1000")
	fmt.Fprintln(w, "dowhile run < mc_runs")
	for k, st := range ch.Stages {
		for _, p := range st.Parts {
			name := strings.ToLower(circuit.SpiceName(ch.Ref(k+1, p.Ref)))
			fmt.Fprintf(w, "  alter %s = unif(%.17g, %g)\n", name, p.Value, p.TolerancePct/100)
		}
	}
	fmt.Fprintf(w, "  %s\n", sweep)
	fmt.Fprintln(w, "  let mag = vdb(out)")
	fmt.Fprintf(w, "  let sb = mag[%d]\n", stopIndex(sweep))
	fmt.Fprintln(w, "  if sb > worst")
	fmt.Fprintln(w, "    let worst = sb")
	fmt.Fprintln(w, "  end")
	fmt.Fprintln(w, "  destroy $curplot")
	fmt.Fprintln(w, "  let run = run + 1")
	fmt.Fprintln(w, "end")
	fmt.Fprintln(w, "echo mc_runs $&mc_runs worst stopband gain $&worst dB")
	fmt.Fprintln(w, "quit")
	fmt.Fprintln(w, ".endc")
}

// stopIndex returns the index of the first sweep point at or above the
// stopband edge, for `ac dec N start stop`.
func stopIndex(sweep string) int {
	var ppd int
	var start, stop float64
	if _, err := fmt.Sscanf(sweep, "ac dec %d %g %g", &ppd, &start, &stop); err != nil || ppd < 1 {
		return 0
	}
	return int(math.Ceil(float64(ppd)*math.Log10(mcbench.StopEdgeHz/start) - 1e-9))
}
