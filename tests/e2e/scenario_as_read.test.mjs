// The core's `scenario_as_read` (the design page's only source of defaults): a document comes
// back with every field the core fills when it is absent, valued as the core fills it; what a
// document gives is kept; range problems are left to `check_scenario`; a text the core cannot
// read throws with the message `check_scenario` gives. Runs the wasm module in Node.
//
// Before: bash scripts/build.sh (www/pkg).

import assert from 'node:assert/strict';
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { test } from 'node:test';
import { fileURLToPath } from 'node:url';

import { check_scenario, initSync, scenario_as_read } from '../../www/pkg/tirtrace.js';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const SCENARIOS = join(ROOT, 'examples', 'scenarios');

initSync({ module: readFileSync(join(ROOT, 'www', 'pkg', 'tirtrace_bg.wasm')) });

/** A scenario that gives only what the core cannot default. */
const BARE = {
  version: 1,
  guide: {
    section: { round: { diameter_mm: 3 } },
    material: { library: 'pmma' },
    surroundings: { library: 'air' },
    contacts: [{ segment: 1, from_mm: 0, to_mm: 2, medium: { library: 'polycarbonate' } }],
  },
  route: [{ straight: { length_mm: 5 } }, { bend: { radius_mm: 8, angle_deg: 90 } }],
  source: { emitter: { led: { area: { square: { side_mm: 0.5 } }, pattern: 'lambertian' } }, wavelength_nm: 525 },
};

/** Every value of `given` is in `read`, at the same place. */
function assertKeeps(read, given, path = 'scenario') {
  if (given === null || typeof given !== 'object') {
    assert.equal(read, given, path);
    return;
  }
  assert.equal(Array.isArray(read), Array.isArray(given), `${path} changed kind`);
  for (const [k, v] of Object.entries(given)) assertKeeps(read?.[k], v, `${path}.${k}`);
}

test('a bare scenario comes back with the defaults the form shows', () => {
  const read = scenario_as_read(JSON.stringify(BARE));
  assertKeeps(read, BARE);
  // The values the design page used to write in itself before asking the core.
  assert.equal(read.name, '');
  assert.equal(read.guide.attenuation_db_per_m, 0);
  assert.equal(read.source.gap_mm, 0);
  assert.deepEqual(read.source.gap_medium, { library: 'air' });
  assert.deepEqual(read.source.offset_mm, [0, 0]);
  assert.equal(read.source.tilt_deg, 0);
  assert.equal(read.source.tilt_toward_deg, 0);
  assert.deepEqual(read.trace, { rays: 100000, seed: 1, max_interactions: 10000 });
  assert.equal(read.route[1].bend.turn_deg, 0);
  assert.equal(read.guide.contacts[0].sector_from_deg, 0);
  assert.equal(read.guide.contacts[0].sector_to_deg, 360);
  assert.equal(read.guide.contacts[0].name, '');
  // Optional parts the document leaves out stay out.
  for (const absent of ['receiver', 'flux', 'exit_medium']) {
    assert.ok(!(absent in read) && !(absent in read.source) && !(absent in read.guide), `${absent} appeared`);
  }
});

test('every example is kept as given and reads back to itself', () => {
  const files = readdirSync(SCENARIOS).filter((f) => f.endsWith('.json'));
  assert.ok(files.length > 3);
  for (const f of files) {
    const text = readFileSync(join(SCENARIOS, f), 'utf8');
    const read = scenario_as_read(text);
    assertKeeps(read, JSON.parse(text), f);
    assert.deepEqual(scenario_as_read(JSON.stringify(read)), read, `${f} does not read back to itself`);
    assert.equal(check_scenario(JSON.stringify(read)).ok, true, `${f} as read has problems`);
  }
});

test('range problems are read (check_scenario names them); unreadable text throws its message', () => {
  const bad = { ...BARE, route: [{ bend: { radius_mm: -3, angle_deg: 90 } }] };
  assert.equal(scenario_as_read(JSON.stringify(bad)).route[0].bend.radius_mm, -3);
  assert.equal(check_scenario(JSON.stringify(bad)).ok, false);
  for (const text of [
    '{ "version": 1, "guide": ',
    JSON.stringify({ ...BARE, colour: 'red' }),
    JSON.stringify({ ...BARE, trace: { rays: 1.5 } }),
    JSON.stringify({ version: 1 }),
  ]) {
    const [problem] = check_scenario(text).problems;
    assert.throws(() => scenario_as_read(text), (e) => e instanceof Error && e.message === problem.message, text);
  }
});
