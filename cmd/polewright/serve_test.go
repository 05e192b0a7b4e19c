package main

import (
	"bytes"
	"context"
	"io"
	"net/http"
	"regexp"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// syncBuffer is a bytes.Buffer safe for the server's goroutines.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// TestServe starts the server on a free loopback port, reads the URL it
// prints, fetches the form and stops it as SIGINT would (by ending ctx).
func TestServe(t *testing.T) {
	t.Parallel()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var stderr syncBuffer
	done := make(chan int, 1)
	go func() { done <- serve(ctx, []string{"-addr", "127.0.0.1:0"}, &stderr) }()

	urlRE := regexp.MustCompile(`serving the workbench at (http://127\.0\.0\.1:\d+/)`)
	var url string
	require.Eventually(t, func() bool {
		m := urlRE.FindStringSubmatch(stderr.String())
		if m != nil {
			url = m[1]
		}
		return m != nil
	}, 5*time.Second, 10*time.Millisecond, "the URL is printed: %s", stderr.String())

	res, err := http.Get(url)
	require.NoError(t, err)
	body, err := io.ReadAll(res.Body)
	res.Body.Close()
	require.NoError(t, err)
	require.Equal(t, http.StatusOK, res.StatusCode)
	require.Contains(t, string(body), `action="/design"`)

	cancel()
	select {
	case code := <-done:
		require.Equal(t, exitOK, code, stderr.String())
	case <-time.After(15 * time.Second):
		t.Fatal("the server did not shut down")
	}
	require.Contains(t, stderr.String(), "msg=request")
	require.Contains(t, stderr.String(), "request_id=")
	require.Contains(t, stderr.String(), "shutting down")
}

func TestServeErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"bad flag", []string{"-port", "1"}, exitUsage, "flag provided but not defined"},
		{"extra argument", []string{"now"}, exitUsage, "unexpected argument"},
		{"bad address", []string{"-addr", "127.0.0.1:99999"}, exitError, "polewright serve:"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var stderr syncBuffer
			code := serve(context.Background(), tc.args, &stderr)
			require.Equal(t, tc.code, code)
			require.Contains(t, stderr.String(), tc.want)
		})
	}
}

// TestServeHosts starts the server with -host and checks which Host
// headers it answers: the loopback names, the -addr host and the added
// name; any other is refused (421).
func TestServeHosts(t *testing.T) {
	t.Parallel()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var stderr syncBuffer
	done := make(chan int, 1)
	go func() {
		done <- serve(ctx, []string{"-addr", "127.0.0.1:0", "-host", "bench.lan", "-host", "scope.lan,rig.lan"}, &stderr)
	}()
	urlRE := regexp.MustCompile(`serving the workbench at (http://127\.0\.0\.1:\d+/)`)
	var url string
	require.Eventually(t, func() bool {
		m := urlRE.FindStringSubmatch(stderr.String())
		if m != nil {
			url = m[1]
		}
		return m != nil
	}, 5*time.Second, 10*time.Millisecond, "the URL is printed: %s", stderr.String())

	tests := []struct {
		host string
		want int
	}{
		{"", http.StatusOK}, // the URL's own host, 127.0.0.1:PORT
		{"localhost:8080", http.StatusOK},
		{"[::1]:8080", http.StatusOK},
		{"bench.lan:8080", http.StatusOK},
		{"scope.lan", http.StatusOK},
		{"rig.lan", http.StatusOK},
		{"attacker.example", http.StatusMisdirectedRequest},
	}
	client := &http.Client{Timeout: 10 * time.Second}
	for _, tc := range tests {
		req, err := http.NewRequestWithContext(ctx, "GET", url+"healthz", nil)
		require.NoError(t, err)
		if tc.host != "" {
			req.Host = tc.host
		}
		res, err := client.Do(req)
		require.NoError(t, err)
		_, _ = io.Copy(io.Discard, res.Body)
		require.NoError(t, res.Body.Close())
		require.Equal(t, tc.want, res.StatusCode, tc.host)
	}
	cancel()
	select {
	case code := <-done:
		require.Equal(t, exitOK, code, stderr.String())
	case <-time.After(15 * time.Second):
		t.Fatal("the server did not shut down")
	}
}

func TestListenHosts(t *testing.T) {
	t.Parallel()
	tests := []struct {
		addr string
		want []string // nil: the machine's names, not checked here
		none bool
	}{
		{addr: "127.0.0.1:8080", want: []string{"127.0.0.1"}},
		{addr: "bench.lan:8080", want: []string{"bench.lan"}},
		{addr: "[fd00::7]:8080", want: []string{"fd00::7"}},
		{addr: "nonsense", none: true},
	}
	for _, tc := range tests {
		t.Run(tc.addr, func(t *testing.T) {
			t.Parallel()
			got := listenHosts(tc.addr)
			if tc.none {
				require.Empty(t, got)
				return
			}
			require.Equal(t, tc.want, got)
		})
	}
}

func TestHostFlag(t *testing.T) {
	t.Parallel()
	tests := []struct {
		value string
		want  []string
		ok    bool
	}{
		{"bench.lan", []string{"bench.lan"}, true},
		{"a.lan, b.lan", []string{"a.lan", "b.lan"}, true},
		{"", nil, false},
		{"a.lan,,b.lan", nil, false},
		{"http://a.lan/", nil, false},
	}
	for _, tc := range tests {
		t.Run(tc.value, func(t *testing.T) {
			t.Parallel()
			var l hostList
			err := l.Set(tc.value)
			if !tc.ok {
				require.Error(t, err)
				return
			}
			require.NoError(t, err)
			require.Equal(t, tc.want, []string(l))
		})
	}
}
