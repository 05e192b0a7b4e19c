#!/usr/bin/env bash
# bench_ngspice.sh — time ngspice's own AC analysis of the exported
# 8th-order deck against polewright's sweep of the same chain, in one run.
#
# Usage (from anywhere in the repository):
#
#     bash synth/circuit/bench_ngspice.sh [REPEATS] [RUNS]
#
# The chain is package synth/circuit/internal/benchchain: an 8th-order
# Butterworth lowpass at 1 kHz as four unity-gain Sallen-Key stages with
# 1 MHz, 100 dB single-pole op-amps, swept from 10 Hz to 100 kHz. The script
#
#  1. writes its deck with `go run ./synth/circuit/internal/benchdeck`
#     (Chain.WriteSPICE, `.ac dec 250 10 1e5`: 1,001 points);
#  2. (A) runs ngspice once with the deck's .control block extended to
#     repeat the analysis REPEATS more times (default 50) and to print
#     `rusage all`; ngspice's cumulative "AC analysis time" divided by the
#     number of analyses is its time per sweep (ngspice reports in ms, so
#     the repetition is what gives the resolution);
#  3. (B) as a cross-check, times whole `ngspice -b` processes on the deck
#     and on the same deck swept at a single point, RUNS times each
#     (default 20), and takes the difference of the means;
#  4. runs the Go benchmark BenchmarkChainResponse for the same chain at
#     1,000 points (Chain.Response: every stage's rational transfer function
#     computed from the nodal equations, then the sweep) and the sweep alone;
#  5. prints the figures and the ratios.
#
# Needs: bash, go, ngspice (Debian package ngspice), awk, date with %N.
set -euo pipefail
repeats=${1:-50}
runs=${2:-20}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
command -v ngspice >/dev/null || { echo "bench_ngspice: ngspice not on PATH (apt-get install ngspice)" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

cd "$root"
go run ./synth/circuit/internal/benchdeck > "$work/deck.cir"
ac=$(grep -m1 '^\.ac ' "$work/deck.cir" | sed 's/^\.//')

# (A) repeated analyses inside one ngspice run, timed by ngspice itself.
awk -v n="$repeats" -v ac="$ac" '
  /^run$/  { print; for (i = 0; i < n; i++) print ac; next }
  /^quit$/ { print "rusage all" }
  { print }' "$work/deck.cir" > "$work/repeat.cir"
(cd "$work" && ngspice -b -n repeat.cir > repeat.log 2>&1)
rows=$(grep -m1 'No. of Data Rows' "$work/repeat.log" | awk '{print $NF}')
ac_s=$(awk -F= '/^AC analysis time/ {gsub(/ /, "", $2); print $2; exit}' "$work/repeat.log")
ng_us=$(awk -v t="$ac_s" -v n="$repeats" 'BEGIN { printf "%.1f", t / (n + 1) * 1e6 }')

# (B) whole processes: full sweep minus a one-point sweep.
sed 's/^\.ac .*/.ac dec 1 1e3 1e3/' "$work/deck.cir" > "$work/one.cir"
now() { date +%s%N; }
mean_ns() {
  local deck=$1 t0 t1 i
  (cd "$work" && ngspice -b -n "$deck" > /dev/null 2>&1) # warm the page cache
  t0=$(now)
  for ((i = 0; i < runs; i++)); do (cd "$work" && ngspice -b -n "$deck" > /dev/null 2>&1); done
  t1=$(now)
  echo $(( (t1 - t0) / runs ))
}
full_ns=$(mean_ns deck.cir)
one_ns=$(mean_ns one.cir)
proc_us=$(awk -v a="$full_ns" -v b="$one_ns" 'BEGIN { printf "%.1f", (a - b) / 1e3 }')

# Go: the same chain at 1,000 points.
bench=$(go test -run '^$' -bench '^BenchmarkChainResponse$/^sallen-key-8th$/^single-pole$/(^1000pt$|^sweep-only-1000pt$)' \
  -benchtime 1s -count 1 ./synth/circuit/)
go_ns=$(echo "$bench" | awk '$1 ~ /single-pole\/1000pt(-[0-9]+)?$/ {print $3}')
sweep_ns=$(echo "$bench" | awk '$1 ~ /sweep-only-1000pt(-[0-9]+)?$/ {print $3}')
[ -n "$go_ns" ] && [ -n "$sweep_ns" ] || { echo "bench_ngspice: no benchmark figures in:"; echo "$bench"; exit 1; } >&2
go_us=$(awk -v n="$go_ns" 'BEGIN { printf "%.1f", n / 1e3 }')
sweep_us=$(awk -v n="$sweep_ns" 'BEGIN { printf "%.1f", n / 1e3 }')

echo "8th-order Sallen-Key Butterworth lowpass (4 stages, 1 MHz single-pole op-amps), 10 Hz to 100 kHz"
echo "ngspice $(ngspice -v 2>/dev/null | grep -o 'ngspice-[0-9]*' | head -1), $rows points:"
printf "  (A) AC analysis time per sweep (rusage, %d sweeps in one run): %10s us\n" $((repeats + 1)) "$ng_us"
printf "  (B) process time, full minus one-point deck (mean of %d runs):  %10s us\n" "$runs" "$proc_us"
echo "polewright Chain.Response, 1000 points:"
printf "      transfer functions + sweep:                                %10s us\n" "$go_us"
printf "      sweep only (Cascade.Response):                             %10s us\n" "$sweep_us"
awk -v a="$ng_us" -v b="$proc_us" -v g="$go_us" -v s="$sweep_us" 'BEGIN {
  printf "ratio ngspice (A) / Chain.Response:   %8.1f x\n", a / g
  printf "ratio ngspice (B) / Chain.Response:   %8.1f x\n", b / g
  printf "ratio ngspice (A) / sweep only:       %8.1f x\n", a / s
}'
