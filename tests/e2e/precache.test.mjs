// The service worker's list of files (www/precache.js, written by scripts/build.sh) names every
// file the pages can ask for: followed from the three pages through their style sheets, icons,
// manifest, every module import (static and dynamic), the worker and WebAssembly URLs the
// modules make, and the examples' index. And it names only files that are there.
//
// Before: bash scripts/build.sh (www/pkg, www/demos, www/precache.js).

import assert from 'node:assert/strict';
import { existsSync, readFileSync } from 'node:fs';
import { posix } from 'node:path';
import { test } from 'node:test';
import { runInNewContext } from 'node:vm';

import { WWW } from './harness.mjs';

const PAGES = ['index.html', 'quick.html', 'bench.html'];

/** The list as the service worker sees it (it runs precache.js with `self` its global). */
function precacheList() {
  const self = {};
  runInNewContext(readFileSync(`${WWW}/precache.js`, 'utf8'), { self });
  return self.PRECACHE;
}

const isLocal = (url) => url && !url.startsWith('#') && !/^[a-z][\w+.-]*:/i.test(url) && !url.startsWith('//');

/** Files (www-relative) that `file` refers to. */
function references(file) {
  const text = readFileSync(`${WWW}/${file}`, 'utf8');
  const found = [];
  const add = (url) => {
    if (isLocal(url)) found.push(posix.normalize(posix.join(posix.dirname(file), url.split(/[?#]/)[0])));
  };
  if (file.endsWith('.html')) {
    for (const m of text.matchAll(/\b(?:src|href)\s*=\s*"([^"]*)"/g)) add(m[1]);
  } else if (file.endsWith('.js')) {
    for (const m of text.matchAll(/^\s*(?:import|export)\b[^;'"`]*?\bfrom\s*['"]([^'"\n]+)['"]/gm)) add(m[1]);
    for (const m of text.matchAll(/^\s*import\s*['"]([^'"\n]+)['"]/gm)) add(m[1]);
    for (const m of text.matchAll(/\bimport\(\s*['"]([^'"\n]+)['"]\s*\)/g)) add(m[1]);
    for (const m of text.matchAll(/new URL\(\s*['"]([^'"\n]+)['"]\s*,\s*import\.meta\.url\s*\)/g)) add(m[1]);
  } else if (file.endsWith('.css')) {
    for (const m of text.matchAll(/url\(\s*['"]?([^'")]+)['"]?\s*\)/g)) add(m[1]);
  } else if (file.endsWith('.webmanifest')) {
    const manifest = JSON.parse(text);
    for (const icon of manifest.icons || []) add(icon.src);
  }
  return found;
}

test('the service worker keeps every file the pages ask for', () => {
  const listed = new Set(precacheList());
  assert.ok(listed.has('./'), 'the page at the folder address');
  const seen = new Set();
  const todo = [...PAGES, 'sw.js'];
  while (todo.length) {
    const file = todo.pop();
    if (seen.has(file)) continue;
    seen.add(file);
    assert.ok(existsSync(`${WWW}/${file}`), `${file} is referred to but is not in www/`);
    for (const ref of references(file)) todo.push(ref);
  }
  const demos = JSON.parse(readFileSync(`${WWW}/demos/index.json`, 'utf8'));
  for (const d of demos) seen.add(`demos/${d.file}`);
  seen.add('demos/index.json');
  seen.delete('sw.js'); // the service worker itself is the browser's to keep
  seen.delete('precache.js'); // imported by the service worker, kept with it
  // The walk must reach what the pages are made of, or it would prove nothing.
  for (const file of ['js/trace/worker.js', 'pkg/tirtrace.js', 'pkg/tirtrace_bg.wasm', 'js/core.js', 'css/design.css', 'icon.svg']) {
    assert.ok(seen.has(file), `the walk did not reach ${file}`);
  }
  const missing = [...seen].filter((f) => !listed.has(`./${f}`)).sort();
  assert.deepEqual(missing, [], 'files the pages ask for that the service worker does not keep');
});

test('every file in the list is there', () => {
  for (const url of precacheList()) {
    if (url === './') continue;
    assert.ok(existsSync(`${WWW}/${url.slice(2)}`), `${url} is listed but not in www/`);
  }
});
