package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"time"

	"github.com/polewright/polewright/web"
	"github.com/polewright/polewright/web/draw"
)

// Server timeouts: a slow client cannot hold a connection open for long,
// and a result page (synthesis, three plots, the schematics) fits well
// within the write timeout.
const (
	readHeaderTimeout = 5 * time.Second
	readTimeout       = 15 * time.Second
	writeTimeout      = 30 * time.Second
	idleTimeout       = 120 * time.Second
	shutdownTimeout   = 10 * time.Second
)

// serve runs the workbench until ctx is done (SIGINT or SIGTERM), then
// shuts the server down, letting requests in progress finish.
func serve(ctx context.Context, args []string, stderr io.Writer) int {
	fs := newFlags("serve", stderr)
	addr := fs.String("addr", "127.0.0.1:8080", "address to listen on")
	if err := fs.Parse(args); err != nil {
		return flagError(stderr, "serve", err)
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "polewright serve: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	log := slog.New(slog.NewTextHandler(stderr, nil))
	ln, err := net.Listen("tcp", *addr)
	if err != nil {
		fmt.Fprintf(stderr, "polewright serve: %v\n", err)
		return exitError
	}
	srv := &http.Server{
		Handler:           web.New(log, workbenchDeps()),
		ReadHeaderTimeout: readHeaderTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      writeTimeout,
		IdleTimeout:       idleTimeout,
		MaxHeaderBytes:    64 << 10,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
	fmt.Fprintf(stderr, "polewright: serving the workbench at %s (Ctrl-C stops it)\n", serveURL(ln.Addr()))

	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	select {
	case err := <-errc:
		fmt.Fprintf(stderr, "polewright serve: %v\n", err)
		return exitError
	case <-ctx.Done():
	}
	log.Info("shutting down")
	sctx, cancel := context.WithTimeout(context.Background(), shutdownTimeout)
	defer cancel()
	if err := srv.Shutdown(sctx); err != nil {
		fmt.Fprintf(stderr, "polewright serve: shutdown: %v\n", err)
		return exitError
	}
	if err := <-errc; err != nil && !errors.Is(err, http.ErrServerClosed) {
		fmt.Fprintf(stderr, "polewright serve: %v\n", err)
		return exitError
	}
	return exitOK
}

// serveURL is the address to open in a browser for a listener on a.
func serveURL(a net.Addr) string {
	tcp, ok := a.(*net.TCPAddr)
	if !ok {
		return "http://" + a.String() + "/"
	}
	host := tcp.IP.String()
	if tcp.IP.IsUnspecified() {
		host = "localhost"
	}
	return "http://" + net.JoinHostPort(host, fmt.Sprint(tcp.Port)) + "/"
}

// workbenchDeps are the drawing and export implementations of the
// workbench: plots and schematics by our own drawing packages, exports by
// web/export.
func workbenchDeps() web.Deps {
	return draw.Deps()
}
