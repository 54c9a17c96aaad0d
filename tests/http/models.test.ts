import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cantilever, demo, errorOf, freeShaft, makeApp, type TestApp } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeApp();
});
afterAll(async () => {
  await t.close();
});

const json = (body: unknown) => ({ payload: JSON.stringify(body), headers: { 'content-type': 'application/json' } });

async function create(model: unknown, author = 'ann', message = 'first') {
  const r = await t.app.inject({ method: 'POST', url: '/api/models', ...json({ model, author, message }) });
  expect(r.statusCode).toBe(201);
  return r.json() as { id: string; revision: number };
}

describe('model library', () => {
  it('POST /api/models creates revision 1; GET reads it back as sent', async () => {
    const model = demo('mixer-drive');
    const { id, revision } = await create(model, 'ann', 'initial design');
    expect(revision).toBe(1);
    const r = await t.app.inject({ method: 'GET', url: `/api/models/${id}` });
    expect(r.statusCode).toBe(200);
    const body = r.json();
    expect(body).toMatchObject({ id, revision: 1, author: 'ann', message: 'initial design', archived: false });
    expect(body.model).toEqual(model); // units as typed, not converted
    expect(Object.keys(body).sort()).toEqual(['archived', 'author', 'created', 'id', 'message', 'model', 'review', 'revision']);
  });

  it('PUT saves a new revision; revisions list newest first; each revision readable', async () => {
    const { id } = await create(cantilever(1, 100));
    const put = await t.app.inject({
      method: 'PUT',
      url: `/api/models/${id}`,
      ...json({ model: cantilever(2, 150), baseRevision: 1, author: 'bob', message: 'split the shaft' }),
    });
    expect(put.statusCode).toBe(200);
    expect(put.json()).toEqual({ id, revision: 2 });
    const revs = await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions` });
    expect(revs.statusCode).toBe(200);
    expect(revs.json().revisions.map((r: { revision: number; author: string; message: string }) => [r.revision, r.author, r.message])).toEqual([
      [2, 'bob', 'split the shaft'],
      [1, 'ann', 'first'],
    ]);
    const r1 = await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1` });
    expect(r1.statusCode).toBe(200);
    expect(r1.json().model).toEqual(cantilever(1, 100));
    expect(r1.json()).toMatchObject({ id, revision: 1, author: 'ann' });
    const latest = await t.app.inject({ method: 'GET', url: `/api/models/${id}` });
    expect(latest.json().model).toEqual(cantilever(2, 150));
  });

  it('PUT on a stale base revision is 409 SN_STALE_REVISION with currentRevision, and overwrites nothing', async () => {
    const { id } = await create(cantilever(1));
    await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, ...json({ model: cantilever(3), baseRevision: 1, author: 'bob', message: '' }) });
    const stale = await t.app.inject({
      method: 'PUT',
      url: `/api/models/${id}`,
      ...json({ model: cantilever(5), baseRevision: 1, author: 'cy', message: 'mine' }),
    });
    expect(stale.statusCode).toBe(409);
    const body = errorOf(stale.body);
    expect(body.error.code).toBe('SN_STALE_REVISION');
    expect(body.currentRevision).toBe(2);
    expect(body.error.issues[0].pointer).toBe('/baseRevision');
    expect(body.error.message).toContain('current revision is 2');
    const latest = await t.app.inject({ method: 'GET', url: `/api/models/${id}` });
    expect(latest.json().model).toEqual(cantilever(3));
  });

  it('two clients saving on the same base concurrently: exactly one wins, the other gets 409', async () => {
    const { id } = await create(cantilever(1));
    const [a, b] = await Promise.all(
      ['ann', 'bob'].map((author) =>
        t.app.inject({ method: 'PUT', url: `/api/models/${id}`, ...json({ model: cantilever(2), baseRevision: 1, author, message: author }) }),
      ),
    );
    expect([a.statusCode, b.statusCode].sort()).toEqual([200, 409]);
    const loser = a.statusCode === 409 ? a : b;
    expect(errorOf(loser.body).currentRevision).toBe(2);
    const revs = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions` })).json().revisions;
    expect(revs).toHaveLength(2);
  });

  it('lists models with name, author, updated, revision; searches by name; archive and restore', async () => {
    const m = cantilever(1);
    m.name = 'Zebra gearbox 7';
    const { id } = await create(m, 'dee');
    const list = await t.app.inject({ method: 'GET', url: '/api/models?q=zebra%20GEAR' });
    expect(list.statusCode).toBe(200);
    expect(list.json().models).toHaveLength(1);
    expect(list.json().models[0]).toMatchObject({ id, name: 'Zebra gearbox 7', author: 'dee', revision: 1, archived: false });
    expect(Date.parse(list.json().models[0].updated)).not.toBeNaN();

    // sent as JSON with an empty body, as fetch() with a Content-Type and no body does
    const arch = await t.app.inject({ method: 'POST', url: `/api/models/${id}/archive`, headers: { 'content-type': 'application/json' }, payload: '' });
    expect(arch.statusCode).toBe(200);
    expect(arch.json()).toEqual({ id, archived: true });
    expect((await t.app.inject({ method: 'GET', url: '/api/models?q=zebra' })).json().models).toHaveLength(0);
    expect((await t.app.inject({ method: 'GET', url: '/api/models?q=zebra&archived=false' })).json().models).toHaveLength(0);
    const archived = (await t.app.inject({ method: 'GET', url: '/api/models?q=zebra&archived=true' })).json().models;
    expect(archived.map((x: { id: string; archived: boolean }) => [x.id, x.archived])).toEqual([[id, true]]);
    // an archived model is still readable and saveable: nothing is deleted
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}` })).json().archived).toBe(true);

    const restore = await t.app.inject({ method: 'POST', url: `/api/models/${id}/restore`, headers: { 'content-type': 'application/json' } });
    expect(restore.json()).toEqual({ id, archived: false });
    expect((await t.app.inject({ method: 'GET', url: '/api/models?q=zebra' })).json().models).toHaveLength(1);
  });

  it('answers 404 SN_NOT_FOUND for unknown models and revisions, on every route', async () => {
    const { id } = await create(cantilever(1));
    const cases: Array<[string, string, unknown?]> = [
      ['GET', '/api/models/nosuchmodel'],
      ['GET', '/api/models/nosuchmodel/revisions'],
      ['GET', '/api/models/nosuchmodel/revisions/1'],
      ['GET', `/api/models/${id}/revisions/9`],
      ['POST', '/api/models/nosuchmodel/archive'],
      ['POST', '/api/models/nosuchmodel/restore'],
      ['GET', '/api/models/nosuchmodel/export'],
      ['GET', `/api/models/${id}/export?revision=9`],
      ['PUT', '/api/models/nosuchmodel', { model: cantilever(1), baseRevision: 1, author: 'a', message: '' }],
    ];
    for (const [method, url, body] of cases) {
      const r = await t.app.inject({ method: method as 'GET', url, ...(body ? json(body) : method === 'POST' ? { headers: { 'content-type': 'application/json' } } : {}) });
      expect(r.statusCode, `${method} ${url}`).toBe(404);
      expect(errorOf(r.body).error.code).toBe('SN_NOT_FOUND');
    }
  });

  it('a model that does not validate is 400 with the pointer into the body; a mechanism may be saved', async () => {
    const bad = cantilever(1);
    (bad.torques as Array<Record<string, unknown>>)[0].torque = '100 mm'; // a length where a torque belongs
    const r = await t.app.inject({ method: 'POST', url: '/api/models', ...json({ model: bad, author: 'ann', message: '' }) });
    expect(r.statusCode).toBe(400);
    const e = errorOf(r.body);
    expect(e.error.code).toBe('SN_UNIT_KIND');
    expect(e.error.issues[0].pointer).toBe('/model/torques/0/torque');

    const missing = cantilever(1);
    delete (missing.shafts as Array<Record<string, unknown>>)[0].segments;
    const r2 = await t.app.inject({ method: 'POST', url: '/api/models', ...json({ model: missing, author: 'ann' }) });
    expect(r2.statusCode).toBe(400);
    expect(errorOf(r2.body).error.code).toBe('SN_SCHEMA');
    expect(errorOf(r2.body).error.issues.map((i) => i.pointer)).toContain('/model/shafts/0/segments');

    const noAuthor = await t.app.inject({ method: 'POST', url: '/api/models', ...json({ model: cantilever(1), message: '' }) });
    expect(noAuthor.statusCode).toBe(400);
    expect(errorOf(noAuthor.body).error.issues[0].pointer).toBe('/author');

    const mech = await t.app.inject({ method: 'POST', url: '/api/models', ...json({ model: freeShaft(), author: 'ann', message: 'wip' }) });
    expect(mech.statusCode).toBe(201);
  });

  it('a stale PUT with an invalid model is a 400 first (validation before the revision check)', async () => {
    const { id } = await create(cantilever(1));
    const bad = cantilever(1);
    bad.format = 'shaftnet/9';
    const r = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, ...json({ model: bad, baseRevision: 1, author: 'a' }) });
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.code).toBe('SN_FORMAT');
    expect(errorOf(r.body).error.issues[0].pointer).toBe('/model/format');
  });

  it('bad path and query parameters are 400 naming the parameter', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/models/abc/revisions/zero' });
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.issues[0]).toMatchObject({ code: 'SN_SCHEMA', pointer: '/rev' });
    const q = await t.app.inject({ method: 'GET', url: '/api/models?archived=perhaps' });
    expect(q.statusCode).toBe(400);
    expect(errorOf(q.body).error.issues[0].pointer).toBe('/archived');
    const extra = await t.app.inject({ method: 'GET', url: '/api/models?sort=name' });
    expect(extra.statusCode).toBe(400);
    expect(errorOf(extra.body).error.issues[0].pointer).toBe('/sort');
  });

  it('exports a revision as an attachment and imports a file as a new model', async () => {
    const model = demo('stepped-two-material');
    const { id } = await create(model);
    await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, ...json({ model: { ...model, notes: 'edited' }, baseRevision: 1, author: 'b' }) });
    const ex = await t.app.inject({ method: 'GET', url: `/api/models/${id}/export?revision=1` });
    expect(ex.statusCode).toBe(200);
    expect(ex.headers['content-type']).toMatch(/^application\/json/);
    expect(ex.headers['content-disposition']).toBe(
      'attachment; filename="demo-invented-stepped-two-material-shaft-fixed-at-both-ends-r1.shaftnet.json"',
    );
    expect(JSON.parse(ex.body)).toEqual(model);
    const latest = await t.app.inject({ method: 'GET', url: `/api/models/${id}/export` });
    expect(JSON.parse(latest.body).notes).toBe('edited');

    const imp = await t.app.inject({
      method: 'POST',
      url: '/api/models/import?author=eve&message=from%20disk',
      payload: ex.body,
      headers: { 'content-type': 'application/json' },
    });
    expect(imp.statusCode).toBe(201);
    const { id: newId, revision } = imp.json();
    expect(revision).toBe(1);
    expect(newId).not.toBe(id);
    const got = (await t.app.inject({ method: 'GET', url: `/api/models/${newId}` })).json();
    expect(got).toMatchObject({ author: 'eve', message: 'from disk' });
    expect(got.model).toEqual(model);

    const badImport = await t.app.inject({ method: 'POST', url: '/api/models/import?author=eve', payload: '{"format":"shaftnet/1"', headers: { 'content-type': 'application/json' } });
    expect(badImport.statusCode).toBe(400);
    expect(errorOf(badImport.body).error.code).toBe('SN_JSON');
    const noAuthor = await t.app.inject({ method: 'POST', url: '/api/models/import', payload: ex.body, headers: { 'content-type': 'application/json' } });
    expect(noAuthor.statusCode).toBe(400);
    expect(errorOf(noAuthor.body).error.issues[0].pointer).toBe('/author');
  });

  it('refuses a model over the shaft limit with 413 on save', async () => {
    const small = await makeApp({ limits: { maxStations: 1000, maxShafts: 2 } });
    try {
      const m = demo('mixer-drive'); // 3 shafts
      const r = await small.app.inject({ method: 'POST', url: '/api/models', ...json({ model: m, author: 'a' }) });
      expect(r.statusCode).toBe(413);
      expect(errorOf(r.body).error).toMatchObject({ code: 'SN_TOO_LARGE' });
      expect(errorOf(r.body).error.issues[0].pointer).toBe('/model/shafts');
    } finally {
      await small.close();
    }
  });
});

