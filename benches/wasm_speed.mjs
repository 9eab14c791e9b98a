// Speed of the tracer compiled to wasm, in Node (V8, the engine of Chromium), on the same
// batches as `examples/speed.rs`. Usage: node benches/wasm_speed.mjs SCENARIO.json BATCHES
import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { initSync, Tracer } from '../www/pkg/tirtrace.js';

const [path, batchesArg] = process.argv.slice(2);
const batches = Number(batchesArg || 10);
initSync({ module: readFileSync(new URL('../www/pkg/tirtrace_bg.wasm', import.meta.url)) });
// The scenario's ray count replaced by BATCHES whole batches, as examples/speed.rs does.
const doc = JSON.parse(readFileSync(path, 'utf8'));
doc.trace = { ...doc.trace, rays: batches * 4096 };
const tracer = new Tracer(JSON.stringify(doc));
// Warm up: V8 starts wasm on its baseline compiler.
for (let i = 0; i < 3; i++) tracer.wall_interactions(0, 1);
const start = performance.now();
let interactions = 0;
for (let b = 0; b < batches; b++) interactions += tracer.wall_interactions(b, 1);
const s = (performance.now() - start) / 1000;
const rays = batches * 4096;
console.log(JSON.stringify({ runner: 'wasm in node, 1 thread', rays_per_s: Math.round(rays / s), wall_interactions_per_s: Math.round(interactions / s), seconds: Number(s.toFixed(3)) }));
