#!/usr/bin/env bash
# Times polewright's whole design (Go benchmark) and scipy's design +
# freqs_zpk on the same specs, in one run on this machine, and prints both.
# Needs Debian's python3-scipy under /usr/bin/python3.
set -euo pipefail
cd "$(dirname "$0")/../.."
echo "== polewright (go test -bench BenchmarkSynthesizeIdeal ./synth)"
go test -run XXX -bench 'BenchmarkSynthesizeIdeal$' -benchmem -count 5 ./synth | grep -E '^Benchmark' | sort
echo "== scipy"
/usr/bin/python3 testdata/scipy/bench_scipy.py
