// Package spicerun runs SPICE decks through ngspice in batch mode and reads
// back the AC data they write, for tests that check an analysis against the
// simulator (this package's own, the topology tests and the synth
// integration tests).
//
// A deck is run as `ngspice -b -n deck.cir` (batch mode, no user
// spiceinit) in a working directory of its own. It must write its results
// with ngspice's wrdata command from a .control block, after `set
// wr_singlescale` and `set wr_vecnames`, as the decks of
// circuit.Chain.WriteSPICE do: one header line, then one row per
// frequency with the frequency and the real and imaginary part of each
// vector written.
//
// Tests call [Require] first: it skips the test when ngspice is not on
// PATH, except when the environment variable CI is "true", where it fails
// the test instead, so that CI never passes by skipping the simulator.
package spicerun

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
)

// Program is the simulator's executable name, looked up on PATH.
const Program = "ngspice"

// DeckFile is the name the deck is written under in the working directory.
const DeckFile = "deck.cir"

// ErrNotFound is returned by [Path] when ngspice is not on PATH.
var ErrNotFound = errors.New("spicerun: ngspice not found on PATH")

// Path returns the path of the ngspice executable, or an error wrapping
// [ErrNotFound].
func Path() (string, error) {
	p, err := exec.LookPath(Program)
	if err != nil {
		return "", fmt.Errorf("%w (install the Debian package ngspice): %v", ErrNotFound, err)
	}
	return p, nil
}

// TB is the part of testing.TB that [Require] uses.
type TB interface {
	Helper()
	Skipf(format string, args ...any)
	Fatalf(format string, args ...any)
}

// Require returns the path of ngspice. When it is missing it skips the
// test with a message saying so, or, when the environment variable CI is
// "true", fails it.
func Require(t TB) string {
	t.Helper()
	p, err := Path()
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("CI=true and the simulator is required: %v", err)
			return ""
		}
		t.Skipf("skipping the ngspice check: %v", err)
		return ""
	}
	return p
}

// wrdataLine finds the file name of a deck's wrdata command.
var wrdataLine = regexp.MustCompile(`(?mi)^[ \t]*wrdata[ \t]+(\S+)`)

// DataFile returns the name of the file the deck's first wrdata command
// writes.
func DataFile(deck []byte) (string, error) {
	m := wrdataLine.FindSubmatch(deck)
	if m == nil {
		return "", errors.New("spicerun: the deck has no wrdata command")
	}
	name := string(m[1])
	if filepath.IsAbs(name) || strings.Contains(name, "..") {
		return "", fmt.Errorf("spicerun: wrdata file %q is not a plain relative name", name)
	}
	return name, nil
}

// Run runs deck in a temporary directory that it removes afterwards, and
// returns the frequencies and the first vector the deck writes with
// wrdata (v(out) for the decks of this project).
func Run(ctx context.Context, deck []byte) (freqHz []float64, v []complex128, err error) {
	dir, err := os.MkdirTemp("", "spicerun-")
	if err != nil {
		return nil, nil, err
	}
	defer os.RemoveAll(dir)
	return RunDir(ctx, dir, deck)
}

// RunDir is [Run] in the existing directory dir (a test's t.TempDir()),
// where the deck, ngspice's output (ngspice.log) and the data file are left.
// It fails when ngspice exits with an error, reports an error on standard
// error, or does not write the data file.
func RunDir(ctx context.Context, dir string, deck []byte) (freqHz []float64, v []complex128, err error) {
	vecs, freq, err := runDir(ctx, dir, deck)
	if err != nil {
		return nil, nil, err
	}
	if len(vecs) == 0 {
		return nil, nil, errors.New("spicerun: the data file holds no vector")
	}
	return freq, vecs[0], nil
}

// RunAll is [RunDir] returning every vector the deck's wrdata writes, in
// order.
func RunAll(ctx context.Context, dir string, deck []byte) (freqHz []float64, vecs [][]complex128, err error) {
	vecs, freq, err := runDir(ctx, dir, deck)
	return freq, vecs, err
}

