#!/usr/bin/env bash
# Speed: criterion benchmarks (native), then the same batches natively and in wasm one after
# the other, printing the wasm/native ratio measured in this one run.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
bash scripts/build.sh
scenario=examples/scenarios/bench_three_bends.json
batches="${BATCHES:-20}"
[[ "${1:-}" == "--quick" ]] || cargo bench --bench trace
native=$(cargo run -q --release --example speed -- "$scenario" "$batches")
wasm=$(node benches/wasm_speed.mjs "$scenario" "$batches")
echo "$native"
echo "$wasm"
python3 - "$native" "$wasm" <<'PY'
import json, sys
n, w = json.loads(sys.argv[1]), json.loads(sys.argv[2])
print(f"wasm takes {n['rays_per_s'] / w['rays_per_s']:.2f}x the native time per ray (same batches, same run)")
PY
