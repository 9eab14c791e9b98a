#!/usr/bin/env bash
# The time of a 12-point bend-radius sweep of the benchmark route (examples/studies/
# bench_bend_sweep.json) at ±0.5 % (95 %) or better per point — 40,960 rays a point — against one
# trace of the same total rays (12 × 40,960), both on the command line with all cores, end to end,
# then the same in the page (workers, headless Chromium: benches/page_sweep_speed.mjs).
# Runs alternate (sweep, trace, sweep, …) and the ratio of the medians is printed: a ratio
# measured in one run, since these machines are noisy. RUNS sets the repetitions (default 3).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build -q --release --bin tirtrace
runs="${RUNS:-3}"
rays=40960
python3 - "$runs" "$rays" <<'PY'
import json, statistics, subprocess, sys, time
runs, rays = int(sys.argv[1]), int(sys.argv[2])
study = "examples/studies/bench_bend_sweep.json"
points = json.load(open(study))["vary"]["steps"] + 1
def timed(args):
    t = time.perf_counter()
    out = subprocess.run(["target/release/tirtrace", *args], check=True, capture_output=True).stdout
    return time.perf_counter() - t, out
sweep_s, trace_s = [], []
for _ in range(runs):
    s, out = timed(["study", study, "--rays", str(rays)])
    sweep_s.append(s)
    t, _ = timed(["trace", "examples/scenarios/bench_three_bends.json", "--rays", str(points * rays)])
    trace_s.append(t)
report = json.loads(out)
ci = [p["result"]["delivered"]["ci95"] for p in report["points"] if "result" in p]
dci = [p["result"]["difference"]["ci95"] for p in report["points"][1:] if "result" in p]
print(f"12-point sweep, {rays} rays a point: delivered ± {100*min(ci):.2f} … {100*max(ci):.2f} % "
      f"(95 %), difference to the first point ± {100*min(dci):.2f} … {100*max(dci):.2f} %")
print(f"sweep {statistics.median(sweep_s):.2f} s, one trace of {points*rays} rays "
      f"{statistics.median(trace_s):.2f} s (medians of {runs}, all cores): "
      f"ratio {statistics.median(sweep_s)/statistics.median(trace_s):.2f}")
PY
# The page: the same sweep with one worker per core in headless Chromium, against one trace of the
# same total rays in the same page (both warmed, end to end).
bash scripts/build.sh > /dev/null 2>&1
node benches/page_sweep_speed.mjs examples/studies/bench_bend_sweep.json "$rays"
