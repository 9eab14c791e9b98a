#!/usr/bin/env python3
"""Write dist/tirtrace.html: the design page as one file that works opened from disk (file://).

Everything the page needs is inside: the style sheets, the icon, every ES module of the page and
of its trace worker, the core's WebAssembly (gzip, base64) and the example scenarios. Run it after
scripts/build.sh has made www/pkg and www/demos (build.sh calls it last).

How the file works when opened:
- A module loaded from a blob: URL has no folder, so relative imports cannot resolve there. This
  script therefore replaces every relative import specifier by a token naming the target
  (`tirtrace-module:js/design/editor.js`); at run time a small loader turns each module into a
  blob: URL, dependencies first, with its tokens replaced by the URLs already made, and imports
  the page's main module.
- Two modules are swapped for generated ones: js/wasm-source.js gives init() the embedded
  WebAssembly instead of a URL beside the glue, and js/design/sources.js gives the examples'
  text and starts the trace workers from the file.
- A file:// page may not start a module worker from a blob: URL (Chromium refuses it), but it may
  start a classic one, and that worker may import blob: modules it makes itself. So each worker
  is a classic script that holds the worker's modules and links them the same way; messages that
  arrive while it loads are kept and handed to the worker module once it has set its handler.
  Where even that fails, the page traces on its own thread (www/js/trace/main-thread-pool.js).

Anything in www/index.html this script does not know how to embed stops the build with a message
naming it, rather than leaving a file that would quietly ask for something that is not there.
"""

from __future__ import annotations

import base64
import gzip
import html
import json
import posixpath
import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
WWW = ROOT / "www"
OUT = ROOT / "dist" / "tirtrace.html"

PAGE = "index.html"
GLUE = "pkg/tirtrace.js"
WASM = "pkg/tirtrace_bg.wasm"
WASM_SOURCE = "js/wasm-source.js"
PAGE_SOURCES = "js/design/sources.js"
WORKER = "js/trace/worker.js"
DEMOS = "demos/index.json"

MODULE_TOKEN = "tirtrace-module:"
WORKER_TOKEN = "tirtrace-worker:"

# Uses of import.meta.url that cannot work in a blob: module but are never evaluated in this file:
# init()'s default wasm URL (wasmSource() always gives the bytes here) and the pool's default
# worker URL (sources.js always gives workerUrl here). Any other use stops the build.
ALLOWED_IMPORT_META = {
    GLUE: "new URL('tirtrace_bg.wasm', import.meta.url)",
    "js/trace/pool.js": "new URL('./worker.js', import.meta.url)",
}

IMAGE_TYPES = {".svg": "image/svg+xml", ".png": "image/png", ".ico": "image/x-icon", ".webp": "image/webp"}


class BuildError(Exception):
    """A problem that stops the build; the message names the file and what is wrong."""


# ---------------------------------------------------------------------------- modules

# `import … from '…'` / `export … from '…'` (the clause may span lines), `import '…'`, `import('…')`.
STATIC_FROM = re.compile(r"""^([ \t]*(?:import|export)\b[^;'"`]*?\bfrom\s*)(['"])([^'"\n]+)\2""", re.M)
SIDE_EFFECT = re.compile(r"""^([ \t]*import\s*)(['"])([^'"\n]+)\2""", re.M)
DYNAMIC = re.compile(r"""(\bimport\(\s*)(['"])([^'"\n]+)\2(?=\s*\))""")


def read_text(path: str) -> str:
    file = WWW / path
    if not file.is_file():
        raise BuildError(f"www/{path} is missing (run `bash scripts/build.sh` first)")
    return file.read_text(encoding="utf-8")


def resolve(importer: str, spec: str) -> str:
    """The www-relative path a relative specifier in `importer` names."""
    if not spec.startswith(("./", "../")):
        raise BuildError(
            f"www/{importer} imports '{spec}': only relative specifiers ('./', '../') can be embedded"
        )
    target = posixpath.normpath(posixpath.join(posixpath.dirname(importer), spec))
    if target.startswith("../") or not (WWW / target).is_file():
        raise BuildError(f"www/{importer} imports '{spec}', which is not a file under www/")
    return target


