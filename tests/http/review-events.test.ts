/**
 * The live notice over a real socket: a raw HTTP client reads
 * `GET /api/models/{id}/events` as it streams. Event names and fields are this
 * server's contract (server/http/API.md "Live notice").
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MemoryBroadcaster } from '../../server/http/broadcaster.js';
import { cantilever, makeApp, type TestApp } from './helpers.js';
import { addKey, json } from './review-helpers.js';

const TEAM = 'team-token-0123456789';
type Key = Awaited<ReturnType<typeof addKey>>;

let t: TestApp;
let port: number;
const notices = new MemoryBroadcaster();
let ann: Key;
let bob: Key;

beforeAll(async () => {
  t = await makeApp({ token: TEAM, signInPerMinute: 1000, notices, eventsKeepAliveMs: 200 });
  await t.app.listen({ port: 0, host: '127.0.0.1' });
  port = (t.app.server.address() as AddressInfo).port;
  ann = await addKey(t.store, 'Ann', 'editor');
  bob = await addKey(t.store, 'Bob', 'checker');
});
afterAll(async () => {
  await t.close();
});

/** An open event stream: its status and headers, the text so far, and whether it ended. */
interface Stream {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: () => string;
  ended: () => boolean;
  close(): void;
}

function open(id: string, headers: Record<string, string>): Promise<Stream> {
  return new Promise((resolve, reject) => {
    let text = '';
    let ended = false;
    const req = http.get({ host: '127.0.0.1', port, path: `/api/models/${id}/events`, headers: { accept: 'text/event-stream', ...headers } }, (res) => {
      res.setEncoding('utf8');
      res.on('data', (d: string) => (text += d));
      res.on('end', () => (ended = true));
      res.on('close', () => (ended = true));
      resolve({ status: res.statusCode ?? 0, headers: res.headers, text: () => text, ended: () => ended, close: () => req.destroy() });
    });
    req.on('error', reject);
  });
}

/** The events of a stream's text, parsed (comments left out). */
function events(text: string): Array<{ event: string; data: Record<string, unknown> }> {
  return text
    .split('\n\n')
    .filter((block) => block.startsWith('event: '))
    .map((block) => {
      const [eventLine, dataLine] = block.split('\n');
      return { event: eventLine.slice(7), data: JSON.parse(dataLine.slice(6)) as Record<string, unknown> };
    });
}

async function create(auth: Record<string, string>): Promise<string> {
  const r = await t.app.inject({ method: 'POST', url: '/api/models', headers: { ...json, ...auth }, payload: JSON.stringify({ model: cantilever(1) }) });
  return r.json().id as string;
}

