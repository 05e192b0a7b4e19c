package draw_test

import (
	"bytes"
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
	"github.com/polewright/polewright/web/draw"
)

func TestDraw(t *testing.T) {
	t.Parallel()
	// A Butterworth lowpass of our own: 1 kHz, 40 dB at 4 kHz.
	spec, err := synth.ParseSpecBytes([]byte(`{"passband_hz": 1000, "stopband_hz": 4000}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	deps := draw.Deps()
	for name, plot := range map[string]func(*bytes.Buffer) error{
		"bode":  func(b *bytes.Buffer) error { return deps.Plots.Bode(b, d) },
		"delay": func(b *bytes.Buffer) error { return deps.Plots.GroupDelay(b, d) },
		"step":  func(b *bytes.Buffer) error { return deps.Plots.Step(b, d) },
	} {
		var b bytes.Buffer
		require.NoError(t, plot(&b), name)
		require.Contains(t, b.String(), "<svg", name)
	}
	ch, err := d.Chain()
	if err != nil {
		t.Skipf("no circuit in this build: %v", err)
	}
	var b bytes.Buffer
	require.NoError(t, deps.Schematics.Stage(&b, ch, 1))
	require.Contains(t, b.String(), "<svg")
	require.Contains(t, b.String(), ch.Ref(1, ch.Stages[0].Parts[0].Ref), "chain-wide designators")
	require.Error(t, deps.Schematics.Stage(&b, ch, 0))
	require.Error(t, deps.Schematics.Stage(&b, ch, len(ch.Stages)+1))
}

// TestFigureWidthAgrees: the page shows its plots at web.FigureWidthPx,
// and plotting sizes their text for plotting.PageFigureWidthPx: one width.
func TestFigureWidthAgrees(t *testing.T) {
	require.Equal(t, web.FigureWidthPx, plotting.PageFigureWidthPx)
}
