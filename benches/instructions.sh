#!/usr/bin/env bash
# Instruction counts per operation of the 10-component Peng–Robinson benchmark, by callgrind:
# each operation runs at R and 2R repetitions, and the difference over R is its count per
# call (set-up cancels). Ratios are to one ln φ evaluation (values only). Counts do not
# depend on the machine's load, so this is the figure to compare between changes; the
# wall-clock medians come from `cargo bench -p tieline-benches --bench flash`.
# Usage: benches/instructions.sh [R]   (default R = 20)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
reps=${1:-20}
cargo build --release -q -p tieline-benches --bin tieline-instructions --manifest-path "$root/Cargo.toml"
bin="$root/target/release/tieline-instructions"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
count() { # operation repetitions -> total instructions
  valgrind --tool=callgrind --callgrind-out-file="$tmp/out" "$bin" "$1" "$2" >/dev/null 2>"$tmp/log"
  sed -n 's/^summary: //p' "$tmp/out"
}
per_call() {
  local a b
  a=$(count "$1" "$reps")
  b=$(count "$1" $((2 * reps)))
  echo $(((b - a) / reps))
}
base=$(per_call ln-phi)
printf '%-16s %14s %8s\n' operation instructions ratio
for op in ln-phi ln-phi-derivs cold warm single-phase certificate cold-certified sensitivities warm-ph cold-ph; do
  n=$( [ "$op" = ln-phi ] && echo "$base" || per_call "$op")
  awk -v op="$op" -v n="$n" -v b="$base" 'BEGIN { printf "%-16s %14d %8.1f\n", op, n, n / b }'
done
