#!/usr/bin/env bash
# The C/C++ test suite of tieline, self-contained for a fresh machine:
#  1. installs cbindgen 0.29.4 and cmake if missing;
#  2. runs the Rust tests of the ffi crate and builds the library in release;
#  3. checks that the checked-in header ffi/include/tieline.h is up to date;
#  4. configures, builds and runs the C/C++ tests with ctest (shared and static library),
#     among them threads_c (8 threads sharing one model, mixed calls, bit for bit) and
#     fuzz_smoke (20 000 inputs of the ABI fuzzer, ffi/tests/fuzz_abi.c);
#  5. runs the same tests once more under valgrind (no leak, no error), then built with
#     AddressSanitizer and UndefinedBehaviorSanitizer (the fuzz smoke run included, with
#     fewer inputs in both);
#  6. installs to a temporary prefix, builds examples/cpp/vessel_blowdown against the
#     installed package with find_package(tieline CONFIG), and a C program with pkg-config,
#     and runs them.
# Usage: ffi/run-tests.sh   (from anywhere; build files go to build/ffi-tests)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
cd "$root"
build="$root/build/ffi-tests"
jobs=$(nproc 2>/dev/null || echo 2)

step() { printf '\n== %s\n' "$*"; }

step "tools"
export PATH="$HOME/.cargo/bin:$PATH"
if ! command -v cmake >/dev/null 2>&1; then
  echo "installing cmake (pip)"
  python3 -m pip install --quiet cmake || { apt-get update -qq && apt-get install -y -qq cmake; }
  hash -r
fi
cmake --version | head -1
if ! command -v valgrind >/dev/null 2>&1; then
  echo "installing valgrind (apt)"
  apt-get update -qq && apt-get install -y -qq valgrind
fi
# ffi/scripts/header.sh installs the pinned cbindgen itself when it is missing.

step "Rust tests of the ffi crate, release build"
cargo test -p tieline-ffi --lib --quiet
cargo build --release -p tieline-ffi --lib --bins --quiet

step "header up to date"
ffi/scripts/header.sh --check

step "C/C++ tests (ctest)"
cmake -S ffi -B "$build/main" -DTIELINE_RUST_LIB_DIR="$root/target/release" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "$build/main" -j "$jobs"
ctest --test-dir "$build/main" --output-on-failure

step "C/C++ tests under valgrind"
cmake -S ffi -B "$build/valgrind" -DTIELINE_RUST_LIB_DIR="$root/target/release" -DCMAKE_BUILD_TYPE=Debug \
  "-DTIELINE_TEST_LAUNCHER=valgrind;--error-exitcode=1;--leak-check=full;--errors-for-leak-kinds=definite,indirect,possible;--suppressions=$root/ffi/tests/valgrind.supp;-q" \
  -DTIELINE_FUZZ_INPUTS=300 >/dev/null
cmake --build "$build/valgrind" -j "$jobs"
ctest --test-dir "$build/valgrind" --output-on-failure

step "C/C++ tests under AddressSanitizer and UndefinedBehaviorSanitizer"
# The test programs are instrumented (gcc -fsanitize=address,undefined); the Rust library is
# not, but its heap goes through malloc/free, which ASan intercepts, so an overflow of a
# buffer the library writes into, a use after free of a handle's memory, and leaks are
# caught. LeakSanitizer is on: the library's process-lifetime statics stay reachable.
san="-fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=all"
cmake -S ffi -B "$build/asan" -DTIELINE_RUST_LIB_DIR="$root/target/release" -DCMAKE_BUILD_TYPE=Debug \
  "-DCMAKE_C_FLAGS=$san" "-DCMAKE_CXX_FLAGS=$san" "-DCMAKE_EXE_LINKER_FLAGS=-fsanitize=address,undefined" \
  -DTIELINE_FUZZ_INPUTS=5000 >/dev/null
cmake --build "$build/asan" -j "$jobs"
ASAN_OPTIONS=detect_leaks=1:abort_on_error=0:halt_on_error=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
  ctest --test-dir "$build/asan" --output-on-failure

step "install to a prefix; example and pkg-config consumers"
prefix="$build/prefix"
rm -rf "$prefix"
cmake --install "$build/main" --prefix "$prefix" >/dev/null
cmake -S examples/cpp/vessel_blowdown -B "$build/blowdown" -DCMAKE_PREFIX_PATH="$prefix" -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build "$build/blowdown" -j "$jobs"
soname=$(readelf -d "$build/blowdown/vessel_blowdown" | sed -n 's/.*Shared library: \[\(libtieline[^]]*\)\].*/\1/p')
major=$(sed -n 's/^version = "\([0-9]*\)\..*/\1/p' Cargo.toml | head -1)
[ "$soname" = "libtieline.so.$major" ] || { echo "the example records '$soname', not libtieline.so.$major" >&2; exit 1; }
for f in libtieline.so "libtieline.so.$major"; do
  [ -L "$prefix/lib/$f" ] || { echo "$prefix/lib/$f is not a symbolic link" >&2; exit 1; }
done
readelf -d "$prefix/lib/libtieline.so" | grep -q "SONAME.*\[libtieline.so.$major\]" || { echo "installed library lacks SONAME libtieline.so.$major" >&2; exit 1; }
LD_LIBRARY_PATH="$prefix/lib" "$build/blowdown/vessel_blowdown"
"$build/blowdown/vessel_blowdown_static" | tail -1
export PKG_CONFIG_PATH="$prefix/lib/pkgconfig"
cc -std=c11 -o "$build/pc_shared" ffi/tests/test_c_api.c $(pkg-config --cflags --libs tieline) -lm -Wl,-rpath,"$prefix/lib"
"$build/pc_shared"
cc -std=c11 -o "$build/pc_static" ffi/tests/test_c_api.c $(pkg-config --cflags --libs tieline-static)
"$build/pc_static"

printf '\nffi/run-tests.sh: all C/C++ checks passed\n'
