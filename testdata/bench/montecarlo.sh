#!/usr/bin/env bash
# montecarlo.sh — time polewright's tolerance Monte Carlo (synth/verify)
# against (a) a numpy-vectorised closed-form Monte Carlo of the same chain
# and (b) ngspice's own Monte Carlo loop over the exported deck, in one
# run on this machine, and print the figures and the ratios (issue 5's
# targets: polewright at least 2x faster per trial-point than numpy and
# at least 100x faster per trial than ngspice).
#
# Usage (from anywhere in the repository):
#
#     bash testdata/bench/montecarlo.sh [NGSPICE_TRIALS] [RUNS]
#
# The chain is package synth/verify/internal/mcbench: an 8th-order
# Butterworth lowpass at 1 kHz as four unity-gain Sallen-Key stages,
# resistors 1 %, capacitors 5 %, uniform, on 200 log-spaced points from
# 10 Hz to 100 kHz. The script
#
#  1. runs the Go benchmark BenchmarkMonteCarlo (10,000 trials x 200
#     points, all cores; -count 5, median) for the single-pole op-amps of
#     the issue's target and for ideal op-amps, the chain numpy computes,
#     and on one worker;
#  2. (a) runs testdata/bench/mc_numpy.py with Debian's python3-numpy
#     under /usr/bin/python3: the closed form H = 1/(1 + s·C2(R1+R2) +
#     s²·R1R2C1C2) per stage on a trials x points array, with the same
#     outputs (dB, min/max and 1st/99th percentiles, yield against the
#     same mask, f0 and Q spread), median of 7 runs of 10,000 x 200;
#  3. (b) writes ngspice decks with `go run ./synth/verify/internal/mcdeck`
#     (Chain.WriteSPICE's deck, single-pole op-amps, and a .control block
#     with a dowhile loop that alters all 16 parts with sunif, runs
#     `ac dec 50 10 100k` (201 points), reads the stopband and destroys
#     the run's plot) for 20 and 20 + NGSPICE_TRIALS (default 300) trials,
#     times each whole `ngspice -b` process RUNS times (default 3), and
#     takes the difference of the means per added trial;
#  4. prints the figures and the ratios, and exits 1 if a target is missed.
#
# All figures are wall-clock time as a user waits for it: polewright uses
# every core (GOMAXPROCS), numpy and ngspice one. The one-worker Go figure
# is printed beside them for a per-core comparison.
#
# Needs: bash, go, ngspice (Debian package ngspice), python3-numpy, awk,
# date with %N.
set -euo pipefail
ngtrials=${1:-300}
runs=${2:-3}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
command -v ngspice >/dev/null || { echo "montecarlo.sh: ngspice not on PATH (apt-get install ngspice)" >&2; exit 1; }
/usr/bin/python3 -c 'import numpy' 2>/dev/null || { echo "montecarlo.sh: numpy missing (apt-get install python3-numpy)" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$root"

# 1. Go.
bench=$(go test -run '^$' -bench '^BenchmarkMonteCarlo$/^sallen-key-8th$/' -count 5 ./synth/verify/)
median() { sort -n | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
go_sp=$(echo "$bench" | awk '$1 ~ /single-pole\/10000x200(-[0-9]+)?$/ {print $3}' | median)
go_id=$(echo "$bench" | awk '$1 ~ /ideal\/10000x200(-[0-9]+)?$/ {print $3}' | median)
go_1w=$(echo "$bench" | awk '$1 ~ /1-worker\/10000x200(-[0-9]+)?$/ {print $3}' | median)
[ -n "$go_sp" ] && [ -n "$go_id" ] && [ -n "$go_1w" ] || { echo "montecarlo.sh: no benchmark figures in:"; echo "$bench"; exit 1; } >&2

# 2. numpy.
np_out=$(/usr/bin/python3 "$here/mc_numpy.py" 10000 200 7)
np_ns=$(echo "$np_out" | awk '/^NUMPY_NS_PER_TRIAL_POINT/ {print $2}')

# 3. ngspice.
go run ./synth/verify/internal/mcdeck -trials 20 > "$work/base.cir"
go run ./synth/verify/internal/mcdeck -trials $((20 + ngtrials)) > "$work/mc.cir"
now() { date +%s%N; }
mean_ns() {
  local deck=$1 t0 t1 i
  (cd "$work" && ngspice -b -n "$deck" > /dev/null 2>&1) # warm the page cache
  t0=$(now)
  for ((i = 0; i < runs; i++)); do (cd "$work" && ngspice -b -n "$deck" > "$deck.log" 2>&1); done
  t1=$(now)
  echo $(( (t1 - t0) / runs ))
}
base_ns=$(mean_ns base.cir)
mc_ns=$(mean_ns mc.cir)
grep -q "mc_runs $((20 + ngtrials)) " "$work/mc.cir.log" || { echo "montecarlo.sh: ngspice did not finish the loop:"; cat "$work/mc.cir.log"; exit 1; } >&2
ng_us=$(awk -v a="$mc_ns" -v b="$base_ns" -v n="$ngtrials" 'BEGIN { printf "%.1f", (a - b) / n / 1e3 }')

echo "8th-order Butterworth lowpass at 1 kHz, 4 unity-gain Sallen-Key stages, R 1 %, C 5 %, uniform"
echo "polewright synth/verify.MonteCarlo, 10,000 trials x 200 points (median of 5, $(nproc) cores):"
awk -v s="$go_sp" -v i="$go_id" -v w="$go_1w" 'BEGIN {
  printf "  single-pole op-amps:  %8.1f ms  %7.2f us/trial  %6.2f ns/trial-point\n", s / 1e6, s / 1e4 / 1e3, s / 2e6
  printf "  ideal op-amps:        %8.1f ms  %7.2f us/trial  %6.2f ns/trial-point\n", i / 1e6, i / 1e4 / 1e3, i / 2e6
  printf "  single-pole, 1 worker:%8.1f ms  %7.2f us/trial  %6.2f ns/trial-point\n", w / 1e6, w / 1e4 / 1e3, w / 2e6
}'
echo "(a) $(echo "$np_out" | head -1)"
echo "(b) ngspice $(ngspice -v 2>/dev/null | grep -o 'ngspice-[0-9]*' | head -1) control-loop Monte Carlo, 201 points, single-pole op-amps:"
printf "      %s us per trial ((%d+20)-trial minus 20-trial process, mean of %d runs)\n" "$ng_us" "$ngtrials" "$runs"
status=0
awk -v np="$np_ns" -v gi="$go_id" -v g1="$go_1w" 'BEGIN {
  r = np / (gi / 2e6)
  printf "ratio (a) numpy / polewright (ideal), per trial-point:        %7.1f x  (target >= 2)  %s\n", r, (r >= 2 ? "OK" : "BELOW TARGET")
  printf "          numpy / polewright (single-pole, 1 worker):        %7.1f x\n", np / (g1 / 2e6)
  exit (r >= 2 ? 0 : 1)
}' || status=1
awk -v ng="$ng_us" -v gs="$go_sp" -v g1="$go_1w" 'BEGIN {
  r = ng / (gs / 1e4 / 1e3)
  printf "ratio (b) ngspice / polewright (single-pole), per trial:      %7.0f x  (target >= 100)  %s\n", r, (r >= 100 ? "OK" : "BELOW TARGET")
  printf "          ngspice / polewright (1 worker), per trial:         %7.0f x\n", ng / (g1 / 1e4 / 1e3)
  exit (r >= 100 ? 0 : 1)
}' || status=1
exit $status
