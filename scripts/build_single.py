#!/usr/bin/env python3
"""Write dist/tirtrace.html: the design page as one file that works opened from disk (file://).

Everything the page needs is inside: the style sheets, the icon, the page's modules and those of
its trace worker, the core's WebAssembly (gzip, base64) and the example scenarios. Run it after
scripts/build.sh has made www/pkg and www/demos (build.sh calls it last).

The modules are bundled by esbuild (from npm, tools/package.json; used for dist/ only: the served
page stays plain ES modules, no bundler), from a copy of www/js and www/pkg in which two modules
are swapped for generated ones: js/wasm-source.js gives init() the embedded WebAssembly instead
of a URL beside the glue, and js/design/sources.js gives the examples' text and starts the trace
workers from the file. When the file is opened:
- The page is one inline module script: esbuild's ESM bundle of js/design/main.js.
- A file:// page may not start a module worker from a blob: URL (Chromium refuses it), but it may
  start a classic one: each trace worker runs the workers' bundle (below), kept as a string in the
  page's bundle and started from a blob: URL. The WebAssembly is in the file once: the page
  compiles it and hands the compiled module to each worker. Where no worker can start at all, the
  page traces on its own thread (js/trace/main-thread-pool.js).

`--worker-bundle` writes only the trace workers' bundle, www/js/trace/worker-bundle.js (build.sh
runs it before listing the served files): esbuild's IIFE bundle of js/trace/worker.js with
js/wasm-from-page.js in place of js/wasm-source.js. Its workers import nothing and fetch nothing
(the page hands them the compiled core), so the served page starts them the same way, from a
blob: URL, and they start offline through the service worker in every engine.

Anything in www/index.html this script does not know how to embed stops the build with a message
naming it, rather than leaving a file that would quietly ask for something that is not there.
"""

from __future__ import annotations

import base64
import gzip
import hashlib
import html
import json
import posixpath
import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
WWW = ROOT / "www"
OUT = ROOT / "dist" / "tirtrace.html"
ESBUILD = ROOT / "tools" / "node_modules" / ".bin" / "esbuild"

PAGE = "index.html"
WASM = "pkg/tirtrace_bg.wasm"
WASM_SOURCE = "js/wasm-source.js"
PAGE_SOURCES = "js/design/sources.js"
WORKER = "js/trace/worker.js"
WORKER_BUNDLE = "js/trace/worker-bundle.js"
WASM_FROM_PAGE = "js/wasm-from-page.js"
DEMOS = "demos/index.json"

# Uses of import.meta.url that have no meaning in this file but are never evaluated in it: init()'s
# default wasm URL (wasmSource() always gives the bytes here) and the pool's default worker URL
# (sources.js always gives workerUrl here). Any other use in a bundled module stops the build.
ALLOWED_IMPORT_META = {
    "pkg/tirtrace.js": "new URL('tirtrace_bg.wasm', import.meta.url)",
    "js/trace/pool.js": "new URL('./worker.js', import.meta.url)",
}

IMAGE_TYPES = {".svg": "image/svg+xml", ".png": "image/png", ".ico": "image/x-icon", ".webp": "image/webp"}


class BuildError(Exception):
    """A problem that stops the build; the message names the file and what is wrong."""


def read_text(path: str) -> str:
    file = WWW / path
    if not file.is_file():
        raise BuildError(f"www/{path} is missing (run `bash scripts/build.sh` first)")
    return file.read_text(encoding="utf-8")


# ---------------------------------------------------------------------------- modules