def link_imports(path: str, text: str) -> tuple[str, list[str]]:
    """Replace every relative specifier by a token naming its target; return the text and targets."""
    deps: list[str] = []

    def swap(match: re.Match) -> str:
        target = resolve(path, match.group(3))
        deps.append(target)
        return f"{match.group(1)}{match.group(2)}{MODULE_TOKEN}{target}{match.group(2)}"

    for pattern in (STATIC_FROM, SIDE_EFFECT, DYNAMIC):
        text = pattern.sub(swap, text)
    rest = text.replace(ALLOWED_IMPORT_META.get(path, "\0"), "")
    if "import.meta" in rest:
        raise BuildError(
            f"www/{path} uses import.meta, which a module loaded from a blob: URL cannot resolve "
            "against; give it what it needs another way (see www/js/wasm-source.js)"
        )
    return text, deps


def module_graph(entry: str, generated: dict[str, str], modules: dict[str, str]) -> list[str]:
    """Add `entry` and everything it imports to `modules`; return them dependencies first."""
    order: list[str] = []
    state: dict[str, str] = {}

    def visit(path: str, chain: list[str]) -> None:
        if state.get(path) == "done":
            return
        if state.get(path) == "open":
            raise BuildError("import cycle, which blob: URLs cannot express: " + " → ".join(chain + [path]))
        state[path] = "open"
        if path in generated:
            text = generated[path]
        else:
            text = read_text(path)
            for token in (MODULE_TOKEN, WORKER_TOKEN):
                if token in text:
                    raise BuildError(f"www/{path} contains '{token}', which the single-file loader replaces")
        text, deps = link_imports(path, text)
        modules[path] = text
        for dep in deps:
            visit(dep, chain + [path])
        state[path] = "done"
        order.append(path)

    visit(entry, [])
    return order


def wasm_source_module() -> str:
    wasm = (WWW / WASM).read_bytes()
    packed = base64.b64encode(gzip.compress(wasm, compresslevel=9, mtime=0)).decode("ascii")
    return f"""// Generated by scripts/build_single.py for the single-file page: the core's WebAssembly
// ({len(wasm)} bytes), gzip-compressed, in base64; wasmSource() gives init() the unpacked bytes.

const WASM_GZIP_BASE64 = '{packed}';
const WASM_BYTES = {len(wasm)};

let bytes = null;

async function unpack() {{
  if (typeof DecompressionStream !== 'function') {{
    throw new Error('this browser cannot unpack the embedded calculator (it has no DecompressionStream); open the file in a current browser');
  }}
  const packed = Uint8Array.from(atob(WASM_GZIP_BASE64), (c) => c.charCodeAt(0));
  const stream = new Blob([packed]).stream().pipeThrough(new DecompressionStream('gzip'));
  const wasm = new Uint8Array(await new Response(stream).arrayBuffer());
  if (wasm.length !== WASM_BYTES) throw new Error(`the embedded calculator is damaged (${{wasm.length}} bytes, not ${{WASM_BYTES}})`);
  return wasm;
}}

/** The argument for init(): the embedded bytes (a promise of them, which init() awaits). */
export function wasmSource() {{
  bytes ??= unpack();
  return {{ module_or_path: bytes }};
}}
"""


def page_sources_module() -> str:
    listing = json.loads(read_text(DEMOS))
    texts = {}
    for demo in listing:
        name = demo["file"]
        if "/" in name or "\\" in name:
            raise BuildError(f"www/{DEMOS} lists '{name}', which is not a plain file name")
        text = read_text(f"demos/{name}")
        try:
            json.loads(text)
        except json.JSONDecodeError as e:
            raise BuildError(f"www/demos/{name} is not JSON: {e}") from e
        texts[name] = text
    return f"""// Generated by scripts/build_single.py for the single-file page: the examples' text, and the
// trace workers started from a classic script made by the page's loader (a file:// page may not
// start a module worker from a blob: URL).

const DEMOS = {json.dumps(listing, ensure_ascii=False)};
const TEXTS = {json.dumps(texts, ensure_ascii=False)};

/** The examples for the "Start from" menu: [{{ file, name }}]. */
export async function demoList() {{
  return DEMOS.map((d) => ({{ ...d }}));
}}

/** The scenario text of one example, by its `file` from demoList(). */
export async function demoText(file) {{
  if (!Object.hasOwn(TEXTS, file)) throw new Error(`there is no example "${{file}}" in this file`);
  return TEXTS[file];
}}

/** TracePool options: the classic worker script that loads the embedded worker modules. */
export function traceWorker() {{
  return {{ workerUrl: '{WORKER_TOKEN}{WORKER}', workerType: 'classic' }};
}}
"""


# ---------------------------------------------------------------------------- the loader

