#!/usr/bin/env bash
# Speed, reported as ratios measured in one run (these machines are noisy):
#   - criterion benchmarks of the tracer (native; skipped with --quick)
#   - the same batches natively and in wasm (Node), one after the other: wasm/native ratio
#   - with --against REV: this version against REV (e.g. HEAD~1) on the same batches,
#     alternating runs, built from a temporary git worktree; round k traces with seed k
#     (ROUNDS rounds, default 3), and the ratios' geometric mean and range close the report
set -euo pipefail
cd "$(dirname "$0")/.."
quick=0; against=""
while [[ $# -gt 0 ]]; do
  case "$1" in
    --quick) quick=1; shift ;;
    --against) against="$2"; shift 2 ;;
    *) echo "usage: scripts/bench.sh [--quick] [--against REV]" >&2; exit 2 ;;
  esac
done
bash scripts/setup.sh
bash scripts/build.sh
scenario=examples/scenarios/bench_three_bends.json
batches="${BATCHES:-20}"
[[ $quick -eq 1 ]] || cargo bench --bench trace
cargo build -q --release --example speed
native=$(target/release/examples/speed "$scenario" "$batches")
wasm=$(node benches/wasm_speed.mjs "$scenario" "$batches")
echo "$native"
echo "$wasm"
python3 - "$native" <<'PY'
import json, sys
n = json.loads(sys.argv[1])
print(f"native, 1 thread: delivered {100 * n['delivered']:.2f} ± {100 * n['delivered_ci95']:.3f} % in {n['seconds']:.2f} s, "
      f"precision per second 1/(ci95² s) = {n['delivered_precision_per_s']:.3g}; "
      f"leakiest bend (segment {n['leakiest_bend']}) leaks {100 * n['bend_leak']:.2f} ± {100 * n['bend_leak_ci95']:.3f} %, "
      f"precision per second {n['bend_precision_per_s']:.3g}")
PY
python3 - "$native" "$wasm" <<'PY'
import json, sys
n, w = json.loads(sys.argv[1]), json.loads(sys.argv[2])
print(f"wasm takes {n['rays_per_s'] / w['rays_per_s']:.2f}x the native time per ray (same batches, same run)")
PY
# The page: the same rays traced in headless Chromium by the worker pool (www/js/trace/pool.js),
# with 1 worker and with one per core, end to end (scenario in, merged report out), against the
# native rates of this run: 1 thread from the speed example above, all threads timed here with
# the command line (also end to end: process start, set-up, trace, report).
rays=$((batches * 4096))
threads=$(nproc)
cargo build -q --release --bin tirtrace
page=$(node benches/page_speed.mjs demos/bench_three_bends.json "$rays")
native_all=$(python3 - "$scenario" "$rays" "$threads" <<'PY'
import json, subprocess, sys, time
scenario, rays, threads = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
start = time.perf_counter()
subprocess.run(["target/release/tirtrace", "trace", scenario, "--rays", str(rays), "--threads", str(threads)],
               check=True, stdout=subprocess.DEVNULL)
s = time.perf_counter() - start
print(json.dumps({"runner": f"native CLI, {threads} threads, end to end", "rays_per_s": round(rays / s), "seconds": round(s, 3)}))
PY
)
echo "$page"
echo "$native_all"
python3 - "$native" "$native_all" "$page" <<'PY'
import json, sys
n1, nall, p = (json.loads(a) for a in sys.argv[1:4])
print(f"page, 1 worker: {p['rays_per_s_1_worker'] / n1['rays_per_s']:.2f}x the native 1-thread rate (page end to end, native batches only)")
print(f"page, {p['workers']} workers: {p['rays_per_s_all_workers'] / nall['rays_per_s']:.2f}x the native rate with all threads "
      f"(both end to end); {p['all_vs_1_worker']:.2f}x the page's 1-worker rate")
print(f"page, time to the first answer: {p['first_answer_ms']} ms on a warm pool, "
      f"{p['first_answer_cold_ms']} ms for a fresh pool's first trace ({p['rays']} rays in all)")
PY
if [[ -n "$against" ]]; then
  tree=$(mktemp -d)
  trap 'git worktree remove --force "$tree" >/dev/null 2>&1 || true' EXIT
  git worktree add -q --detach "$tree" "$against"
  # The older library measured by this version's speed example (it only uses the public API
  # every version has), so that both print the same figures.
  cp examples/speed.rs "$tree/examples/speed.rs"
  (cd "$tree" && CARGO_TARGET_DIR="$PWD/target" cargo build -q --release --example speed)
  old_bin="$tree/target/release/examples/speed"
  # Each round traces with its own seed (both versions the same one): an interval's width is
  # itself a sample (± 5–8 % in ci95² for 20–40 batches), so one seed would repeat its own luck.
  seeded=$(mktemp)
  for round in $(seq "${ROUNDS:-3}"); do
    python3 - "$scenario" "$round" "$seeded" <<'PY'
import json, sys
doc = json.load(open(sys.argv[1]))
doc["trace"]["seed"] = int(sys.argv[2])
json.dump(doc, open(sys.argv[3], "w"))
PY
    now=$(target/release/examples/speed "$seeded" "$batches")
    then=$("$old_bin" "$seeded" "$batches")
    python3 - "$now" "$then" "$round" "$against" <<'PY'
import json, sys
a, b = json.loads(sys.argv[1]), json.loads(sys.argv[2])
print(f"round {sys.argv[3]} (seed {sys.argv[3]}): this version against {sys.argv[4]}: "
      f"rays/s {a['rays_per_s'] / b['rays_per_s']:.2f}x, "
      f"wall interactions/s {a['wall_interactions_per_s'] / b['wall_interactions_per_s']:.2f}x "
      f"({a['wall_interactions_per_s'] / 1e6:.2f} vs {b['wall_interactions_per_s'] / 1e6:.2f} M), "
      f"precision per second of delivered {a['delivered_precision_per_s'] / b['delivered_precision_per_s']:.2f}x "
      f"(± {100 * a['delivered_ci95']:.3f} % in {a['seconds']:.2f} s vs ± {100 * b['delivered_ci95']:.3f} % in {b['seconds']:.2f} s), "
      f"of bend {a['leakiest_bend']}'s leak {a['bend_precision_per_s'] / b['bend_precision_per_s']:.2f}x")
PY
    printf '%s\t%s\n' "$now" "$then" >> "$seeded.rounds"
  done
  python3 - "$seeded.rounds" "$against" <<'PY'
import json, math, sys
rows = [line.rstrip("\n").split("\t") for line in open(sys.argv[1])]
pairs = [(json.loads(a), json.loads(b)) for a, b in rows]
def mean(key):
    r = [a[key] / b[key] for a, b in pairs]
    return f"{math.exp(sum(map(math.log, r)) / len(r)):.2f}x ({min(r):.2f}-{max(r):.2f})"
print(f"over {len(pairs)} rounds (geometric mean, range), this version against {sys.argv[2]}: "
      f"rays/s {mean('rays_per_s')}, wall interactions/s {mean('wall_interactions_per_s')}, "
      f"precision per second of delivered {mean('delivered_precision_per_s')}, of the leakiest bend {mean('bend_precision_per_s')}")
PY
  rm -f "$seeded" "$seeded.rounds"
fi