func runDir(ctx context.Context, dir string, deck []byte) ([][]complex128, []float64, error) {
	prog, err := Path()
	if err != nil {
		return nil, nil, err
	}
	data, err := DataFile(deck)
	if err != nil {
		return nil, nil, err
	}
	if err := os.WriteFile(filepath.Join(dir, DeckFile), deck, 0o644); err != nil {
		return nil, nil, err
	}
	dataPath := filepath.Join(dir, data)
	if err := os.Remove(dataPath); err != nil && !errors.Is(err, os.ErrNotExist) {
		return nil, nil, err
	}
	cmd := exec.CommandContext(ctx, prog, "-b", "-n", DeckFile)
	cmd.Dir = dir
	cmd.Stdin = nil
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	runErr := cmd.Run()
	log := append(append([]byte{}, stdout.Bytes()...), stderr.Bytes()...)
	_ = os.WriteFile(filepath.Join(dir, "ngspice.log"), log, 0o644)
	if ctxErr := ctx.Err(); ctxErr != nil {
		return nil, nil, fmt.Errorf("spicerun: ngspice: %w", ctxErr)
	}
	if runErr != nil {
		return nil, nil, fmt.Errorf("spicerun: ngspice: %v\n%s", runErr, tail(stderr.String()))
	}
	if e := errorLines(stderr.String()); e != "" {
		return nil, nil, fmt.Errorf("spicerun: ngspice reported errors:\n%s", e)
	}
	f, err := os.Open(dataPath)
	if err != nil {
		return nil, nil, fmt.Errorf("spicerun: ngspice wrote no data file: %v\n%s", err, tail(stderr.String()))
	}
	defer f.Close()
	freq, vecs, err := ReadData(f)
	return vecs, freq, err
}

// errorLines returns ngspice's error lines in its standard error.
func errorLines(s string) string {
	var out []string
	for _, line := range strings.Split(s, "\n") {
		if strings.Contains(strings.ToLower(line), "error") {
			out = append(out, line)
		}
	}
	return strings.Join(out, "\n")
}

// tail returns the last lines of s for an error message.
func tail(s string) string {
	lines := strings.Split(strings.TrimSpace(s), "\n")
	if len(lines) > 20 {
		lines = lines[len(lines)-20:]
	}
	return strings.Join(lines, "\n")
}

// ReadData parses ngspice wrdata output written with wr_singlescale and
// wr_vecnames for complex (AC) vectors: a header line naming the columns,
// then per row the frequency followed by the real and imaginary parts of
// each vector. It returns the frequencies and the vectors.
func ReadData(r io.Reader) (freqHz []float64, vecs [][]complex128, err error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), 16<<20)
	header := true
	nvec := -1
	line := 0
	for sc.Scan() {
		line++
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 {
			continue
		}
		if header {
			header = false
			if _, err := strconv.ParseFloat(fields[0], 64); err != nil {
				continue // the wr_vecnames header
			}
		}
		if (len(fields)-1)%2 != 0 || len(fields) < 3 {
			return nil, nil, fmt.Errorf("spicerun: data line %d: %d columns, want the frequency and re/im pairs", line, len(fields))
		}
		if nvec < 0 {
			nvec = (len(fields) - 1) / 2
			vecs = make([][]complex128, nvec)
		} else if (len(fields)-1)/2 != nvec {
			return nil, nil, fmt.Errorf("spicerun: data line %d: %d columns, earlier lines had %d", line, len(fields), 1+2*nvec)
		}
		nums := make([]float64, len(fields))
		for i, s := range fields {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				return nil, nil, fmt.Errorf("spicerun: data line %d: %v", line, err)
			}
			nums[i] = v
		}
		freqHz = append(freqHz, nums[0])
		for k := 0; k < nvec; k++ {
			vecs[k] = append(vecs[k], complex(nums[1+2*k], nums[2+2*k]))
		}
	}
	if err := sc.Err(); err != nil {
		return nil, nil, err
	}
	if len(freqHz) == 0 {
		return nil, nil, errors.New("spicerun: the data file holds no rows")
	}
	return freqHz, vecs, nil
}
