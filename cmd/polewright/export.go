package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
)

// exportKindList names the kinds that export writes.
var exportKindList = strings.Join(export.Kinds, " | ")

func exportCmd(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := newFlags("export", stderr)
	specPath := fs.String("spec", "", "spec JSON file, - for standard input")
	kind := fs.String("as", "", "what to write: "+exportKindList)
	mc := addMCFlags(fs)
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "export", err)
	}
	switch {
	case *kind == "":
		fmt.Fprintf(stderr, "polewright export: -as KIND is required (KIND: %s)\n", exportKindList)
		return exitUsage
	case !export.Known(*kind):
		fmt.Fprintf(stderr, "polewright export: -as %q is not a kind this build writes (KIND: %s)\n", *kind, exportKindList)
		return exitUsage
	}
	d, code := build(ctx, "export", *specPath, mc, stdin, stderr)
	if d == nil {
		return code
	}
	if err := export.Write(stdout, d, *kind); err != nil {
		if errors.Is(err, synth.ErrNoCircuit) {
			fmt.Fprintf(stderr, "polewright export: %s: %v\n", *kind, err)
			return exitError
		}
		fmt.Fprintf(stderr, "polewright export: %s: %s\n", *kind, oneLine(err.Error()))
		return exitError
	}
	return exitOK
}
