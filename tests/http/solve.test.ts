import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cantilever, demo, errorOf, freeShaft, makeApp, type TestApp } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeApp();
});
afterAll(async () => {
  await t.close();
});

const post = (app: TestApp, body: unknown, url = '/api/solve') =>
  app.app.inject({ method: 'POST', url, payload: typeof body === 'string' ? body : JSON.stringify(body), headers: { 'content-type': 'application/json' } });

interface Sol {
  format: string;
  shafts: Array<{ id: string; stations: Array<{ z: number; rotation: number; torqueLeft: number | null; torqueRight: number | null }> }>;
  reactions: Array<{ support: string; torque: number }>;
}

const J40 = (Math.PI * 0.04 ** 4) / 32; // m⁴, polar second moment of a solid 40 mm section: J = π d⁴ / 32

describe('POST /api/solve', () => {
  it('solves a cantilever to its closed form', async () => {
    const r = await post(t, cantilever(4, 100));
    expect(r.statusCode).toBe(200);
    const s = r.json() as Sol;
    expect(s.format).toBe('shaftnet-solution/1');
    const end = s.shafts[0].stations.find((st) => Math.abs(st.z - 1) < 1e-12)!;
    // Saint-Venant torsion of a uniform shaft fixed at one end: φ(L) = T L / (G J)
    expect(end.rotation).toBeCloseTo((100 * 1) / (80e9 * J40), 12);
    // The fixed support carries the whole applied torque, opposite in sign (equilibrium)
    expect(s.reactions[0].torque).toBeCloseTo(-100, 9);
  });

  it('solves the stepped two-material demo to the compatibility closed form', async () => {
    const r = await post(t, demo('stepped-two-material'));
    expect(r.statusCode).toBe(200);
    const s = r.json() as Sol;
    // Fixed-fixed stepped shaft, closed form by compatibility (total twist between the ends is zero):
    // T(z) = -R_L on the steel part (0.5 m), T(z) = -R_L - 1200 + 500 (z - 0.5) on the aluminium part (0.4 m);
    // ∫ T / GJ dz = 0 gives R_L. G_alu = E / (2 (1 + ν)). J = π d⁴ / 32.
    const GJ1 = 77e9 * ((Math.PI * 0.06 ** 4) / 32);
    const GJ2 = (70e9 / (2 * 1.33)) * ((Math.PI * 0.045 ** 4) / 32);
    const RL = ((-1200 * 0.4 + (500 * 0.4 ** 2) / 2) / GJ2) / (0.5 / GJ1 + 0.4 / GJ2);
    const left = s.reactions.find((x) => x.support === 'left')!.torque;
    const right = s.reactions.find((x) => x.support === 'right')!.torque;
    expect(left).toBeCloseTo(RL, 6);
    // Equilibrium: reactions + 1200 N·m at the step − 500 N·m/m over 0.4 m = 0
    expect(left + right + 1200 - 500 * 0.4).toBeCloseTo(0, 6);
  });

  it('solves every demo', async () => {
    for (const id of ['mixer-drive', 'gear-train-branches', 'stepped-two-material']) {
      const r = await post(t, demo(id));
      expect(r.statusCode, id + ': ' + r.body.slice(0, 300)).toBe(200);
    }
  });

  it('400 SN_JSON for a body that is not JSON, or not sent as JSON', async () => {
    const r = await post(t, '{"format": "shaftnet/1", ');
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.code).toBe('SN_JSON');
    expect(errorOf(r.body).error.message).toMatch(/not valid JSON/);
    const empty = await post(t, '');
    expect(empty.statusCode).toBe(400);
    expect(errorOf(empty.body).error.code).toBe('SN_JSON');
    const text = await t.app.inject({ method: 'POST', url: '/api/solve', payload: 'hello', headers: { 'content-type': 'text/plain' } });
    expect(text.statusCode).toBe(400);
    expect(errorOf(text.body).error.code).toBe('SN_JSON');
    const proto = await post(t, '{"format":"shaftnet/1","__proto__":{"x":1}}');
    expect(proto.statusCode).toBe(400);
    expect(errorOf(proto.body).error.code).toBe('SN_JSON');
  });

  it('400 SN_SCHEMA names the field: missing, misspelt, wrong type, bad enum', async () => {
    const m = cantilever(1) as Record<string, any>;
    delete m.shafts[0].segments[0].length;
    m.shafts[0].segmentz = [];
    m.supports[0].kind = 'welded';
    m.torques[0].at = true;
    const r = await post(t, m);
    expect(r.statusCode).toBe(400);
    const e = errorOf(r.body);
    expect(e.error.code).toBe('SN_SCHEMA');
    const byPointer = Object.fromEntries(e.error.issues.map((i) => [i.pointer, i.message]));
    expect(byPointer['/shafts/0/segments/0/length']).toBe('is required');
    expect(byPointer['/shafts/0/segmentz']).toMatch(/not a field here/);
    expect(byPointer['/supports/0/kind']).toBe('must be one of "fixed", "spring"');
    expect(byPointer['/torques/0/at']).toMatch(/number in SI units or a string/);
    for (const i of e.error.issues) expect(i.code).toBe('SN_SCHEMA');
    const arr = await post(t, [1, 2]);
    expect(arr.statusCode).toBe(400);
    expect(errorOf(arr.body).error.issues[0].pointer).toBe('');
  });

  it('400 SN_FORMAT for another format version, 400 from the engine for a wrong unit', async () => {
    const f = await post(t, { ...cantilever(1), format: 'shaftnet/2' });
    expect(f.statusCode).toBe(400);
    expect(errorOf(f.body).error.issues).toEqual([{ code: 'SN_FORMAT', pointer: '/format', message: 'must be "shaftnet/1", not "shaftnet/2"' }]);
    const m = cantilever(1) as Record<string, any>;
    m.sections[0].d = '40 N*m';
    const u = await post(t, m);
    expect(u.statusCode).toBe(400);
    expect(errorOf(u.body).error.code).toBe('SN_UNIT_KIND');
    expect(errorOf(u.body).error.issues[0].pointer).toBe('/sections/0/d');
  });

  it('422 SN_MECHANISM names the shafts free to spin', async () => {
    const r = await post(t, freeShaft());
    expect(r.statusCode).toBe(422);
    const e = errorOf(r.body);
    expect(e.error.code).toBe('SN_MECHANISM');
    expect(e.error.issues[0].shafts).toEqual(['s']);
  });

  it('413 SN_TOO_LARGE for a body over the byte limit, and a model over the station or shaft limits', async () => {
    const tiny = await makeApp({ maxBodyBytes: 4096 });
    const small = await makeApp({ limits: { maxStations: 50, maxShafts: 2 } });
    try {
      const big = await post(tiny, { ...cantilever(1), notes: 'x'.repeat(5000) });
      expect(big.statusCode).toBe(413);
      expect(errorOf(big.body).error.code).toBe('SN_TOO_LARGE');
      expect(errorOf(big.body).error.message).toMatch(/--max-body/);
      const many = await post(small, cantilever(60));
      expect(many.statusCode).toBe(413);
      expect(errorOf(many.body).error.message).toMatch(/stations.*at most 50/);
      const shafts = await post(small, demo('mixer-drive'));
      expect(shafts.statusCode).toBe(413);
      expect(errorOf(shafts.body).error.issues[0].pointer).toBe('/shafts');
    } finally {
      await tiny.close();
      await small.close();
    }
  });

  it('a worker solve answers exactly what an inline solve answers', async () => {
    const w = await makeApp({ workerThreshold: 0 });
    try {
      const model = demo('mixer-drive');
      const [inline, worker] = await Promise.all([post(t, model), post(w, model)]);
      expect(worker.statusCode).toBe(200);
      expect(worker.headers['content-type']).toMatch(/^application\/json/);
      expect(worker.json()).toEqual(inline.json());
      const mech = await post(w, freeShaft());
      expect(mech.statusCode).toBe(422);
      expect(errorOf(mech.body).error.issues[0].shafts).toEqual(['s']);
    } finally {
      await w.close();
    }
  });

  it('a worker answer of several megabytes arrives whole (sent in chunks)', async () => {
    const w = await makeApp({ workerThreshold: 0 });
    try {
      const model = cantilever(6000);
      const [inline, worker] = await Promise.all([post(t, model), post(w, model)]);
      expect(worker.statusCode).toBe(200);
      expect(worker.body.length).toBeGreaterThan(2 * 1024 * 1024); // more than one 1 MiB chunk
      expect(Number(worker.headers['content-length'])).toBe(Buffer.byteLength(worker.body));
      expect(worker.body).toBe(inline.body); // byte for byte what JSON.stringify gives
    } finally {
      await w.close();
    }
  });

  it('a large body sent without Content-Length (chunked) is solved in the worker too', async () => {
    const w = await makeApp({ deferBytes: 1024 });
    try {
      const text = JSON.stringify(cantilever(40));
      const r = await w.app.inject({
        method: 'POST',
        url: '/api/solve',
        payload: Readable.from([text.slice(0, 700), text.slice(700)]),
        headers: { 'content-type': 'application/json' },
      });
      expect(r.statusCode).toBe(200);
      expect(r.json()).toEqual((await post(t, text)).json());
    } finally {
      await w.close();
    }
  });

  it('a large body is parsed and checked in the worker, with the same answers', async () => {
    const w = await makeApp({ deferBytes: 1024 });
    try {
      const model = cantilever(40); // > 1 KiB of JSON
      const [inline, deferred] = await Promise.all([post(t, model), post(w, model)]);
      expect(deferred.statusCode).toBe(200);
      expect(deferred.json()).toEqual(inline.json());
      const broken = await post(w, JSON.stringify(model).slice(0, -2));
      expect(broken.statusCode).toBe(400);
      expect(errorOf(broken.body).error.code).toBe('SN_JSON');
      const bad = cantilever(40) as Record<string, any>;
      bad.shafts[0].segments[7].lenght = 1;
      const schema = await post(w, bad);
      expect(schema.statusCode).toBe(400);
      expect(errorOf(schema.body).error.issues.map((i) => i.pointer)).toContain('/shafts/0/segments/7/lenght');
      const tooBig = await makeApp({ deferBytes: 1024, limits: { maxStations: 10, maxShafts: 5 } });
      const r = await post(tooBig, model);
      expect(r.statusCode).toBe(413);
      await tooBig.close();
    } finally {
      await w.close();
    }
  });

  it('504 SN_TIMEOUT past the time limit; the pool recovers for the next solve', async () => {
    const w = await makeApp({ workerThreshold: 0, solveTimeoutMs: 5 });
    try {
      const r = await post(w, cantilever(20_000));
      expect(r.statusCode).toBe(504);
      expect(errorOf(r.body).error.code).toBe('SN_TIMEOUT');
      const health = (await w.app.inject({ method: 'GET', url: '/api/health' })).json();
      expect(health.workers).toEqual({ busy: 0, total: 1 });
    } finally {
      await w.close();
    }
  });

  it('503 SN_BUSY when every worker is busy and the queue is full; health shows the busy worker', async () => {
    const w = await makeApp({ workerThreshold: 0, workers: 1, queueLimit: 0 });
    try {
      const first = post(w, cantilever(30_000));
      await new Promise((r) => setTimeout(r, 20));
      const health = (await w.app.inject({ method: 'GET', url: '/api/health' })).json();
      expect(health.workers).toEqual({ busy: 1, total: 1 });
      const second = await post(w, cantilever(1));
      expect(second.statusCode).toBe(503);
      expect(errorOf(second.body).error.code).toBe('SN_BUSY');
      expect((await first).statusCode).toBe(200);
    } finally {
      await w.close();
    }
  });

  it('429 SN_RATE_LIMITED past the per-minute limit; other routes are not limited', async () => {
    const w = await makeApp({ rateLimitPerMinute: 3 });
    try {
      const codes: number[] = [];
      for (let i = 0; i < 4; i++) codes.push((await post(w, cantilever(1))).statusCode);
      expect(codes).toEqual([200, 200, 200, 429]);
      const r = await post(w, cantilever(1));
      expect(errorOf(r.body).error.code).toBe('SN_RATE_LIMITED');
      expect(r.headers['retry-after']).toBeDefined();
      expect((await w.app.inject({ method: 'GET', url: '/api/health' })).statusCode).toBe(200);
    } finally {
      await w.close();
    }
  });
});
