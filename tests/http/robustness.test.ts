/**
 * Robustness: thousands of malformed and mutated models, seeded. None may get
 * a 5xx; every 4xx must carry a registry code and name a field by pointer;
 * every 200 answer holds numbers where the contract wants numbers (no NaN or
 * Infinity written as null).
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ERROR_CODES } from '../../shared-types/errors.js';
import { cantilever, demo, makeApp, type ErrorBodyT, type TestApp } from './helpers.js';
import { extremeCase, misplacedNulls } from '../engine/finite-helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeApp({ limits: { maxStations: 5000, maxShafts: 100 } });
});
afterAll(async () => {
  await t.close();
});

const bases = [demo('mixer-drive'), demo('gear-train-branches'), demo('stepped-two-material'), demo('tapered-bar-shoulder'), demo('geared-drive-vibration'), cantilever(3)];

const weird = fc.oneof(
  fc.constantFrom(
    null, true, false, 0, -1, -0.0, 1e308, -1e308, 5e-324, '', ' ', 'NaN', 'Infinity', '-Infinity mm', '1e999 m',
    '40 furlongs', '40', '40 mm mm', 'mm', '0 mm', '-40 mm', '79.3 GPa', '1450 rpm', '1 kN*m', '0.5 deg', 'steel', 'input',
    'shaftnet/1', 'x'.repeat(300), '\u0000', '__proto__', 'constructor', [], {}, [[]], { id: 'x' }, [null],
  ),
  fc.double(),
  fc.integer(),
  fc.string({ maxLength: 20 }),
  fc.jsonValue({ maxDepth: 2 }),
);

type Op = 'delete' | 'replace' | 'add' | 'duplicate' | 'rename';
const mutation = fc.record({
  at: fc.nat(),
  op: fc.constantFrom<Op>('delete', 'replace', 'replace', 'replace', 'add', 'duplicate', 'rename'),
  value: weird,
  key: fc.oneof(fc.constantFrom('id', 'shaft', 'at', 'kind', 'length', 'G', 'extra', 'segments'), fc.string({ maxLength: 8 })),
});

/** Every [container, key] in a JSON value, depth first. */
function slots(root: unknown): Array<[Record<string, unknown> | unknown[], string | number]> {
  const out: Array<[Record<string, unknown> | unknown[], string | number]> = [];
  const walk = (v: unknown) => {
    if (Array.isArray(v)) v.forEach((x, i) => (out.push([v, i]), walk(x)));
    else if (v && typeof v === 'object') for (const k of Object.keys(v)) out.push([v as Record<string, unknown>, k]), walk((v as Record<string, unknown>)[k]);
  };
  walk(root);
  return out;
}

function mutate(base: unknown, muts: Array<{ at: number; op: Op; value: unknown; key: string }>): unknown {
  const m = structuredClone(base);
  for (const { at, op, value, key } of muts) {
    const all = slots(m);
    if (all.length === 0) break;
    const [parent, k] = all[at % all.length];
    const p = parent as Record<string | number, unknown>;
    if (op === 'delete') {
      if (Array.isArray(parent)) parent.splice(k as number, 1);
      else delete p[k];
    } else if (op === 'replace') p[k] = structuredClone(value);
    else if (op === 'add') {
      if (Array.isArray(parent)) parent.push(structuredClone(value));
      else p[key] = structuredClone(value);
    } else if (op === 'duplicate') {
      if (Array.isArray(parent)) parent.push(structuredClone(parent[k as number]));
      else p[key] = structuredClone(p[k]);
    } else if (op === 'rename' && !Array.isArray(parent)) {
      p[key] = p[k];
      delete p[k];
    }
  }
  return m;
}

const codes = new Set(Object.keys(ERROR_CODES));

function checkAnswer(status: number, body: string, sent: unknown): void {
  expect(status, body.slice(0, 500)).toBeLessThan(500);
  if (status < 400) return;
  const e = JSON.parse(body) as ErrorBodyT;
  expect(codes.has(e.error.code), e.error.code).toBe(true);
  expect(e.error.issues.length).toBeGreaterThan(0);
  const isObject = sent !== null && typeof sent === 'object' && !Array.isArray(sent);
  for (const issue of e.error.issues) {
    expect(typeof issue.pointer).toBe('string');
    expect(codes.has(issue.code)).toBe(true);
    expect(issue.message.length).toBeGreaterThan(0);
    // "names a field": a pointer, or (for a whole-model problem) the shafts or connections concerned
    const named = issue.pointer !== '' || (issue.shafts?.length ?? 0) > 0 || (issue.connections?.length ?? 0) > 0 || !isObject || issue.code === 'SN_JSON';
    expect(named, JSON.stringify(issue)).toBe(true);
    if (issue.pointer !== '') expect(issue.pointer.startsWith('/')).toBe(true);
  }
}

