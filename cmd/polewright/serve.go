package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"os"
	"strings"
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
	var hosts hostList
	fs.Var(&hosts, "host", "a name the workbench answers to besides the loopback names and the -addr host (repeatable, or comma-separated)")
	// serve is also what polewright runs with no command, so a mistake
	// here is answered with the whole usage.
	if err := fs.Parse(args); err != nil {
		code := flagError(stderr, "serve", err)
		if code != exitOK {
			fmt.Fprint(stderr, "\n"+usageText())
		}
		return code
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "polewright serve: unexpected argument %q\n\n%s", clip(fs.Arg(0)), usageText())
		return exitUsage
	}
	log := slog.New(slog.NewTextHandler(stderr, nil))
	ln, err := net.Listen("tcp", *addr)
	if err != nil {
		fmt.Fprintf(stderr, "polewright serve: %v\n", err)
		return exitError
	}
	deps := workbenchDeps()
	deps.Hosts = append(listenHosts(*addr), hosts...)
	srv := &http.Server{
		Handler:           web.New(log, deps),
		ReadHeaderTimeout: readHeaderTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      writeTimeout,
		IdleTimeout:       idleTimeout,
		MaxHeaderBytes:    64 << 10,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
	fmt.Fprintf(stderr, "polewright: serving the workbench at %s (Ctrl-C stops it; polewright -h lists the commands)\n", serveURL(ln.Addr()))

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

// hostList is the value of the repeatable -host flag.
type hostList []string

func (l *hostList) String() string { return strings.Join(*l, ",") }

func (l *hostList) Set(v string) error {
	for _, name := range strings.Split(v, ",") {
		name = strings.TrimSpace(name)
		if name == "" || strings.ContainsAny(name, "/ ") {
			return fmt.Errorf("-host: %q is not a host name", name)
		}
		*l = append(*l, name)
	}
	return nil
}

// listenHosts are the Host names that reach a server listening on addr:
// its host, or, when it listens on every address (":8080", "0.0.0.0:8080"),
// the machine's name and its interface addresses. The loopback names are
// accepted by package web in any case.
func listenHosts(addr string) []string {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return nil
	}
	if ip := net.ParseIP(host); host != "" && (ip == nil || !ip.IsUnspecified()) {
		return []string{host}
	}
	var out []string
	if name, err := os.Hostname(); err == nil && name != "" {
		out = append(out, name)
	}
	if addrs, err := net.InterfaceAddrs(); err == nil {
		for _, a := range addrs {
			if ipn, ok := a.(*net.IPNet); ok {
				out = append(out, ipn.IP.String())
			}
		}
	}
	return out
}
