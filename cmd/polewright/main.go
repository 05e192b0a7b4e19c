// Command polewright designs active analog filters: from a requirement to
// poles, zeros and op-amp sections, on the command line or in a browser.
//
// Usage:
//
//	polewright                                 same as serve (one line says where it serves)
//	polewright help                            this usage (also -h, --help)
//	polewright serve  [-addr 127.0.0.1:8080]   the workbench in a browser
//	polewright design -spec FILE               design as JSON on stdout
//	polewright export -spec FILE -as KIND      KIND: spice | bom | json | bode-svg | passband-svg | delay-svg | step-svg |
//	                                           noise-svg | schematic-svg | report | parts
//
// -spec - reads standard input. A spec that cannot be built exits with
// status 2 and one line on stderr that begins with "spec: ".
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}
