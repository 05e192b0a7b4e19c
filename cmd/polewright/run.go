package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/polewright/polewright/synth"
)

// Exit statuses.
const (
	exitOK    = 0
	exitError = 1 // an internal failure
	exitUsage = 2 // a bad spec or bad command line
)

// run is the whole program behind main, with its streams passed in so that
// tests can drive it.
func run(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	cmd := "serve"
	if len(args) > 0 && !strings.HasPrefix(args[0], "-") {
		cmd, args = args[0], args[1:]
	}
	switch cmd {
	case "serve":
		return serve(ctx, args, stderr)
	case "design":
		return design(ctx, args, stdin, stdout, stderr)
	case "export":
		return exportCmd(ctx, args, stdin, stdout, stderr)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return exitOK
	}
	fmt.Fprintf(stderr, "polewright: unknown command %q (commands: serve, design, export)\n", cmd)
	return exitUsage
}

const usage = `polewright designs active analog filters.

  polewright serve  [-addr 127.0.0.1:8080] [-host NAME]   the workbench in a browser
                   (it answers to localhost, 127.0.0.1, [::1], the -addr host and each -host NAME)
  polewright design -spec FILE [-trials N] [-seed S]   design as JSON on stdout
  polewright export -spec FILE -as KIND      KIND: spice, bom, json, bode-svg, delay-svg, step-svg

-spec - reads standard input.
`

// newFlags returns a flag set that reports its errors in one line.
func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	return fs
}

func flagError(stderr io.Writer, cmd string, err error) int {
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stderr, usage)
		return exitOK
	}
	fmt.Fprintf(stderr, "polewright %s: %v\n", cmd, err)
	return exitUsage
}

// readSpec reads and validates the spec named by path ("-" for stdin).
func readSpec(path string, stdin io.Reader) (synth.Spec, error) {
	var r io.Reader = stdin
	if path != "-" {
		f, err := os.Open(path)
		if err != nil {
			return synth.Spec{}, &synth.FieldError{Field: "json", Reason: fmt.Sprintf("cannot open the spec file: %v", err)}
		}
		defer f.Close()
		r = f
	}
	return synth.ParseSpec(r)
}

// mcFlags are the Monte Carlo options of design and export, which
// override the spec's montecarlo object when given.
type mcFlags struct {
	trials, seed *int64
}

func addMCFlags(fs *flag.FlagSet) mcFlags {
	return mcFlags{
		trials: fs.Int64("trials", -1, "Monte Carlo trials, overriding the spec's montecarlo.trials (0..100000)"),
		seed:   fs.Int64("seed", -1, "Monte Carlo seed, overriding the spec's montecarlo.seed"),
	}
}

// apply writes the flags that were given into s and validates it again.
func (m mcFlags) apply(s *synth.Spec) error {
	if m.trials != nil && *m.trials >= 0 {
		if *m.trials > synth.MaxTrials {
			return &synth.FieldError{Field: "montecarlo.trials", Reason: fmt.Sprintf("must be from 0 to %d (got %d from -trials)", synth.MaxTrials, *m.trials)}
		}
		s.MonteCarlo.Trials = int(*m.trials)
	}
	if m.seed != nil && *m.seed >= 0 {
		s.MonteCarlo.Seed = uint64(*m.seed)
	}
	return s.Validate()
}

// build reads the spec and synthesises it; a failure has been reported on
// stderr and its exit status is returned.
func build(ctx context.Context, cmd, path string, mc mcFlags, stdin io.Reader, stderr io.Writer) (*synth.Design, int) {
	if path == "" {
		fmt.Fprintf(stderr, "polewright %s: -spec FILE is required (- reads standard input)\n", cmd)
		return nil, exitUsage
	}
	spec, err := readSpec(path, stdin)
	if err == nil {
		err = mc.apply(&spec)
	}
	if err == nil {
		var d *synth.Design
		if d, err = synth.Synthesize(ctx, spec); err == nil {
			return d, exitOK
		}
	}
	if fe, ok := synth.IsFieldError(err); ok {
		fmt.Fprintln(stderr, oneLine(fe.Error()))
		return nil, exitUsage
	}
	fmt.Fprintf(stderr, "polewright %s: %s\n", cmd, oneLine(err.Error()))
	return nil, exitError
}

func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }

func design(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := newFlags("design", stderr)
	specPath := fs.String("spec", "", "spec JSON file, - for standard input")
	mc := addMCFlags(fs)
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "design", err)
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "polewright design: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	d, code := build(ctx, "design", *specPath, mc, stdin, stderr)
	if d == nil {
		return code
	}
	return writeJSON(d, stdout, stderr)
}

func writeJSON(d *synth.Design, stdout, stderr io.Writer) int {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	if err := enc.Encode(d); err != nil {
		fmt.Fprintf(stderr, "polewright: cannot encode the design: %v\n", err)
		return exitError
	}
	if _, err := stdout.Write(buf.Bytes()); err != nil {
		fmt.Fprintf(stderr, "polewright: %v\n", err)
		return exitError
	}
	return exitOK
}
