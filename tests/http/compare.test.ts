/**
 * GET /api/models/{id}/compare?from&to and POST /api/compare: both revisions solved the way POST
 * /api/solve solves, the comparison of shared-types/compare.ts. Expected reactions: the uniform bar
 * fixed at both ends with T0 at a, T_A = −T0·b/L (Gere & Goodno §3.8, from memory).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeApp, type TestApp } from './helpers.js';

const TOKEN = 'compare-test-token-0123456789';
const bearer = { authorization: `Bearer ${TOKEN}` };

function bar(at: string, supports = true) {
  return {
    format: 'shaftnet/1',
    name: 'Fixed-fixed bar (invented)',
    materials: [{ id: 'steel', G: '80 GPa' }],
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
    shafts: [{ id: 's', segments: [{ length: '1 m', section: 'd40', material: 'steel' }] }],
    supports: supports
      ? [
          { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
          { id: 'B', shaft: 's', at: '1 m', kind: 'fixed' },
        ]
      : [],
    torques: [{ id: 'T', shaft: 's', at, torque: '1000 N*m' }],
  };
}

let t: TestApp;
let id = '';
beforeAll(async () => {
  t = await makeApp({ token: TOKEN });
  const created = await t.app.inject({ method: 'POST', url: '/api/models', payload: { model: bar('300 mm'), author: 'Ada' }, headers: bearer });
  id = (created.json() as { id: string }).id;
  const saved = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, payload: { model: bar('400 mm'), baseRevision: 1, author: 'Bo' }, headers: bearer });
  expect(saved.statusCode).toBe(200);
  // Revision 3: a mechanism (no supports), saved as work in progress.
  const wip = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, payload: { model: bar('400 mm', false), baseRevision: 2, author: 'Bo' }, headers: bearer });
  expect(wip.statusCode).toBe(200);
});
afterAll(async () => t.close());

describe('GET /api/models/{id}/compare', () => {
  it('answers the changed input and the moved reactions between two revisions', async () => {
    const res = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?from=1&to=2`, headers: bearer });
    expect(res.statusCode).toBe(200);
    const body = res.json();
    expect(body.inputs).toEqual([{ change: 'changed', list: 'torques', item: 'T', field: 'at', from: '300 mm', to: '400 mm' }]);
    const A = body.results.find((r: { quantity: string; item: string }) => r.quantity === 'reaction' && r.item === 'A');
    expect(A.from).toBeCloseTo(-700, 9); // −T0·b/L, a = 0.3 m
    expect(A.to).toBeCloseTo(-600, 9); // a = 0.4 m
    expect(A.delta).toBeCloseTo(100, 9);
    expect(body.unsolved).toEqual([]);
  });

  it('a revision that does not solve has null results and is named in unsolved', async () => {
    const res = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?from=2&to=3`, headers: bearer });
    expect(res.statusCode).toBe(200);
    const body = res.json();
    expect(body.unsolved.map((u: { side: string; code: string }) => [u.side, u.code])).toEqual([['to', 'SN_MECHANISM']]);
    const A = body.results.find((r: { quantity: string; item: string }) => r.quantity === 'reaction' && r.item === 'A');
    expect(A.to).toBeNull();
    expect(body.inputs.filter((i: { change: string }) => i.change === 'removed').map((i: { item: string }) => i.item)).toEqual(['A', 'B']);
  });

  it('400 naming the query parameter when from or to is missing; 404 for an unknown revision or model; 401 without the token', async () => {
    const missing = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?from=1`, headers: bearer });
    expect(missing.statusCode).toBe(400);
    expect(missing.json().error.issues[0].pointer).toBe('/to');
    const noFrom = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?to=1`, headers: bearer });
    expect(noFrom.statusCode).toBe(400);
    expect(noFrom.json().error.issues[0].pointer).toBe('/from');
    const unknown = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?from=1&to=9`, headers: bearer });
    expect(unknown.statusCode).toBe(404);
    expect(unknown.json().error.issues[0].pointer).toBe('/to');
    const noModel = await t.app.inject({ method: 'GET', url: `/api/models/nope/compare?from=1&to=2`, headers: bearer });
    expect(noModel.statusCode).toBe(404);
    const anon = await t.app.inject({ method: 'GET', url: `/api/models/${id}/compare?from=1&to=2` });
    expect(anon.statusCode).toBe(401);
  });
});

describe('POST /api/compare', () => {
  it('compares two models in the body; a bad one is a 400 under /from or /to', async () => {
    const res = await t.app.inject({ method: 'POST', url: '/api/compare', payload: { from: bar('300 mm'), to: bar('400 mm') }, headers: bearer });
    expect(res.statusCode).toBe(200);
    expect(res.json().inputs).toHaveLength(1);
    const bad = bar('400 mm');
    bad.sections[0].d = '40 parsecs';
    const refused = await t.app.inject({ method: 'POST', url: '/api/compare', payload: { from: bar('300 mm'), to: bad }, headers: bearer });
    expect(refused.statusCode).toBe(400);
    expect(refused.json().error.issues[0].pointer).toBe('/to/sections/0/d');
  });
});
