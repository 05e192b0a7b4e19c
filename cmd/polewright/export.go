package main

import (
	"context"
	"fmt"
	"io"
)

// exportKindList names the kinds that export writes.
const exportKindList = "json"

func export(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := newFlags("export", stderr)
	specPath := fs.String("spec", "", "spec JSON file, - for standard input")
	kind := fs.String("as", "", "what to write: "+exportKindList)
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "export", err)
	}
	switch *kind {
	case "json":
	case "":
		fmt.Fprintf(stderr, "polewright export: -as KIND is required (KIND: %s)\n", exportKindList)
		return exitUsage
	default:
		fmt.Fprintf(stderr, "polewright export: -as %q is not a kind this build writes (KIND: %s)\n", *kind, exportKindList)
		return exitUsage
	}
	d, code := build(ctx, "export", *specPath, stdin, stderr)
	if d == nil {
		return code
	}
	return writeJSON(d, stdout, stderr)
}
