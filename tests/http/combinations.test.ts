/**
 * POST /api/solve?combination=<id>: the combination a model with load cases
 * shows at the top level, on the request thread and in a worker alike; an
 * unknown id is refused with SN_UNRESOLVED at the root.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorOf, makeApp, type TestApp } from './helpers.js';

let t: TestApp;
let w: TestApp;
beforeAll(async () => {
  t = await makeApp();
  w = await makeApp({ workerThreshold: 0 });
});
afterAll(async () => {
  await t.close();
  await w.close();
});

const post = (app: TestApp, body: unknown, url: string) =>
  app.app.inject({ method: 'POST', url, payload: JSON.stringify(body), headers: { 'content-type': 'application/json' } });

/** A cantilever 1 m long with 100 N·m at mid-span (case run) and 10 N·m/m over its length (case jam). */
const model = {
  format: 'shaftnet/1',
  name: 'cases',
  materials: [{ id: 'st', G: 80e9 }],
  sections: [{ id: 's', shape: 'solid', d: 0.05 }],
  shafts: [{ id: 'a', segments: [{ length: 1, section: 's', material: 'st' }] }],
  supports: [{ id: 'L', shaft: 'a', at: 0, kind: 'fixed' }],
  loadCases: [{ id: 'run' }, { id: 'jam' }],
  torques: [{ id: 't1', case: 'run', shaft: 'a', at: 0.5, torque: 100 }],
  distributedTorques: [{ id: 'd1', case: 'jam', shaft: 'a', from: 0, to: 1, start: 10, end: 10 }],
  combinations: [
    { id: 'service', factors: { run: 1 } },
    { id: 'peak', factors: { run: 1.5, jam: 2 } },
  ],
};

describe('POST /api/solve?combination=', () => {
  it('shows the first combination by default and the named one on request (statics of a cantilever, closed form)', async () => {
    for (const app of [t, w]) {
      const first = await post(app, model, '/api/solve');
      expect(first.statusCode).toBe(200);
      expect(first.json().combination).toBe('service');
      // The root carries the whole applied torque: −100 N·m; in "peak" −(1.5·100 + 2·10·1) = −170 N·m.
      expect(first.json().reactions[0].torque).toBeCloseTo(-100, 9);
      const peak = await post(app, model, '/api/solve?combination=peak');
      expect(peak.statusCode).toBe(200);
      expect(peak.json().combination).toBe('peak');
      expect(peak.json().reactions[0].torque).toBeCloseTo(-170, 9);
      expect(peak.json().envelope.reactions[0]).toMatchObject({ min: peak.json().reactions[0].torque, minCombination: 'peak', maxCombination: 'service' });
    }
  });

  it('an unknown combination: 400 SN_UNRESOLVED at the root, naming those there are', async () => {
    for (const app of [t, w]) {
      const r = await post(app, model, '/api/solve?combination=storm');
      expect(r.statusCode).toBe(400);
      const e = errorOf(r.body).error;
      expect(e.issues.map((i) => [i.code, i.pointer])).toEqual([['SN_UNRESOLVED', '']]);
      expect(e.issues[0].message).toContain('"storm"');
      expect(e.issues[0].message).toContain('"service", "peak"');
    }
  });
});
