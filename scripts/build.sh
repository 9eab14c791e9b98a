#!/usr/bin/env bash
# Build the wasm core and generate the page's module into www/pkg.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --lib --target wasm32-unknown-unknown
.tools/bin/wasm-bindgen --target web --no-typescript --out-dir www/pkg \
  target/wasm32-unknown-unknown/release/tirtrace.wasm
printf '[build] www/pkg/tirtrace_bg.wasm: %s bytes\n' "$(stat -c %s www/pkg/tirtrace_bg.wasm)" >&2
