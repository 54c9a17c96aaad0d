/**
 * The library's wire types (shared-types/library.ts) against the real routes,
 * driven through the client's own `api.ts`: a fetch that hands every request to
 * the app (no socket), so each answer is checked against its schema and every
 * unsafe request is seen as the server sees it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TSchema } from 'typebox';
import { Value } from 'typebox/value';
import {
  ArchiveState,
  DemoList,
  ModelList,
  RevisionList,
  Saved,
  SessionInfo,
  StoredModel,
} from '../../shared-types/library.js';
import type { Model } from '../../shared-types/model.js';
import { api, requestInit } from '../../client/src/api.js';
import { cantilever, makeApp, type TestApp } from '../http/helpers.js';

interface Seen {
  method: string;
  url: string;
  contentType: string | undefined;
  body: string | undefined;
}

let t: TestApp;
const seen: Seen[] = [];
const realFetch = globalThis.fetch;

beforeAll(async () => {
  t = await makeApp({ seedDemos: true });
  globalThis.fetch = (async (input: string | URL | Request, init: RequestInit = {}) => {
    const headers = (init.headers ?? {}) as Record<string, string>;
    const body = typeof init.body === 'string' ? init.body : undefined;
    const method = (init.method ?? 'GET') as 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
    seen.push({ method, url: String(input), contentType: headers['content-type'], body });
    const r = await t.app.inject({ method, url: String(input), headers, payload: body });
    return new Response(r.body === '' ? null : r.body, { status: r.statusCode, headers: { 'content-type': String(r.headers['content-type'] ?? '') } });
  }) as typeof fetch;
});
afterAll(async () => {
  globalThis.fetch = realFetch;
  await t.close();
});

function expectShape(schema: TSchema, value: unknown): void {
  const errors = [...Value.Errors(schema, value)];
  expect(errors, JSON.stringify(errors.slice(0, 3))).toEqual([]);
}

describe('the library wire types', () => {
  it('describe every answer of the library, read through api.ts', async () => {
    const model = cantilever(2) as unknown as Model;
    const created = await api.create(model, 'ana', 'first');
    expectShape(Saved, created);
    const updated = await api.update(created.id, { ...model, name: 'Cantilever, second' }, created.revision, 'ben', 'second');
    expectShape(Saved, updated);
    expect(updated.revision).toBe(2);
    expectShape(StoredModel, await api.getModel(created.id));
    expectShape(StoredModel, await api.getRevision(created.id, 1));
    const revisions = await api.revisions(created.id);
    expectShape(RevisionList, revisions);
    expect(revisions.revisions.map((r) => r.author)).toEqual(['ben', 'ana']);
    const list = await api.listModels('second');
    expectShape(ModelList, list);
    expect(list.models.map((m) => m.id)).toContain(created.id);
    expectShape(ArchiveState, await api.archive(created.id));
    expectShape(ArchiveState, await api.restore(created.id));
    const demos = await api.demos();
    expectShape(DemoList, demos);
    expect(demos.demos.length).toBeGreaterThan(0);
    expectShape(SessionInfo, await api.session());
    expectShape(SessionInfo, await api.signOut());
    expectShape(Saved, await api.importModel(model, 'cy', 'from a file'));
  });

  it('api.ts sends every unsafe request as JSON, with {} where it has no body', async () => {
    seen.length = 0;
    const { id } = await api.create(cantilever(1) as unknown as Model, 'ana', '');
    await api.archive(id);
    await api.restore(id);
    await api.signOut();
    await api.getModel(id);
    const unsafe = seen.filter((s) => s.method !== 'GET');
    expect(unsafe.map((s) => s.method)).toEqual(['POST', 'POST', 'POST', 'DELETE']);
    for (const s of unsafe) {
      expect(s.contentType, `${s.method} ${s.url}`).toBe('application/json');
      expect(() => JSON.parse(s.body as string), `${s.method} ${s.url}`).not.toThrow();
    }
    expect(unsafe[1].body).toBe('{}');
    const get = seen.find((s) => s.method === 'GET');
    expect(get?.body).toBeUndefined();
  });

  it('requestInit: JSON for every unsafe method, nothing for GET', () => {
    for (const method of ['POST', 'PUT', 'PATCH', 'DELETE'] as const) {
      const init = requestInit(method);
      expect((init.headers as Record<string, string>)['content-type']).toBe('application/json');
      expect(init.body).toBe('{}');
      expect(requestInit(method, { a: 1 }).body).toBe('{"a":1}');
    }
    expect(requestInit('GET').body).toBeUndefined();
  });
});
