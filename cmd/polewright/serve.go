package main

import (
	"context"
	"fmt"
	"io"
)

func serve(ctx context.Context, args []string, stderr io.Writer) int {
	fs := newFlags("serve", stderr)
	addr := fs.String("addr", "127.0.0.1:8080", "address to listen on")
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "serve", err)
	}
	_ = ctx
	fmt.Fprintf(stderr, "polewright serve: the workbench is not built yet (would listen on %s); use design or export\n", *addr)
	return exitError
}
