#!/usr/bin/env bash
# Build the wasm core and generate the page's module into www/pkg.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --lib --target wasm32-unknown-unknown
.tools/bin/wasm-bindgen --target web --no-typescript --out-dir www/pkg \
  target/wasm32-unknown-unknown/release/tirtrace.wasm
# Optimise with binaryen's wasm-opt from npm when set up (optional: the page works without it).
# -O3 (speed) rather than -Oz (size): 3–5 % more rays per second in V8 for 1 % more bytes
# (measured 2026-12-04, benches/wasm_speed.mjs, alternating runs).
wasm_opt=tools/node_modules/.bin/wasm-opt
if [[ -x "$wasm_opt" ]]; then
  "$wasm_opt" -O3 --enable-bulk-memory --enable-nontrapping-float-to-int --enable-sign-ext \
    --enable-mutable-globals --enable-reference-types --enable-multivalue \
    www/pkg/tirtrace_bg.wasm -o www/pkg/tirtrace_bg.wasm
fi
# The example scenarios, for the page's "start from" menu (served, and cached for offline use).
rm -rf www/demos && mkdir -p www/demos
cp examples/scenarios/*.json www/demos/
python3 - <<'PY'
import json, pathlib
demos = []
for f in sorted(pathlib.Path("www/demos").glob("*.json")):
    if f.name == "index.json":
        continue
    doc = json.loads(f.read_text())
    demos.append({"file": f.name, "name": doc.get("name") or f.stem})
pathlib.Path("www/demos/index.json").write_text(json.dumps(demos, indent=1) + "\n")
PY
printf '[build] www/pkg/tirtrace_bg.wasm: %s bytes\n' "$(stat -c %s www/pkg/tirtrace_bg.wasm)" >&2
# The trace workers' bundle (one script that imports and fetches nothing: the page hands it the
# compiled core), www/js/trace/worker-bundle.js, before the served files are listed.
python3 scripts/build_single.py --worker-bundle
# Which build these files are (the service worker keeps them in a cache named after it, and the
# page checks that its modules and WebAssembly belong together): www/js/build.js and the service
# worker's list of every file served from www/ with its SHA-256, www/precache.js.
python3 scripts/write_build.py
# The same page as one file that works opened from disk (no server, no network): dist/tirtrace.html.
python3 scripts/build_single.py
