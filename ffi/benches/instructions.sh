#!/usr/bin/env bash
# Instructions per call of the cheap calls through the C ABI and through the Rust API, by
# callgrind: each call runs at R and 2R repetitions, and the difference over R is its count
# per call (set-up cancels). Counts do not depend on the machine's load, so the ratio
# C ABI / Rust is the figure to compare between changes of the boundary.
# Usage: ffi/benches/instructions.sh [R] [CALL...]   (default R = 40, every call)
set -euo pipefail
root=$(cd "$(dirname "$0")/../.." && pwd)
reps=${1:-40}
shift || true
calls=("$@")
[ ${#calls[@]} -gt 0 ] || calls=(flash2-cert flash2 flash2-same flash1-cert flash1 props sat)
cargo build --release -q -p tieline-ffi --bin tieline-ffi-instructions --manifest-path "$root/Cargo.toml"
bin="$root/target/release/tieline-ffi-instructions"
# shellcheck source=benches/callgrind.sh
source "$root/benches/callgrind.sh"
printf '%-12s %14s %14s %8s\n' call Rust "C ABI" C/Rust
for call in "${calls[@]}"; do
  r=$(per_call rust "$call")
  c=$(per_call c "$call")
  awk -v call="$call" -v r="$r" -v c="$c" 'BEGIN { printf "%-12s %14d %14d %8.4f\n", call, r, c, c / r }'
done
