#!/usr/bin/env bash
# Run every test: format and lint, the native core tests, the same core tests compiled to wasm and
# run in headless Chromium (wasm-bindgen-test with chromedriver), and the real-browser end-to-end
# tests of the page (headless Chromium; engines.test.mjs runs the designer's main loop in Firefox ESR
# and WebKitGTK too; the wasm-vs-native check among them runs in Node).
# Installs what is missing first.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh --browser

step() { printf '\n== %s\n' "$*"; }

step "format and lint"
cargo fmt --check
cargo clippy --all-targets -- -D warnings
cargo clippy --lib --target wasm32-unknown-unknown -- -D warnings

step "native tests"
cargo test

step "the same core tests compiled to wasm, in headless Chromium (wasm-bindgen-test, webdriver.json)"
# chromedriver leaves profile folders in TMPDIR: give it one we delete on every exit.
wasm_tmp="$PWD/.tmp/wasm-test"
trap 'rm -rf "$wasm_tmp"' EXIT
rm -rf "$wasm_tmp"; mkdir -p "$wasm_tmp"
# A test file may take longer than the runner's default 20 s on a busy 2-core machine (debug build).
WASM_BINDGEN_TEST_TIMEOUT=300 TMPDIR="$wasm_tmp" CHROMEDRIVER=/usr/bin/chromedriver \
  CARGO_TARGET_WASM32_UNKNOWN_UNKNOWN_RUNNER="$PWD/.tools/bin/wasm-bindgen-test-runner" \
  cargo test --target wasm32-unknown-unknown --test '*'

step "build the page"
bash scripts/build.sh

step "browser end-to-end tests (headless Chromium; the main loop in Firefox ESR and WebKitGTK too)"
node --test tests/e2e/
