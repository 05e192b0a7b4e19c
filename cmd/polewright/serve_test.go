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
