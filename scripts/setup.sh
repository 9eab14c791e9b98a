#!/usr/bin/env bash
# Install whatever is missing to build tirtrace (and, with --browser, to test it in a browser):
#   - the wasm32-unknown-unknown Rust target
#   - node and npm (Debian's), and the build tools from npm in tools/ (wasm-opt, esbuild)
#   - wasm-bindgen-cli at exactly the version in Cargo.lock, into .tools/ (git-ignored)
#   - with --browser: Debian's chromium + chromium-driver, firefox-esr, webkit2gtk-driver (WebKitGTK's
#     WebKitWebDriver and MiniBrowser) and xvfb (MiniBrowser has no headless mode), and the npm
#     packages of tests/e2e
# Every step is skipped when its result is already there, so running it again is cheap.
set -euo pipefail
cd "$(dirname "$0")/.."

want_browser=0
[[ "${1:-}" == "--browser" ]] && want_browser=1

say() { printf '[setup] %s\n' "$*" >&2; }

as_root() {
  if [[ $(id -u) -eq 0 ]]; then "$@"; elif command -v sudo >/dev/null; then sudo "$@"; else
    say "need root to run: $*"; exit 1; fi
}

apt_updated=0
apt_install() {
  if [[ $apt_updated -eq 0 ]]; then as_root apt-get update -qq; apt_updated=1; fi
  as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$@" >/dev/null
}

command -v cargo >/dev/null || { say "cargo not found: install Rust with rustup first (https://rustup.rs)"; exit 1; }

if ! rustup target list --installed 2>/dev/null | grep -qx wasm32-unknown-unknown; then
  say "adding the wasm32-unknown-unknown target"
  rustup target add wasm32-unknown-unknown
fi

# The CLI must match the wasm-bindgen crate in Cargo.lock exactly.
wb_version=$(awk '/^name = "wasm-bindgen"$/ { getline; gsub(/version = |"/, ""); print; exit }' Cargo.lock)
[[ -n "$wb_version" ]] || { say "could not find wasm-bindgen in Cargo.lock"; exit 1; }
if [[ "$(.tools/bin/wasm-bindgen --version 2>/dev/null || true)" != "wasm-bindgen $wb_version" ]]; then
  say "installing wasm-bindgen-cli $wb_version into .tools (takes a few minutes once)"
  # Not --locked: its lockfile pins a webpki-roots release the registry does not serve.
  cargo install wasm-bindgen-cli --version "$wb_version" --root .tools --force
fi

command -v python3 >/dev/null || apt_install python3

# Build tools from npm: wasm-opt (binaryen) shrinks the wasm, esbuild bundles dist/tirtrace.html.
if ! command -v node >/dev/null || ! command -v npm >/dev/null; then
  say "installing node and npm"
  apt_install nodejs npm
fi
if command -v npm >/dev/null && { [[ ! -f tools/node_modules/.package-lock.json ]] || [[ tools/package-lock.json -nt tools/node_modules/.package-lock.json ]]; }; then
  say "installing the build tools from npm (wasm-opt, and esbuild for the single-file page)"
  npm ci --prefix tools --no-audit --no-fund >/dev/null
fi

if [[ $want_browser -eq 1 ]]; then
  if [[ ! -x /usr/bin/chromium ]]; then
    say "installing Debian's chromium and chromium-driver"
    apt_install chromium chromium-driver
  fi
  # The cross-engine test (tests/e2e/engines.test.mjs): Firefox ESR, and WebKitGTK in an Xvfb display.
  if [[ ! -x /usr/bin/firefox-esr ]]; then
    say "installing Debian's firefox-esr"
    apt_install firefox-esr
  fi
  if [[ ! -x /usr/bin/WebKitWebDriver ]] || [[ ! -x /usr/bin/Xvfb ]]; then
    say "installing Debian's webkit2gtk-driver (WebKitGTK) and xvfb"
    apt_install webkit2gtk-driver xvfb
  fi
  if [[ ! -f tests/e2e/node_modules/.package-lock.json ]] || [[ tests/e2e/package-lock.json -nt tests/e2e/node_modules/.package-lock.json ]]; then
    say "installing the browser-test npm packages"
    npm ci --prefix tests/e2e --no-audit --no-fund >/dev/null
  fi
fi
say "ready"
