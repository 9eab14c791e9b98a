#!/usr/bin/env bash
# Precision per second across the page's example designs (www/demos/), this version against an
# older commit, as ratios measured in one run (these machines are noisy):
#   scripts/bench_designs.sh REV
# The older library is built from a temporary git worktree with this version's speed example
# (it uses only the public API every version has). Each design is traced by both versions in
# alternating runs, ROUNDS rounds (default 3) over four seeds, BATCHES batches a run (default
# 60), single thread; the table gives the geometric mean and range of the ratios of rays/s and
# of the precision per second 1/(ci95² × s) of delivered and of the leakiest bend's leak. A
# design the older version cannot read is listed as such.
set -euo pipefail
cd "$(dirname "$0")/.."
[[ $# -eq 1 ]] || { echo "usage: scripts/bench_designs.sh REV" >&2; exit 2; }
against="$1"
cargo build -q --release --example speed
tree=$(mktemp -d)
work=$(mktemp -d)
trap 'git worktree remove --force "$tree" >/dev/null 2>&1 || true; rm -rf "$work"' EXIT
git worktree add -q --detach "$tree" "$against"
cp examples/speed.rs "$tree/examples/speed.rs"
(cd "$tree" && CARGO_TARGET_DIR="$PWD/target" cargo build -q --release --example speed)
python3 - "$PWD/target/release/examples/speed" "$tree/target/release/examples/speed" \
  "$against" "$work" "${BATCHES:-60}" "${ROUNDS:-3}" <<'PY'
import glob, json, math, os, subprocess, sys

new, old, against, work, batches, rounds = sys.argv[1:7]
rounds = int(rounds)


def ratio(pairs, key):
    r = [a[key] / b[key] for a, b in pairs
         if all(0 < v < math.inf for v in (a[key], b[key]))]
    if not r:
        return "no bend"
    g = math.exp(sum(map(math.log, r)) / len(r))
    return f"{g:.2f}x ({min(r):.2f}-{max(r):.2f})"


print(f"this version against {against}: {rounds} rounds over 4 seeds, {batches} batches a run")
print("| design | rays/s | precision per second, delivered | precision per second, leakiest bend |")
print("|---|---|---|---|")
for path in sorted(glob.glob("www/demos/*.json")):
    name = os.path.basename(path)[:-5]
    if name == "index":
        continue
    doc = json.load(open(path))
    pairs = []
    try:
        for _ in range(rounds):
            for seed in range(1, 5):
                doc["trace"]["seed"] = seed
                seeded = os.path.join(work, f"{name}_{seed}.json")
                json.dump(doc, open(seeded, "w"))
                # A figure with no interval (nothing leaked) prints as inf.
                run = lambda binary: json.loads(subprocess.run(
                    [binary, seeded, batches], check=True, capture_output=True, text=True
                ).stdout.replace(":inf", ":Infinity"))
                pairs.append((run(new), run(old)))
    except subprocess.CalledProcessError:
        print(f"| {name} | not readable by {against} | | |")
        continue
    print(f"| {name} | {ratio(pairs, 'rays_per_s')} | {ratio(pairs, 'delivered_precision_per_s')} "
          f"| {ratio(pairs, 'bend_precision_per_s')} |", flush=True)
PY