def bundle(tree: Path, entry: str, fmt: str) -> tuple[str, list[str]]:
    """esbuild's bundle of `entry` (a www-relative path in the copy `tree`) in format `fmt`
    ('esm' or 'iife'), and the www-relative paths of the modules it holds."""
    if not ESBUILD.is_file():
        raise BuildError(f"{ESBUILD.relative_to(ROOT)} is missing (run `npm ci --prefix tools`, or scripts/setup.sh)")
    out, meta = tree / "bundle.js", tree / "meta.json"
    run = subprocess.run(
        [str(ESBUILD), entry, "--bundle", f"--format={fmt}", "--charset=utf8", "--legal-comments=none",
         "--log-level=error", f"--outfile={out}", f"--metafile={meta}"],
        cwd=tree, capture_output=True, text=True, check=False,
    )
    if run.returncode != 0:
        raise BuildError(f"esbuild could not bundle www/{entry}:\n{run.stderr.strip()}")
    inputs = sorted(json.loads(meta.read_text(encoding="utf-8"))["inputs"])
    for path in inputs:
        rest = (tree / path).read_text(encoding="utf-8").replace(ALLOWED_IMPORT_META.get(path, "\0"), "")
        if "import.meta" in rest:
            raise BuildError(
                f"www/{path} uses import.meta, which has no meaning in a file opened from disk; give it "
                "what it needs another way (see www/js/wasm-source.js)"
            )
    return out.read_text(encoding="utf-8"), inputs


def wasm_source_module() -> str:
    """js/wasm-source.js for the page: it holds the packed WebAssembly."""
    wasm = (WWW / WASM).read_bytes()
    packed = base64.b64encode(gzip.compress(wasm, compresslevel=9, mtime=0)).decode("ascii")
    return f"""// Generated by scripts/build_single.py for the single-file page: the core's WebAssembly
// ({len(wasm)} bytes), gzip-compressed, in base64; wasmSource() gives init() the bytes. The trace
// workers get the module the page compiles from them (load-core.js, wasm-from-page.js).

const WASM_GZIP_BASE64 = '{packed}';
const WASM_BYTES = {len(wasm)};

let bytes = null;

async function unpack() {{
  if (typeof DecompressionStream !== 'function') {{
    throw new Error('this browser cannot unpack the embedded calculator (it has no DecompressionStream); open the file in a current browser');
  }}
  const data = Uint8Array.from(atob(WASM_GZIP_BASE64), (c) => c.charCodeAt(0));
  const stream = new Response(data).body.pipeThrough(new DecompressionStream('gzip'));
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


def page_sources_module(worker_script: str) -> str:
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
// trace workers: their bundle, started as a classic script from a blob: URL (a file:// page may
// not start a module worker from one), with the core the page compiled handed to each.

import {{ coreModule }} from '../load-core.js';

const DEMOS = {json.dumps(listing, ensure_ascii=False)};
const TEXTS = {json.dumps(texts, ensure_ascii=False)};
const WORKER_SCRIPT = {json.dumps(worker_script, ensure_ascii=False)};

let workerUrl = null;

/** The examples for the "Start from" menu: [{{ file, name }}]. */
export async function demoList() {{
  return DEMOS.map((d) => ({{ ...d }}));
}}

/** The scenario text of one example, by its `file` from demoList(). */
export async function demoText(file) {{
  if (!Object.hasOwn(TEXTS, file)) throw new Error(`there is no example "${{file}}" in this file`);
  return TEXTS[file];
}}

/** TracePool options (call once the core has started): the workers' bundle, a classic script
 * from a blob: URL, and the core the page compiled. */
export async function traceWorker() {{
  workerUrl ??= URL.createObjectURL(new Blob([WORKER_SCRIPT], {{ type: 'text/javascript' }}));
  return {{ workerUrl, workerType: 'classic', coreModule: coreModule() }};
}}
"""


def copy_tree(tmp: str) -> Path:
    """A copy of www/js and www/pkg to bundle from (generated modules go in place of served ones)."""
    tree = Path(tmp)
    for folder in ("js", "pkg"):
        if not (WWW / folder).is_dir():
            raise BuildError(f"www/{folder} is missing (run `bash scripts/build.sh` first)")
        shutil.copytree(WWW / folder, tree / folder)
    return tree


def worker_bundle() -> str:
    """The trace workers' bundle (IIFE): js/trace/worker.js with js/wasm-from-page.js in place of
    js/wasm-source.js, so that it imports and fetches nothing and holds no build-specific module."""
    with tempfile.TemporaryDirectory(prefix="tirtrace-worker-") as tmp:
        tree = copy_tree(tmp)
        (tree / WASM_SOURCE).write_text(read_text(WASM_FROM_PAGE), encoding="utf-8")
        worker, inputs = bundle(tree, WORKER, "iife")
    if WASM_SOURCE not in inputs:
        raise BuildError(f"www/{WASM_SOURCE} is no longer imported by the trace worker; scripts/build_single.py swaps it")
    for module in (PAGE_SOURCES, "js/build.js"):
        if module in inputs:
            raise BuildError(f"www/{module} is loaded in the trace worker, which must hold no page or build module")
    return "// Generated by scripts/build_single.py --worker-bundle (not in git): the trace workers' bundle.\n" + worker


