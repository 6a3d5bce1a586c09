#!/usr/bin/env bash
# The whole test suite of tieline: formatting, lints, the Rust tests (core and validation
# against published data), and, where present, the C/C++ and Python suites.
# Run from anywhere; installs what it needs (the C and Python suites install their own tools).
set -euo pipefail
cd "$(dirname "$0")/.."

step() { printf '\n==> %s\n' "$*"; }

step "format check"
cargo fmt --all -- --check

step "clippy (all targets, warnings are errors)"
cargo clippy --workspace --all-targets -- -D warnings

step "documentation builds without warnings"
RUSTDOCFLAGS="-D warnings" cargo doc --workspace --no-deps --quiet

step "Rust tests (release build: the robustness sweeps run 2 x 10^4 flashes each)"
cargo test --workspace --release

step "command-line tool: demo and a JSON flash"
cargo run --release --quiet -p tieline-examples --bin tieline -- demo > /dev/null
cargo run --release --quiet -p tieline-examples --bin tieline -- flash -c methane,propane -t 250 -p 20bar -z 0.6,0.4 --json > /dev/null
cargo run --release --quiet -p tieline-examples --bin tieline -- saturation -c water -e iapws95 -p 1atm --json > /dev/null
# Three phases (vapour, hexane-rich and aqueous liquids) when asked for.
cargo run --release --quiet -p tieline-examples --bin tieline -- flash -c methane,n-hexane,water \
  --kij 0,2,0.5 --kij 1,2,0.5 -t 300 -p 20bar -z 0.3,0.2,0.5 --phases 3 --json | grep -c '"liquid2"' > /dev/null

# Calculations by name: a PH flash of water in its dome, an envelope, a flame temperature.
cargo run --release --quiet -p tieline-examples --bin tieline -- calc flash_ph -c water -e iapws95 \
  --arg pressure=1atm --arg enthalpy=-255000 --json | grep -q '"num_phases": 2'
cargo run --release --quiet -p tieline-examples --bin tieline -- calc phase_envelope -c methane,ethane \
  -z 0.5,0.5 --json | grep -q '"cricondenbar_pressure"'
cargo run --release --quiet -p tieline-examples --bin tieline -- calc reaction_hp \
  -c methane,oxygen,nitrogen,water,"carbon dioxide","carbon monoxide",hydrogen --option 'extra_species=["OH","H","O","NO"]' \
  -z 1,2,7.52,0,0,0,0,0,0,0,0 --arg pressure=1atm --arg enthalpy=-74873 --json | grep -q '"temperature": 22'

if [ -x ffi/run-tests.sh ]; then
  step "C ABI and C++ tests"
  ffi/run-tests.sh
fi

if [ -x python/run-tests.sh ]; then
  step "Python package tests"
  python/run-tests.sh
fi

step "all tests passed"