describe('GET /api/models/{id}/events', () => {
  it('401 without a key, 404 for an unknown model, both in the project\'s error shape', async () => {
    const id = await create(ann.auth);
    const anon = await open(id, {});
    expect(anon.status).toBe(401);
    await expect.poll(() => anon.ended()).toBe(true);
    expect(JSON.parse(anon.text()).error.code).toBe('SN_UNAUTHORISED');
    const unknown = await open('nosuchmodel', ann.auth);
    expect(unknown.status).toBe(404);
    await expect.poll(() => unknown.ended()).toBe(true);
    expect(JSON.parse(unknown.text()).error.code).toBe('SN_NOT_FOUND');
  });

  it('streams every save and review change of that model (not of others), with keep-alive comments', async () => {
    const id = await create(ann.auth);
    const other = await create(ann.auth);
    const s = await open(id, bob.auth);
    expect(s.status).toBe(200);
    expect(s.headers['content-type']).toBe('text/event-stream; charset=utf-8');
    expect(s.headers['cache-control']).toContain('no-cache');
    expect(s.headers['x-content-type-options']).toBe('nosniff'); // the app's security headers come along
    await expect.poll(() => notices.listeners(id)).toBe(1);

    const put = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, headers: { ...json, ...ann.auth }, payload: JSON.stringify({ model: cantilever(2), baseRevision: 1 }) });
    expect(put.statusCode).toBe(200);
    await t.app.inject({ method: 'PUT', url: `/api/models/${other}`, headers: { ...json, ...ann.auth }, payload: JSON.stringify({ model: cantilever(2), baseRevision: 1 }) });
    const rv = await t.app.inject({ method: 'POST', url: `/api/models/${id}/revisions/2/review`, headers: { ...json, ...bob.auth }, payload: JSON.stringify({ state: 'returned', note: 'bore missing' }) });
    expect(rv.statusCode).toBe(200);

    await expect.poll(() => events(s.text()).length).toBe(2);
    const [saved, reviewed] = events(s.text());
    expect(saved.event).toBe('revision');
    expect(Object.keys(saved.data).sort()).toEqual(['at', 'author', 'id', 'revision']);
    const stored = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/2`, headers: ann.auth })).json();
    expect(saved.data).toEqual({ id, revision: 2, author: 'Ann', at: stored.created });
    expect(reviewed.event).toBe('review');
    const last = rv.json().history.at(-1);
    expect(reviewed.data).toEqual({ id, revision: 2, state: 'returned', by: 'Bob', at: last.at, note: 'bore missing' });
    await expect.poll(() => s.text().includes(': keep-alive\n\n')).toBe(true);

    s.close();
    await expect.poll(() => notices.listeners(id)).toBe(0); // closing the connection unsubscribes
  });

  it('a browser\'s session cookie works; a revoked key or a signed-out session ends the stream at the next line', async () => {
    const id = await create(ann.auth);
    const fay = await addKey(t.store, 'Fay', 'checker');
    const byKey = await open(id, fay.auth);
    const signIn = await t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: TEAM }) });
    const cookie = String(signIn.headers['set-cookie']).split(';')[0];
    const bySession = await open(id, { cookie });
    expect([byKey.status, bySession.status]).toEqual([200, 200]);
    await expect.poll(() => notices.listeners(id)).toBe(2);

    t.store.revokeKey(fay.id, new Date().toISOString());
    await t.app.inject({ method: 'DELETE', url: '/api/session', headers: { cookie, 'content-type': 'application/json' } });
    await expect.poll(() => byKey.ended() && bySession.ended(), { timeout: 5000 }).toBe(true);
    const put = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, headers: { ...json, ...ann.auth }, payload: JSON.stringify({ model: cantilever(2), baseRevision: 1 }) });
    expect(put.statusCode).toBe(200);
    expect(events(byKey.text())).toEqual([]);
    expect(events(bySession.text())).toEqual([]);
    expect(notices.listeners(id)).toBe(0);
  });

  it('an open stream does not keep its session alive: the session idles out and the stream ends', async () => {
    let clock = Date.parse('2026-12-02T08:00:00.000Z');
    const idle = await makeApp({ token: TEAM, signInPerMinute: 1000, now: () => clock, sessionLimits: { idleMs: 1000 }, eventsKeepAliveMs: 100 });
    try {
      await idle.app.listen({ port: 0, host: '127.0.0.1' });
      const idlePort = (idle.app.server.address() as AddressInfo).port;
      const made = await idle.app.inject({ method: 'POST', url: '/api/models', headers: { ...json, authorization: `Bearer ${TEAM}` }, payload: JSON.stringify({ model: cantilever(1), author: 'a' }) });
      const signIn = await idle.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: TEAM }) });
      const cookie = String(signIn.headers['set-cookie']).split(';')[0];
      let text = '';
      let ended = false;
      await new Promise<void>((resolve) => {
        http.get({ host: '127.0.0.1', port: idlePort, path: `/api/models/${made.json().id}/events`, headers: { cookie } }, (res) => {
          res.setEncoding('utf8');
          res.on('data', (d: string) => (text += d));
          res.on('close', () => (ended = true));
          resolve();
        });
      });
      clock += 600; // ms after the stream opened (its one use of the session)
      const seen = (text.match(/: keep-alive/g) ?? []).length;
      await expect.poll(() => (text.match(/: keep-alive/g) ?? []).length).toBeGreaterThan(seen + 2);
      expect(ended).toBe(false);
      clock += 600; // 1200 ms since the last use: idle, had the keep-alives not been uses
      await expect.poll(() => ended, { timeout: 5000 }).toBe(true);
    } finally {
      await idle.close();
    }
  });
});
