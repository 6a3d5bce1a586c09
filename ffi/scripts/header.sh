#!/usr/bin/env bash
# Regenerates the C header ffi/include/tieline.h with the pinned cbindgen.
#   ffi/scripts/header.sh          rewrite the header
#   ffi/scripts/header.sh --check  fail (exit 1) if the checked-in header is out of date
set -euo pipefail
CBINDGEN_VERSION=0.29.4
here=$(cd "$(dirname "$0")/.." && pwd)
if ! command -v cbindgen >/dev/null 2>&1 || [ "$(cbindgen --version | awk '{print $2}')" != "$CBINDGEN_VERSION" ]; then
  echo "installing cbindgen $CBINDGEN_VERSION" >&2
  cargo install cbindgen --version "$CBINDGEN_VERSION" --locked --quiet
fi
tmp=$(mktemp)
trap 'rm -f "$tmp"' EXIT
(cd "$here" && cbindgen --quiet --config cbindgen.toml --crate tieline-ffi --output "$tmp")
if [ "${1:-}" = "--check" ]; then
  if ! diff -u "$here/include/tieline.h" "$tmp"; then
    echo "ffi/include/tieline.h is out of date: run ffi/scripts/header.sh and commit the result" >&2
    exit 1
  fi
  echo "header ffi/include/tieline.h is up to date"
else
  cp "$tmp" "$here/include/tieline.h"
  echo "wrote ffi/include/tieline.h"
fi
