package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
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
	if len(args) > 0 {
		switch args[0] {
		case "help", "-h", "-help", "--help":
			fmt.Fprint(stdout, usageText())
			return exitOK
		}
	}
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
	case "explore":
		return exploreCmd(ctx, args, stdin, stdout, stderr)
	}
	fmt.Fprintf(stderr, "polewright: unknown command %q (commands: serve, design, export, explore, help)\n\n%s", clip(cmd), usageText())
	return exitUsage
}

// usageText is the help of the command, with the export kinds of
// package export.
func usageText() string {
	return `polewright designs active analog filters.

  polewright serve  [-addr 127.0.0.1:8080] [-host NAME]   the workbench in a browser
                   (it answers to localhost, 127.0.0.1, [::1], the -addr host and each -host NAME)
  polewright design -spec FILE [-trials N] [-seed S]   design as JSON on stdout
  polewright export -spec FILE -as KIND [-trials N] [-seed S]
                   KIND: ` + strings.Join(export.Kinds, ", ") + `
  polewright explore -spec FILE              every candidate filter for the spec, compared, as JSON

-spec - reads standard input.
`
}

// newFlags returns a flag set that reports its errors in one line.
func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	return fs
}

func flagError(stderr io.Writer, cmd string, err error) int {
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stderr, usageText())
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
// override the spec's montecarlo object when given. The flags keep their
// text; apply validates it as the spec's fields are validated, so that a
// bad value (-trials -5) is a *synth.FieldError naming the field.
type mcFlags struct {
	trials, seed *string
}

func addMCFlags(fs *flag.FlagSet) *mcFlags {
	m := &mcFlags{}
	fs.Func("trials", fmt.Sprintf("Monte Carlo trials, overriding the spec's montecarlo.trials (0..%d)", synth.MaxTrials), func(v string) error {
		m.trials = &v
		return nil
	})
	fs.Func("seed", "Monte Carlo seed, overriding the spec's montecarlo.seed (0..2^53)", func(v string) error {
		m.seed = &v
		return nil
	})
	return m
}

// jsonNumber is RFC 8259's number grammar: a flag's number is written as
// the spec's JSON would write it.
var jsonNumber = regexp.MustCompile(`^-?(?:0|[1-9][0-9]*)(?:\.[0-9]+)?(?:[eE][+-]?[0-9]+)?$`)

// flagWhole reads the text of flag name, which sets spec field field: a
// whole number from 0 to max.
func flagWhole(field, name, text string, max float64) (float64, error) {
	v, err := strconv.ParseFloat(text, 64)
	if !jsonNumber.MatchString(text) || err != nil || v != math.Trunc(v) || v < 0 || v > max {
		return 0, &synth.FieldError{Field: field, Reason: fmt.Sprintf("must be from 0 to %.0f, a whole number (got %q from -%s)", max, clip(text), name)}
	}
	return v, nil
}

// clip cuts s to 40 characters for an error message.
func clip(s string) string {
	if r := []rune(s); len(r) > 40 {
		return string(r[:40]) + "…"
	}
	return s
}

// apply writes the flags that were given into s and validates it again.
func (m mcFlags) apply(s *synth.Spec) error {
	if m.trials != nil {
		v, err := flagWhole("montecarlo.trials", "trials", *m.trials, synth.MaxTrials)
		if err != nil {
			return err
		}
		s.MonteCarlo.Trials = int(v)
	}
	if m.seed != nil {
		v, err := flagWhole("montecarlo.seed", "seed", *m.seed, 1<<53)
		if err != nil {
			return err
		}
		s.MonteCarlo.Seed = uint64(v)
	}
	return s.Validate()
}

// build reads the spec and synthesises it; a failure has been reported on
// stderr and its exit status is returned.
func build(ctx context.Context, cmd, path string, mc *mcFlags, stdin io.Reader, stderr io.Writer) (*synth.Design, int) {
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
