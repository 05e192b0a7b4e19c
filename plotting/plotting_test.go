package plotting_test

import (
	"bytes"
	"errors"
	"io"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/synth"
)

// Through the public functions, the as-built curves appear exactly when
// the design has a circuit.
func TestPublicAsBuilt(t *testing.T) {
	t.Parallel()
	d, err := design()
	require.NoError(t, err)
	_, chainErr := d.Chain()
	if chainErr != nil {
		require.ErrorIs(t, chainErr, synth.ErrNoCircuit)
	}
	for _, tc := range []struct {
		name string
		fn   func(io.Writer, *synth.Design, plotting.Options) error
	}{{"bode", plotting.Bode}, {"passband", plotting.Passband}, {"delay", plotting.GroupDelay}, {"step", plotting.Step}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			require.NoError(t, tc.fn(&buf, d, plotting.Options{}))
			require.Equal(t, chainErr == nil, bytes.Contains(buf.Bytes(), []byte(">as built</text>")))
			require.True(t, bytes.Contains(buf.Bytes(), []byte(">ideal</text>")))
		})
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

// A failing writer's error is returned.
func TestWriteError(t *testing.T) {
	t.Parallel()
	d, err := design()
	require.NoError(t, err)
	require.Error(t, plotting.Bode(failWriter{}, d, plotting.Options{}))
	require.Error(t, plotting.Step(failWriter{}, d, plotting.Options{}))
}

// The package keeps no shared state: plots can be drawn concurrently (run
// with -race).
func TestConcurrent(t *testing.T) {
	t.Parallel()
	d, err := design()
	require.NoError(t, err)
	var want bytes.Buffer
	require.NoError(t, plotting.Bode(&want, d, plotting.Options{}))
	errs := make(chan error, 8)
	outs := make(chan []byte, 8)
	for range 8 {
		go func() {
			var buf bytes.Buffer
			errs <- plotting.Bode(&buf, d, plotting.Options{})
			outs <- buf.Bytes()
		}()
	}
	for range 8 {
		require.NoError(t, <-errs)
		require.Equal(t, want.Bytes(), <-outs)
	}
}