describe('demos', () => {
  it('lists the invented demos and serves each', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/demos' });
    expect(r.statusCode).toBe(200);
    const demos = r.json().demos as Array<{ id: string; name: string; notes: string }>;
    expect(demos.map((d) => d.id)).toEqual(expect.arrayContaining(['gear-train-branches', 'mixer-drive', 'stepped-two-material']));
    for (const d of demos) {
      expect(d.name.startsWith('Demo (invented): ')).toBe(true);
      expect(d.notes.length).toBeGreaterThan(20);
      const one = await t.app.inject({ method: 'GET', url: `/api/demos/${d.id}` });
      expect(one.statusCode).toBe(200);
      expect(one.json().name).toBe(d.name);
    }
    const none = await t.app.inject({ method: 'GET', url: '/api/demos/nope' });
    expect(none.statusCode).toBe(404);
    expect(errorOf(none.body).error.code).toBe('SN_NOT_FOUND');
  });

  it('seeds the demos into an empty library once, on first start', async () => {
    const seeded = await makeApp({ seedDemos: true });
    try {
      const list = (await seeded.app.inject({ method: 'GET', url: '/api/models' })).json().models as Array<{ name: string; author: string }>;
      const demos = (await seeded.app.inject({ method: 'GET', url: '/api/demos' })).json().demos as Array<{ name: string }>;
      expect(list.map((m) => m.name).sort()).toEqual(demos.map((d) => d.name).sort());
      expect(list.every((m) => m.author === 'Shaftnet')).toBe(true);
      // a second start on the same library adds nothing
      const { buildApp } = await import('../../server/http/app.js');
      const again = await buildApp({ store: seeded.store, rateLimitPerMinute: 0 });
      expect(seeded.store.count()).toBe(demos.length);
      await again.close();
    } finally {
      await seeded.close();
    }
  });
});
