#!/usr/bin/env bash
# Set up what is missing, build, and serve the page on 127.0.0.1 (PORT, default 8000).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
bash scripts/build.sh
port="${PORT:-8000}"
echo "tirtrace is at  http://127.0.0.1:${port}/   (Ctrl-C stops the server; the page keeps working offline once loaded)"
# A plain static server, with `Cache-Control: no-cache` so that the browser never mixes files of
# two builds from its cache (scripts/serve.py).
exec python3 scripts/serve.py "$port" www
