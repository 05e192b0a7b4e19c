package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/explore"
)

// exploreCmd runs `polewright explore -spec FILE`: every candidate filter
// for the spec, compared, as JSON on stdout. Errors are as for design.
func exploreCmd(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := newFlags("explore", stderr)
	specPath := fs.String("spec", "", "spec JSON file, - for standard input")
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "explore", err)
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "polewright explore: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	if *specPath == "" {
		fmt.Fprintln(stderr, "polewright explore: -spec FILE is required (- reads standard input)")
		return exitUsage
	}
	data, err := readSpecBytes(*specPath, stdin)
	var res *explore.Result
	if err == nil {
		res, err = explore.Explore(ctx, data)
	}
	if err != nil {
		if fe, ok := synth.IsFieldError(err); ok {
			fmt.Fprintln(stderr, oneLine(fe.Error()))
			return exitUsage
		}
		fmt.Fprintf(stderr, "polewright explore: %s\n", oneLine(err.Error()))
		return exitError
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	if err := enc.Encode(res); err != nil {
		fmt.Fprintf(stderr, "polewright: cannot encode the exploration: %v\n", err)
		return exitError
	}
	if _, err := stdout.Write(buf.Bytes()); err != nil {
		fmt.Fprintf(stderr, "polewright: %v\n", err)
		return exitError
	}
	return exitOK
}

// readSpecBytes reads the spec file named by path ("-" for stdin), at
// most synth.MaxSpecBytes; the errors are those of synth.ParseSpec.
func readSpecBytes(path string, stdin io.Reader) ([]byte, error) {
	var r io.Reader = stdin
	if path != "-" {
		f, err := os.Open(path)
		if err != nil {
			return nil, &synth.FieldError{Field: "json", Reason: fmt.Sprintf("cannot open the spec file: %v", err)}
		}
		defer f.Close()
		r = f
	}
	data, err := io.ReadAll(io.LimitReader(r, synth.MaxSpecBytes+1))
	if err != nil {
		return nil, &synth.FieldError{Field: "json", Reason: fmt.Sprintf("cannot read the spec: %v", err)}
	}
	if len(data) > synth.MaxSpecBytes {
		return nil, &synth.FieldError{Field: "json", Reason: fmt.Sprintf("the spec is larger than %d bytes (1 MiB)", synth.MaxSpecBytes)}
	}
	return data, nil
}