def bundles(entry: str) -> str:
    """The page's bundle (ESM) with the trace workers' bundle (IIFE, www/js/trace/worker-bundle.js)
    inside, made from a copy of www/js and www/pkg with the generated modules in place of the
    served ones."""
    worker = read_text(WORKER_BUNDLE)
    with tempfile.TemporaryDirectory(prefix="tirtrace-single-") as tmp:
        tree = copy_tree(tmp)
        (tree / WASM_SOURCE).write_text(wasm_source_module(), encoding="utf-8")
        (tree / PAGE_SOURCES).write_text(page_sources_module(worker), encoding="utf-8")
        page, page_inputs = bundle(tree, entry, "esm")
    for path in (WASM_SOURCE, PAGE_SOURCES):
        if path not in page_inputs:
            raise BuildError(f"www/{path} is no longer imported; scripts/build_single.py swaps it for the embedded data")
    if re.search(r"</script|<!--", page, re.I):
        raise BuildError("the page's bundle contains '</script' or '<!--', which would end its script early")
    return page


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



CSP_META = re.compile(r"""<meta\s+http-equiv="Content-Security-Policy"\s+content="[^"]*"\s*/?>""", re.I)


def csp_hash(text: str) -> str:
    """The Content-Security-Policy source allowing an inline element whose text is `text`."""
    return f"'sha256-{base64.b64encode(hashlib.sha256(text.encode('utf-8')).digest()).decode('ascii')}'"


def single_file_policy(script: str, styles: list[str]) -> str:
    """The single file's Content-Security-Policy. Opened from disk, it has no folder ('self') to
    load from: nothing may load but the page's one script and its style sheets (each allowed by
    its hash, so no other inline script or style sheet runs), style attributes, the embedded
    images (data:), the trace workers (blob:) and the WebAssembly compiled from the embedded bytes
    ('wasm-unsafe-eval')."""
    return "; ".join([
        "default-src 'none'",
        f"script-src {csp_hash(script)} 'wasm-unsafe-eval'",
        f"style-src {' '.join(csp_hash(s) for s in styles)}",
        # The chart library measures text in a span it styles.
        "style-src-attr 'unsafe-inline'",
        "img-src data:",
        "worker-src blob:",
        "object-src 'none'",
        "base-uri 'none'",
        "form-action 'none'",
    ])


def build() -> tuple[int, list[str]]:
    page, entry, left_out = transform_page(read_text(PAGE))
    script = f"\n{bundles(entry)}"
    scripts = f'<script type="module">{script}</script>\n'
    if page.count("</body>") != 1:
        raise BuildError(f"www/{PAGE} needs exactly one </body>")
    page = page.replace("</body>", scripts + "</body>")
    # The served page's policy (files of its folder) is replaced by the single file's.
    if len(CSP_META.findall(page)) != 1:
        raise BuildError(f"www/{PAGE} needs exactly one <meta http-equiv=\"Content-Security-Policy\">, which this build replaces")
    styles = re.findall(r"<style>(.*?)</style>", page, flags=re.S)
    policy = single_file_policy(script, styles)
    page = CSP_META.sub(lambda _m: f'<meta http-equiv="Content-Security-Policy" content="{policy}">', page)
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
    if sys.argv[1:] == ["--worker-bundle"]:
        try:
            text = worker_bundle()
        except BuildError as e:
            print(f"[build_single] {e}", file=sys.stderr)
            return 1
        (WWW / WORKER_BUNDLE).write_text(text, encoding="utf-8")
        print(f"[build] www/{WORKER_BUNDLE}: {len(text.encode('utf-8'))} bytes (the trace workers)", file=sys.stderr)
        return 0
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