LOADER = r"""
// Loader of the single-file page (scripts/build_single.py): every embedded module becomes a blob:
// URL, dependencies first, its tokens (tirtrace-module:PATH) replaced by the URLs of their
// targets; then the page's main module is imported. Each trace worker is a classic script that
// links the worker's modules the same way inside the worker.
const bundle = JSON.parse(document.getElementById('tirtrace-bundle').textContent);

function link(modules, order, workerUrls) {
  const urls = new Map();
  for (const path of order) {
    const text = modules[path].replace(/tirtrace-(module|worker):([\w./-]+)/g, (token, kind, target) => {
      const url = kind === 'module' ? urls.get(target) : workerUrls?.get(target);
      if (!url) throw new Error(`${path} needs ${target}, which is not linked before it`);
      return url;
    });
    urls.set(path, URL.createObjectURL(new Blob([text], { type: 'text/javascript' })));
  }
  return urls;
}

function workerScript(entry, order) {
  const modules = Object.fromEntries(order.map((path) => [path, bundle.modules[path]]));
  return `'use strict';
// A trace worker of the single-file page: links its modules here, then imports ${entry}.
// Messages that arrive meanwhile are kept and handed to the handler the module sets.
const early = [];
self.onmessage = (event) => early.push(event);
${link}
import(link(${JSON.stringify(modules)}, ${JSON.stringify(order)}).get(${JSON.stringify(entry)})).then(
  () => {
    for (const event of early) self.onmessage(event);
  },
  (e) => postMessage({ type: 'init-error', message: String((e && e.message) || e) }),
);
`;
}

try {
  const workerUrls = new Map();
  for (const [entry, order] of Object.entries(bundle.workers)) {
    workerUrls.set(entry, URL.createObjectURL(new Blob([workerScript(entry, order)], { type: 'text/javascript' })));
  }
  await import(link(bundle.modules, bundle.order, workerUrls).get(bundle.entry));
} catch (e) {
  const status = document.getElementById('status');
  if (status) {
    status.textContent = `The calculator could not start: ${(e && e.message) || e}`;
    status.dataset.kind = 'error';
  }
}
"""


# ---------------------------------------------------------------------------- the page

TAG = re.compile(r"<([a-zA-Z][\w-]*)(\s[^<>]*?)?\s*(/?)>")
ATTR = re.compile(r"""([^\s=/>]+)(?:\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s"'=<>`]+)))?""")


def attributes(raw: str | None) -> dict[str, str]:
    out = {}
    for m in ATTR.finditer(raw or ""):
        value = next((g for g in m.group(2, 3, 4) if g is not None), "")
        out[m.group(1).lower()] = html.unescape(value)
    return out


def is_local(url: str) -> bool:
    """A reference to a file beside the page (not a fragment, not a URL with a scheme)."""
    return bool(url) and not url.startswith("#") and not re.match(r"^[a-zA-Z][\w+.-]*:", url) and not url.startswith("//")


def data_uri(path: str, what: str) -> str:
    file = WWW / path
    kind = IMAGE_TYPES.get(file.suffix.lower())
    if kind is None or not file.is_file():
        raise BuildError(f"www/{PAGE}: {what} '{path}' is not an image file this build can embed")
    return f"data:{kind};base64,{base64.b64encode(file.read_bytes()).decode('ascii')}"


def inline_css(path: str) -> str:
    css = read_text(path)
    if "@import" in css:
        raise BuildError(f"www/{path} uses @import, which this build does not embed")

    def swap(match: re.Match) -> str:
        url = match.group(2)
        if not is_local(url):
            return match.group(0)
        return f'url("{data_uri(posixpath.normpath(posixpath.join(posixpath.dirname(path), url)), "url()")}")'

    css = re.sub(r"""url\(\s*(['"]?)([^'")]+)\1\s*\)""", swap, css)
    if re.search(r"</style", css, re.I):
        raise BuildError(f"www/{path} contains '</style', which would end the embedded style early")
    return css


