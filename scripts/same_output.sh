#!/usr/bin/env bash
# Shows that this working tree answers exactly as REV does: every example scenario's `tirtrace
# trace` JSON and CSV, `check`, `figures` and `materials`, every page-facing wasm export on the
# examples and on variants, and the messages for a few thousand broken documents, compared byte
# for byte (scripts/same_output.mjs writes them). For refactors that must not change behaviour.
#
# Usage: bash scripts/same_output.sh REV      e.g. bash scripts/same_output.sh 99aa219
# REV is built once in a git worktree and kept under $SAME_OUTPUT_CACHE (default .tmp/same-output),
# so later runs are quick; several worktrees may share one cache.
set -euo pipefail
cd "$(dirname "$0")/.."
[[ $# -eq 1 ]] || { echo "usage: scripts/same_output.sh REV" >&2; exit 2; }
rev=$(git rev-parse --verify "$1^{commit}")
bash scripts/setup.sh >/dev/null
work="$PWD/.tmp/same-output"
cache=$(realpath -m "${SAME_OUTPUT_CACHE:-$work}")
mkdir -p "$work" "$cache"
bindgen="$PWD/.tools/bin/wasm-bindgen"

# Build one tree (native CLI + wasm package) into $2/{tirtrace,pkg}, with target dir $3.
build() {
  local tree=$1 out=$2 target=$3
  (cd "$tree" && CARGO_TARGET_DIR="$target" cargo build -q --release --bin tirtrace \
    && CARGO_TARGET_DIR="$target" cargo build -q --release --lib --target wasm32-unknown-unknown)
  mkdir -p "$out"
  cp "$target/release/tirtrace" "$out/tirtrace"
  "$bindgen" --target web --no-typescript --out-dir "$out/pkg" \
    "$target/wasm32-unknown-unknown/release/tirtrace.wasm"
}

old_tree="$cache/tree-$rev"
old="$cache/build-$rev"
if [[ ! -x "$old/tirtrace" ]]; then
  git worktree remove --force "$old_tree" >/dev/null 2>&1 || true
  git worktree add -q --detach "$old_tree" "$rev"
  build "$old_tree" "$old" "$cache/target-old"
  git worktree remove --force "$old_tree"
fi
build "$PWD" "$work/build-now" "$PWD/target"

rm -rf "$work/answers-old" "$work/answers-now"
node scripts/same_output.mjs "$work/answers-old" "$old/tirtrace" "$old/pkg"
node scripts/same_output.mjs "$work/answers-now" "$work/build-now/tirtrace" "$work/build-now/pkg"
count=$(find "$work/answers-now" -type f | wc -l)
if diff -r -q "$work/answers-old" "$work/answers-now" >"$work/differences.txt"; then
  echo "same output: all $count answers are byte-identical to $(git rev-parse --short "$rev")"
else
  echo "DIFFERENT: $(wc -l <"$work/differences.txt") of $count answers differ from $(git rev-parse --short "$rev")" >&2
  head -20 "$work/differences.txt" >&2
  echo "(full list: $work/differences.txt; compare with diff -r $work/answers-old $work/answers-now)" >&2
  exit 1
fi
