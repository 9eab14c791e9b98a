#!/usr/bin/env python3
"""Serve a folder (default www/) on 127.0.0.1 as `python3 -m http.server` does, with one header
more: `Cache-Control: no-cache`, so that the browser asks the server before using any copy it
kept. Without it, the browser may run a module or the WebAssembly kept from an earlier build
beside the files of a newer one (it guesses how long a file stays fresh from its age).

Usage: python3 scripts/serve.py [PORT [FOLDER]]   (PORT defaults to 8000)
The page itself needs no special server: any static server works, this one keeps builds apart.
"""

from __future__ import annotations

import functools
import http.server
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


class Handler(http.server.SimpleHTTPRequestHandler):
    """The standard file handler; every answer says `Cache-Control: no-cache`."""

    def end_headers(self) -> None:
        self.send_header("Cache-Control", "no-cache")
        super().end_headers()


def main() -> int:
    port = int(sys.argv[1]) if len(sys.argv) > 1 else 8000
    folder = Path(sys.argv[2]) if len(sys.argv) > 2 else ROOT / "www"
    handler = functools.partial(Handler, directory=str(folder))
    with http.server.ThreadingHTTPServer(("127.0.0.1", port), handler) as server:
        try:
            server.serve_forever()
        except KeyboardInterrupt:
            pass
    return 0


if __name__ == "__main__":
    sys.exit(main())