def transform_page(page: str) -> tuple[str, str, list[str]]:
    """Embed what the page refers to; return the page, its entry module, and what was left out."""
    left_out: list[str] = []
    entries: list[str] = []

    # Links to the other pages cannot follow a single file: leave them out.
    def drop_link(match: re.Match) -> str:
        left_out.append(f"the link to {match.group(1)}")
        return ""

    page = re.sub(r"""[ \t]*<a\b[^>]*\bhref="([^"#:]+\.html)"[^>]*>.*?</a>[ \t]*\n?""", drop_link, page, flags=re.S | re.I)

    # Module scripts with a src: the entry module, loaded by the loader instead.
    def take_script(match: re.Match) -> str:
        attrs = attributes(match.group(1))
        src = attrs.get("src")
        if src is None:
            return match.group(0)
        if attrs.get("type") != "module" or not is_local(src):
            raise BuildError(f"www/{PAGE}: <script src=\"{src}\"> is not a local module script; only those are embedded")
        entries.append(posixpath.normpath(src))
        return ""

    page = re.sub(r"""[ \t]*<script\b([^>]*)>\s*</script>[ \t]*\n?""", take_script, page, flags=re.I)
    if len(entries) != 1:
        raise BuildError(f"www/{PAGE} has {len(entries)} module scripts with a src; the build expects exactly one")

    def swap_tag(match: re.Match) -> str:
        name = match.group(1).lower()
        attrs = attributes(match.group(2))
        urls = {k: v for k, v in attrs.items() if k in ("src", "href", "srcset", "poster", "data")}
        if name != "a" and any(re.match(r"^(https?:)?//", v, re.I) for v in urls.values()):
            raise BuildError(f"www/{PAGE}: <{name}> asks the network for {', '.join(urls.values())}; the file must work offline")
        refs = {k: v for k, v in urls.items() if is_local(v)}
        if not refs:
            return match.group(0)
        rel = attrs.get("rel", "").lower().split()
        if name == "link" and "stylesheet" in rel:
            return f"<style>\n{inline_css(posixpath.normpath(attrs['href']))}</style>"
        if name == "link" and "manifest" in rel:
            left_out.append("the web app manifest (it cannot be read from a file)")
            return ""
        if name == "link" and any(r in rel for r in ("preload", "modulepreload", "prefetch")):
            return ""
        if name == "link" and any("icon" in r for r in rel) and set(refs) == {"href"}:
            return match.group(0).replace(match.group(2), re.sub(
                r"""\bhref\s*=\s*("[^"]*"|'[^']*'|[^\s>]+)""", lambda _m: f'href="{data_uri(attrs["href"], "icon")}"', match.group(2)))
        if name in ("img", "source") and set(refs) == {"src"}:
            return match.group(0).replace(match.group(2), re.sub(
                r"""\bsrc\s*=\s*("[^"]*"|'[^']*'|[^\s>]+)""", lambda _m: f'src="{data_uri(attrs["src"], "image")}"', match.group(2)))
        raise BuildError(f"www/{PAGE}: <{name}> refers to {', '.join(refs.values())}, which this build does not embed")

    page = TAG.sub(swap_tag, page)
    return page, entries[0], left_out


def build() -> tuple[int, list[str]]:
    page, entry, left_out = transform_page(read_text(PAGE))
    generated = {WASM_SOURCE: wasm_source_module(), PAGE_SOURCES: page_sources_module()}
    modules: dict[str, str] = {}
    order = module_graph(entry, generated, modules)
    workers = {WORKER: module_graph(WORKER, generated, modules)}
    for path in (WASM_SOURCE, PAGE_SOURCES):
        if path not in modules:
            raise BuildError(f"www/{path} is no longer imported; scripts/build_single.py swaps it for the embedded data")
    for path in workers[WORKER]:
        if WORKER_TOKEN in modules[path]:
            raise BuildError(f"www/{path} is loaded in the worker but starts workers itself")
    bundle = {"entry": entry, "order": order, "workers": workers, "modules": modules}
    data = json.dumps(bundle, ensure_ascii=False, separators=(",", ":")).replace("<", "\\u003c")
    if re.search(r"</script|<!--", LOADER, re.I):
        raise BuildError("the loader contains '</script' or '<!--'")
    scripts = (
        f'<script type="application/json" id="tirtrace-bundle">{data}</script>\n'
        f'<script type="module">{LOADER}</script>\n'
    )
    if page.count("</body>") != 1:
        raise BuildError(f"www/{PAGE} needs exactly one </body>")
    page = page.replace("</body>", scripts + "</body>")
    note = (
        "<!-- tirtrace light-pipe designer as one file: open it from disk; it needs no server and no\n"
        "     network. Made by scripts/build_single.py from www/; the page, its modules, the core's\n"
        "     WebAssembly and the examples are all inside. -->\n"
    )
    page = re.sub(r"^(<!doctype html>\s*\n?)", lambda m: m.group(1) + note, page, count=1, flags=re.I)
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(page, encoding="utf-8")
    return OUT.stat().st_size, left_out


def main() -> int:
    try:
        size, left_out = build()
    except BuildError as e:
        print(f"[build_single] {e}", file=sys.stderr)
        return 1
    rel = OUT.relative_to(ROOT)
    print(f"[build] {rel}: {size} bytes (one file: page, modules, wasm, examples)", file=sys.stderr)
    for what in left_out:
        print(f"[build] {rel} leaves out {what}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
