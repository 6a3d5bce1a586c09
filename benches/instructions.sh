#!/usr/bin/env bash
# Instruction counts per operation of the 10-component Peng–Robinson benchmark, by callgrind:
# each operation runs at R and 2R repetitions, and the difference over R is its count per
# call (set-up cancels). Ratios are to one ln φ evaluation (values only). Counts do not
# depend on the machine's load, so this is the figure to compare between changes; the
# wall-clock medians come from `cargo bench -p tieline-benches --bench flash`. The rows
# ref-cold, ref-warm and ref-single-phase are a plain textbook flash on the same model calls
# (benches/src/reference_flash.rs), with the ratio of tieline's count to theirs.
# `target/release/tieline-instructions calls` prints the ln φ evaluations of each operation.
# Usage: benches/instructions.sh [R]   (default R = 20)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
reps=${1:-20}
cargo build --release -q -p tieline-benches --bin tieline-instructions --manifest-path "$root/Cargo.toml"
bin="$root/target/release/tieline-instructions"
# shellcheck source=benches/callgrind.sh
source "$root/benches/callgrind.sh"
base=$(per_call ln-phi)
declare -A seen
printf '%-16s %14s %8s %10s\n' operation instructions ratio ours/ref
for op in ln-phi ln-phi-derivs cold warm single-phase certificate cold-certified sensitivities warm-ph cold-ph \
  ref-cold ref-warm ref-single-phase; do
  n=$( [ "$op" = ln-phi ] && echo "$base" || per_call "$op")
  seen[$op]=$n
  # The reference rows (a plain textbook flash, benches/src/reference_flash.rs) end with the
  # ratio of tieline's count for the same operation to the reference's.
  ours=${op#ref-}
  if [ "$ours" != "$op" ]; then
    awk -v op="$op" -v n="$n" -v b="$base" -v o="${seen[$ours]}" \
      'BEGIN { printf "%-16s %14d %8.1f %10.2f\n", op, n, n / b, o / n }'
  else
    awk -v op="$op" -v n="$n" -v b="$base" 'BEGIN { printf "%-16s %14d %8.1f\n", op, n, n / b }'
  fi
done