describe('robustness', () => {
  it('mutated models never get a 5xx, and every 4xx names a field', async () => {
    const stats = new Map<number, number>();
    await fc.assert(
      fc.asyncProperty(fc.nat(bases.length - 1), fc.array(mutation, { minLength: 1, maxLength: 4 }), async (b, muts) => {
        const model = mutate(bases[b], muts);
        const r = await t.app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(model), headers: { 'content-type': 'application/json' } });
        stats.set(r.statusCode, (stats.get(r.statusCode) ?? 0) + 1);
        checkAnswer(r.statusCode, r.body, model);
        if (r.statusCode === 200) expect(misplacedNulls(JSON.parse(r.body)), r.body.slice(0, 300)).toEqual([]);
      }),
      { seed: 20240611, numRuns: 3000 },
    );
    // the mutations must reach past the schema: some still solve, some are refused by the engine
    expect(stats.get(200) ?? 0).toBeGreaterThan(50);
    expect(stats.get(400) ?? 0).toBeGreaterThan(500);
  });

  it('mutated models saved to the library: no 5xx, 4xx pointers inside /model', async () => {
    await fc.assert(
      fc.asyncProperty(fc.nat(bases.length - 1), fc.array(mutation, { minLength: 1, maxLength: 3 }), async (b, muts) => {
        const model = mutate(bases[b], muts);
        const r = await t.app.inject({ method: 'POST', url: '/api/models', payload: JSON.stringify({ model, author: 'fuzz', message: '' }), headers: { 'content-type': 'application/json' } });
        checkAnswer(r.statusCode, r.body, { model });
        if (r.statusCode === 400) {
          for (const i of (JSON.parse(r.body) as ErrorBodyT).error.issues) expect(i.pointer === '/model' || i.pointer.startsWith('/model/')).toBe(true);
        }
      }),
      { seed: 777, numRuns: 800 },
    );
  });

  it('arbitrary JSON and broken text never get a 5xx', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.jsonValue({ maxDepth: 4 }).map((v) => JSON.stringify(v)),
          fc.string({ maxLength: 200 }),
          fc.nat(400).map((n) => JSON.stringify(bases[0]).slice(0, n)),
        ),
        async (text) => {
          const r = await t.app.inject({ method: 'POST', url: '/api/solve', payload: text, headers: { 'content-type': 'application/json' } });
          let sent: unknown = undefined;
          try {
            sent = JSON.parse(text);
          } catch {
            sent = undefined;
          }
          checkAnswer(r.statusCode, r.body, sent);
        },
      ),
      { seed: 4242, numRuns: 1500 },
    );
  });
});

describe('finite answers over HTTP', () => {
  const solve = (model: unknown) =>
    t.app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(model), headers: { 'content-type': 'application/json' } });
  const edited = (change: (m: Record<string, any>) => void) => {
    const m = demo('mixer-drive') as Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
    change(m);
    return m;
  };

  // The four values that were once answered with null numbers; each is now a 400 naming its field.
  it.each<[string, (m: Record<string, any>) => void, string]>([ // eslint-disable-line @typescript-eslint/no-explicit-any
    ['a distributed torque end of -1.7976931348623157e308', (m) => (m.distributedTorques[0].end = -1.7976931348623157e308), '/distributedTorques/0/end'],
    ['G = "1e-300 Pa"', (m) => (m.materials[0].G = '1e-300 Pa'), '/materials/0/G'],
    ['G = 1e308', (m) => (m.materials[0].G = 1e308), '/materials/0/G'],
    ['a segment length of 1e12', (m) => (m.shafts[0].segments[0].length = 1e12), '/shafts/0/segments/0/length'],
  ])('%s: 400 SN_OUT_OF_RANGE at its pointer', async (_what, change, pointer) => {
    const r = await solve(edited(change));
    expect(r.statusCode, r.body).toBe(400);
    const e = JSON.parse(r.body) as ErrorBodyT;
    expect(e.error.code).toBe('SN_OUT_OF_RANGE');
    expect(e.error.issues.map((i) => [i.code, i.pointer])).toEqual([['SN_OUT_OF_RANGE', pointer]]);
  });

  it('models with extreme quantities (seeded): no 5xx, no null where a number belongs, every 4xx names a field', async () => {
    const stats = new Map<number, number>();
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: 2 ** 31 - 1 }), async (seed) => {
        const model = extremeCase(seed);
        const r = await solve(model);
        stats.set(r.statusCode, (stats.get(r.statusCode) ?? 0) + 1);
        checkAnswer(r.statusCode, r.body, model);
        if (r.statusCode === 200) expect(misplacedNulls(JSON.parse(r.body)), `seed ${seed}`).toEqual([]);
      }),
      { seed: 8042026, numRuns: 500 },
    );
    // Both sides are reached: answers to check, and refusals by range.
    expect(stats.get(200) ?? 0).toBeGreaterThan(100);
    expect(stats.get(400) ?? 0).toBeGreaterThan(100);
  });
});
