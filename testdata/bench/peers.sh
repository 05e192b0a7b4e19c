#!/usr/bin/env bash
# peers.sh — polewright's synthesis core against scipy on the same specs,
# interleaved (Go, scipy, Go, scipy, …) so that a shared, noisy machine
# slows both alike, with medians of CPU and wall time per design and the
# ratios scipy/polewright (how many times faster polewright is).
#
#   bash testdata/bench/peers.sh [ROUNDS]
#
# Pairs (the performance issue's targets):
#   - synth BenchmarkSynthesizeIdeal/elliptic-8 vs scipy ellip(8, 1, 60)
#     + freqs_zpk on 500 points (target ≥ 4×);
#   - synth BenchmarkSynthesizeIdeal/bessel-20 vs scipy bessel(8) + the
#     same freqs_zpk (target ≥ 7×).
# The Go side reports its process CPU per op (cpu-ns/op) from inside the
# benchmark; scipy's from time.process_time (testdata/scipy/bench_scipy.py
# --one). Needs Debian's python3-scipy under /usr/bin/python3.
set -euo pipefail
rounds=${1:-7}
cd "$(dirname "$0")/../.."
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
go test -c -o "$tmp/synth.test" ./synth >/dev/null
gorun() { # sub-benchmark → "wall_us cpu_us"
  "$tmp/synth.test" -test.run XXX -test.bench "BenchmarkSynthesizeIdeal/$1\$" -test.benchtime 2000x |
    awk '/^Benchmark/ {for (i = 1; i <= NF; i++) {if ($(i+1) == "ns/op") w = $i; if ($(i+1) == "cpu-ns/op") c = $i}
                       printf "%.3f %.3f\n", w / 1000, c / 1000}'
}
pyrun() { /usr/bin/python3 testdata/scipy/bench_scipy.py --one "$1" "$2" 300; }
median() { sort -n | awk '{v[NR] = $1} END {print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2}'; }
for r in $(seq "$rounds"); do
  gorun elliptic-8 >>"$tmp/go-ell.txt"
  pyrun elliptic 8 >>"$tmp/py-ell.txt"
  gorun bessel-20 >>"$tmp/go-bes.txt"
  pyrun bessel 8 >>"$tmp/py-bes.txt"
  echo "round $r: go elliptic-8 $(tail -n1 "$tmp/go-ell.txt"), scipy $(tail -n1 "$tmp/py-ell.txt"); go bessel-20 $(tail -n1 "$tmp/go-bes.txt"), scipy bessel-8 $(tail -n1 "$tmp/py-bes.txt") (wall cpu, µs)"
done
report() { # name go-file py-file target
  local gw gc pw pc
  gw=$(awk '{print $1}' "$2" | median) gc=$(awk '{print $2}' "$2" | median)
  pw=$(awk '{print $1}' "$3" | median) pc=$(awk '{print $2}' "$3" | median)
  awk -v n="$1" -v gw="$gw" -v gc="$gc" -v pw="$pw" -v pc="$pc" -v t="$4" 'BEGIN {
    printf "%s: polewright %.1f µs CPU (%.1f wall), scipy %.1f µs CPU (%.1f wall): %.2f× by CPU, %.2f× by wall (target ≥ %s×)\n",
      n, gc, gw, pc, pw, pc / gc, pw / gw, t }'
}
report "elliptic-8 vs scipy elliptic-8" "$tmp/go-ell.txt" "$tmp/py-ell.txt" 4
report "bessel-20 vs scipy bessel-8" "$tmp/go-bes.txt" "$tmp/py-bes.txt" 7
