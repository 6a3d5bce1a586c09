#!/usr/bin/env bash
# Instruction counts per call of the multiphase benchmark (methane–n-hexane–water, 300 K,
# 2 MPa; see benches/src/bin/multiphase-instructions.rs), by callgrind: each operation runs at
# R and 2R repetitions and the difference over R is its count per call (set-up cancels).
# Ratios are to one ln φ evaluation and to the two-phase flash_pt of the same kind (cold or
# warm, certified or not). Usage: benches/multiphase-instructions.sh [R] [OPERATION...]
# (default R = 10, every operation).
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
reps=${1:-10}
shift || true
ops=("$@")
[ ${#ops[@]} -eq 0 ] && ops=(two-cold two-cold-nocert two-warm two-warm-nocert multi-two-cold pt3-cold pt3-warm \
  multi-cold multi-cold-nocert multi-warm multi-warm-nocert)
cargo build --release -q -p tieline-benches --bin multiphase-instructions --manifest-path "$root/Cargo.toml"
bin="$root/target/release/multiphase-instructions"
# shellcheck source=benches/callgrind.sh
source "$root/benches/callgrind.sh"
declare -A n
n[ln-phi]=$(per_call ln-phi)
printf '%-18s %14s %9s %9s\n' operation instructions 'ln φ' 'two-phase'
for op in "${ops[@]}"; do
  n[$op]=$(per_call "$op")
  case $op in
    *warm-nocert) ref=two-warm-nocert ;;
    *cold-nocert) ref=two-cold-nocert ;;
    *warm) ref=two-warm ;;
    *) ref=two-cold ;;
  esac
  [ -z "${n[$ref]:-}" ] && n[$ref]=$(per_call "$ref")
  awk -v op="$op" -v v="${n[$op]}" -v b="${n[ln-phi]}" -v r="${n[$ref]}" \
    'BEGIN { printf "%-18s %14d %9.1f %9.2f\n", op, v, v / b, v / r }'
done
