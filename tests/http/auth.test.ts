import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cantilever, errorOf, makeApp, type TestApp } from './helpers.js';

const TOKEN = 'team-token-0123456789';
let t: TestApp;
beforeAll(async () => {
  t = await makeApp({ token: TOKEN });
});
afterAll(async () => {
  await t.close();
});

const bearer = { authorization: `Bearer ${TOKEN}` };
const json = { 'content-type': 'application/json' };

describe('token mode', () => {
  it('refuses every protected API route without the token: 401 SN_UNAUTHORISED', async () => {
    const routes: Array<[string, string]> = [
      ['POST', '/api/solve'],
      ['GET', '/api/models'],
      ['POST', '/api/models'],
      ['GET', '/api/models/abc'],
      ['PUT', '/api/models/abc'],
      ['GET', '/api/models/abc/revisions'],
      ['GET', '/api/models/abc/revisions/1'],
      ['POST', '/api/models/abc/archive'],
      ['POST', '/api/models/abc/restore'],
      ['GET', '/api/models/abc/export'],
      ['POST', '/api/models/import'],
      ['GET', '/api/demos'],
      ['GET', '/api/demos/mixer-drive'],
      ['GET', '/api/openapi.json'],
      ['GET', '/api/docs'],
      ['GET', '/api/unknown'],
    ];
    for (const [method, url] of routes) {
      const r = await t.app.inject({ method: method as 'GET', url, payload: method === 'GET' ? undefined : '{}', headers: method === 'GET' ? {} : json });
      expect(r.statusCode, `${method} ${url}`).toBe(401);
      expect(errorOf(r.body).error.code).toBe('SN_UNAUTHORISED');
    }
    const wrong = await t.app.inject({ method: 'GET', url: '/api/models', headers: { authorization: 'Bearer not-the-token' } });
    expect(wrong.statusCode).toBe(401);
  });

  it('leaves health, the session routes and the client page open', async () => {
    expect((await t.app.inject({ method: 'GET', url: '/api/health' })).statusCode).toBe(200);
    const s = await t.app.inject({ method: 'GET', url: '/api/session' });
    expect(s.json()).toEqual({ tokenRequired: true, signedIn: false, identity: null });
    expect((await t.app.inject({ method: 'GET', url: '/' })).statusCode).toBe(200);
  });

  it('accepts the bearer token', async () => {
    const r = await t.app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(cantilever(1)), headers: { ...bearer, ...json } });
    expect(r.statusCode).toBe(200);
    const m = await t.app.inject({ method: 'GET', url: '/api/models', headers: bearer });
    expect(m.statusCode).toBe(200);
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: bearer })).json()).toEqual({ tokenRequired: true, signedIn: true, identity: null });
  });

  it('signs in with POST /api/session: an HttpOnly SameSite=Strict cookie that works instead of the header', async () => {
    const bad = await t.app.inject({ method: 'POST', url: '/api/session', payload: JSON.stringify({ token: 'guess-guess' }), headers: json });
    expect(bad.statusCode).toBe(401);
    expect(errorOf(bad.body).error.issues[0].pointer).toBe('/token');
    expect(bad.headers['set-cookie']).toBeUndefined();

    const ok = await t.app.inject({ method: 'POST', url: '/api/session', payload: JSON.stringify({ token: TOKEN }), headers: json });
    expect(ok.statusCode).toBe(200);
    expect(ok.json()).toEqual({ tokenRequired: true, signedIn: true, identity: null });
    const setCookie = String(ok.headers['set-cookie']);
    expect(setCookie).toMatch(/^shaftnet_session=/);
    expect(setCookie).toMatch(/HttpOnly/);
    expect(setCookie).toMatch(/SameSite=Strict/);
    expect(setCookie).not.toContain(TOKEN); // the cookie holds a random session id, not the token
    expect(setCookie).toMatch(/Max-Age=604800/); // 7 days, the session's absolute lifetime
    expect(setCookie).not.toMatch(/Secure/); // plain HTTP, no trusted proxy
    const value = /^shaftnet_session=([^;]+)/.exec(setCookie)![1];

    const cookie = { cookie: `shaftnet_session=${value}` };
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode).toBe(200);
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: cookie })).json().signedIn).toBe(true);
    const forged = await t.app.inject({ method: 'GET', url: '/api/models', headers: { cookie: `shaftnet_session=${value.slice(0, -2)}xx` } });
    expect(forged.statusCode).toBe(401);

    const out = await t.app.inject({ method: 'DELETE', url: '/api/session', headers: { ...cookie, ...json } });
    expect(out.statusCode).toBe(200);
    expect(String(out.headers['set-cookie'])).toMatch(/shaftnet_session=;.*Expires=Thu, 01 Jan 1970/);
    // Signed out on the server: a copy of the cookie kept elsewhere no longer works.
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode).toBe(401);
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: cookie })).json().signedIn).toBe(false);
  });

  it('an open server needs no token and says so', async () => {
    const open = await makeApp();
    try {
      expect((await open.app.inject({ method: 'GET', url: '/api/session' })).json()).toEqual({ tokenRequired: false, signedIn: true, identity: null });
      expect((await open.app.inject({ method: 'GET', url: '/api/models' })).statusCode).toBe(200);
    } finally {
      await open.close();
    }
  });
});
