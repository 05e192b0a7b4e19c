#!/usr/bin/env bash
# Compares one Go benchmark between two checkouts of polewright, A and B,
# interleaved (A B A B …) so that a shared, noisy machine slows both alike.
# For each round it runs the benchmark alone with a fixed count and prints
# wall time per op (Go's ns/op) and CPU time per op (user + system of the
# whole test process over the count, so it includes start-up: use a count
# that makes start-up small). At the end: medians and the ratio B/A.
#
#   bash testdata/bench/abtest.sh DIR_A DIR_B PKG 'BenchmarkName/sub$' [COUNT] [ROUNDS]
#
# e.g. with DIR_A a `git worktree add` of the older commit:
#   bash testdata/bench/abtest.sh ../old . ./synth 'BenchmarkSynthesize$/elliptic-8$' 30 5
set -euo pipefail
a=$(cd "$1" && pwd) b=$(cd "$2" && pwd) pkg=$3 bench=$4 count=${5:-20} rounds=${6:-5}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
for side in a b; do
  dir=${!side}
  (cd "$dir" && go test -c -o "$tmp/$side.test" "$pkg" >/dev/null)
done
run() { # side → "wall_ns cpu_ns"
  local out cpu
  out=$( { /usr/bin/time -f 'CPU %U %S' "$tmp/$1.test" -test.run XXX -test.bench "$bench" \
      -test.benchtime "${count}x" -test.count 1 ; } 2>&1 )
  wall=$(printf '%s\n' "$out" | awk '/^Benchmark/ {for (i = 1; i <= NF; i++) if ($(i+1) == "ns/op") print $i}' | head -n 1)
  cpu=$(printf '%s\n' "$out" | awk -v n="$count" '/^CPU/ {printf "%.0f", ($2 + $3) * 1e9 / n}')
  echo "$wall $cpu"
}
: >"$tmp/a.txt"
: >"$tmp/b.txt"
for r in $(seq "$rounds"); do
  for side in a b; do
    res=$(run "$side")
    echo "$res" >>"$tmp/$side.txt"
    printf 'round %d %s: wall %s ns/op, cpu %s ns/op\n' "$r" "$side" $res
  done
done
median() { sort -n | awk '{v[NR] = $1} END {print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2}'; }
for side in a b; do
  w=$(awk '{print $1}' "$tmp/$side.txt" | median)
  c=$(awk '{print $2}' "$tmp/$side.txt" | median)
  printf '%s median: wall %.0f ns/op, cpu %.0f ns/op\n' "$side" "$w" "$c"
  eval "${side}w=$w ${side}c=$c"
done
awk -v aw="$aw" -v bw="$bw" -v ac="$ac" -v bc="$bc" 'BEGIN {printf "ratio B/A: wall %.3f, cpu %.3f\n", bw / aw, bc / ac}'
