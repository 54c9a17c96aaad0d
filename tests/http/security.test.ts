/**
 * The way in: the token decided by the matched route (a walk over every
 * registered route, encoded and absolute-form request targets over a real
 * socket), the Host check, the cross-site rule, sessions and the sign-in limit,
 * and the router's own errors in the project's error shape.
 *
 * Expected statuses and codes are this server's contract (server/http/API.md,
 * README's error table); the limits (10 sign-ins a minute, 12 h idle, 7 days
 * absolute) are common practice, no source.
 */
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { FastifyInstance } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ERROR_CODES } from '../../shared-types/errors.js';
import { hostName, hostPolicy } from '../../server/http/guard.js';
import { MemorySessionStore } from '../../server/http/sessions.js';
import { cantilever, errorOf, makeApp, type TestApp } from './helpers.js';

const TOKEN = 'team-token-0123456789';
const bearer = { authorization: `Bearer ${TOKEN}` };
const json = { 'content-type': 'application/json' };

/** A built client of two files, so the client's static routes exist whether or not `npm run build` ran. */
function fakeClient(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-client-'));
  fs.writeFileSync(path.join(dir, 'index.html'), '<!doctype html><html><body>client</body></html>');
  fs.mkdirSync(path.join(dir, 'assets'));
  fs.writeFileSync(path.join(dir, 'assets', 'app-1234.js'), 'export {};');
  return dir;
}

/** Asserts the project's error body: a registered SN_ code whose status is the one answered. */
function expectErrorShape(status: number, text: string, what: string): ReturnType<typeof errorOf> {
  const e = errorOf(text);
  expect(Object.keys(e), what).toContain('error');
  expect(e.error.code, what).toMatch(/^SN_/);
  expect(ERROR_CODES[e.error.code as keyof typeof ERROR_CODES]?.status, what).toBe(status);
  expect(typeof e.error.message, what).toBe('string');
  expect(Array.isArray(e.error.issues), what).toBe(true);
  return e;
}

/** One raw HTTP/1.1 exchange over a socket (Connection: close): status, headers and body. */
async function raw(port: number, head: string, body = ''): Promise<{ status: number; headers: string; body: string }> {
  const text = await new Promise<string>((resolve, reject) => {
    const socket = net.connect(port, '127.0.0.1');
    let out = '';
    socket.setEncoding('utf8');
    socket.on('data', (d) => (out += d));
    socket.on('end', () => resolve(out));
    socket.on('close', () => resolve(out));
    socket.on('error', reject);
    socket.write(head + body);
  });
  const split = text.indexOf('\r\n\r\n');
  const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0);
  return { status, headers: text.slice(0, split), body: text.slice(split + 4) };
}

function requestHead(method: string, target: string, port: number, extra: Record<string, string> = {}, bodyLength = 0): string {
  const lines = [`${method} ${target} HTTP/1.1`, `Host: 127.0.0.1:${port}`, 'Connection: close'];
  for (const [k, v] of Object.entries(extra)) lines.push(`${k}: ${v}`);
  if (bodyLength > 0 || method !== 'GET') lines.push(`Content-Length: ${bodyLength}`);
  return lines.join('\r\n') + '\r\n\r\n';
}

describe('deny by default: the route walk', () => {
  let t: TestApp;
  let clientDir: string;
  beforeAll(async () => {
    clientDir = fakeClient();
    t = await makeApp({ token: TOKEN, clientDir });
  });
  afterAll(async () => {
    await t.close();
    fs.rmSync(clientDir, { recursive: true, force: true });
  });

  // The short public list: the client's files, health, sign-in. Nothing else.
  const PUBLIC = ['GET /*', 'HEAD /*', 'GET /api/health', 'HEAD /api/health', 'GET /api/session', 'HEAD /api/session', 'POST /api/session', 'DELETE /api/session'];

  function concrete(url: string): string {
    return url.replace(/:id/g, 'abcdefghijklmnop').replace(/:rev/g, '1').replace(/\*/g, 'x');
  }

  it('answers 401 SN_UNAUTHORISED without the token on every registered route but the public list', async () => {
    const routes = t.app.shaftnetRoutes();
    const seen = new Set(routes.map((r) => `${r.method} ${r.url}`));
    expect(routes.filter((r) => r.public).map((r) => `${r.method} ${r.url}`).sort()).toEqual([...PUBLIC].sort());
    for (const p of PUBLIC) expect(seen.has(p), p).toBe(true);
    // The review routes are in the walk (issue 13).
    for (const p of ['POST /api/models/:id/revisions/:rev/review', 'GET /api/models/:id/events']) expect(seen.has(p), p).toBe(true);
    let protectedCount = 0;
    for (const r of routes) {
      const key = `${r.method} ${r.url}`;
      const url = concrete(r.url);
      const unsafe = !['GET', 'HEAD'].includes(r.method);
      const send = (headers: Record<string, string>) =>
        t.app.inject({ method: r.method as 'GET', url, headers: unsafe ? { ...json, ...headers } : headers, payload: unsafe ? '{}' : undefined });
      const anon = await send({});
      if (PUBLIC.includes(key)) {
        expect(anon.statusCode, key).not.toBe(401);
        continue;
      }
      protectedCount++;
      expect(anon.statusCode, key).toBe(401);
      if (r.method !== 'HEAD') expect(errorOf(anon.body).error.code, key).toBe('SN_UNAUTHORISED');
      // With the token the same request passes the check (whatever the route then says of '{}').
      const signed = await send(bearer);
      expect(signed.statusCode, key).not.toBe(401);
    }
    // Printed for the record of the route walk.
    console.log(`route walk: ${routes.length} routes, ${PUBLIC.length} public, ${protectedCount} answered 401 without the token`);
    expect(protectedCount).toBeGreaterThanOrEqual(25);
  });

  it('a path no route matches answers 401 too (nothing told about the routes), except the client page', async () => {
    for (const [method, url] of [
      ['GET', '/api/unknown'],
      ['GET', '/api/models/abcdefghijklmnop/nothing'],
      ['DELETE', '/api/models'],
      ['OPTIONS', '/api/models'],
      ['GET', '/api'],
    ] as const) {
      const r = await t.app.inject({ method, url, headers: method === 'DELETE' ? json : {} });
      expect(r.statusCode, `${method} ${url}`).toBe(401);
      expect(errorOf(r.body).error.code).toBe('SN_UNAUTHORISED');
    }
    const page = await t.app.inject({ method: 'GET', url: '/m/abcdefghijklmnop' });
    expect(page.statusCode).toBe(200);
    expect(page.body).toContain('client');
    const asset = await t.app.inject({ method: 'GET', url: '/assets/app-1234.js' });
    expect(asset.statusCode).toBe(200);
  });

  describe('over a real socket', () => {
    let port = 0;
    let app: FastifyInstance;
    let live: TestApp;
    beforeAll(async () => {
      live = await makeApp({ token: TOKEN, clientDir: null });
      app = live.app;
      await app.listen({ host: '127.0.0.1', port: 0 });
      port = (app.server.address() as net.AddressInfo).port;
      // One model to reach for.
      const made = await app.inject({ method: 'POST', url: '/api/models', headers: { ...bearer, ...json }, payload: JSON.stringify({ model: cantilever(1), author: 'a' }) });
      expect(made.statusCode).toBe(201);
    });
    afterAll(async () => {
      await live.close();
    });

    it('percent-encoded spellings of /api reach the same routes and need the token', async () => {
      for (const target of ['/%61pi/models', '/a%70i/models', '/%61%70%69/models', '/%61pi/openapi.json', '/%61pi/docs', '/api/%6dodels', '/api/models/../models', '/api/./models']) {
        const r = await raw(port, requestHead('GET', target, port));
        expect(r.status, target).toBe(401);
        expectErrorShape(401, r.body, target);
      }
      const post = await raw(port, requestHead('POST', '/a%70i/models/abcdefghijklmnop/archive', port, json));
      expect(post.status).toBe(401);
      const signed = await raw(port, requestHead('GET', '/%61pi/models', port, bearer));
      expect(signed.status).toBe(200);
    });

    it('an absolute-form request target needs the token too', async () => {
      for (const target of ['http://x/api/models', `http://127.0.0.1:${port}/api/models`, 'http://x/%61pi/models', 'http://x/api/openapi.json']) {
        const r = await raw(port, requestHead('GET', target, port));
        expect(r.status, target).toBe(401);
        expectErrorShape(401, r.body, target);
      }
      const archive = await raw(port, requestHead('POST', 'http://x/api/models/abcdefghijklmnop/archive', port, json));
      expect(archive.status).toBe(401);
    });

    it('a request Node cannot parse, a bad escape and a dot-dot id answer in the project\'s shape', async () => {
      const broken = await raw(port, `GET / HTTP/1.1\r\nHost: 127.0.0.1\r\nthis is not a header\r\n\r\n`);
      expect(broken.status).toBe(400);
      expect(expectErrorShape(400, broken.body, 'broken').error.code).toBe('SN_BAD_REQUEST');
      const bad = await raw(port, requestHead('GET', '/api/models/%ED%A0%BD', port, bearer));
      expect(bad.status).toBe(400);
      expect(expectErrorShape(400, bad.body, 'bad escape').error.code).toBe('SN_BAD_REQUEST');
      // ".." as a path part is a path parameter like any other: named by its pointer.
      const dots = await raw(port, requestHead('GET', '/api/models/..', port, bearer));
      expect(dots.status).toBe(400);
      const e = expectErrorShape(400, dots.body, 'dots');
      expect(e.error.code).toBe('SN_SCHEMA');
      expect(e.error.issues[0].pointer).toBe('/id');
      const demo = await raw(port, requestHead('GET', '/api/demos/..', port, bearer));
      expect(demo.status).toBe(404);
      expect(expectErrorShape(404, demo.body, 'demo dots').error.issues[0].pointer).toBe('/id');
    });
  });
});

describe('router and framework errors in the project\'s shape', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeApp({ clientDir: null });
  });
  afterAll(async () => {
    await t.close();
  });

  it('an over-long id is a 400 naming the path parameter; a part over 1000 characters is 414 SN_PATH_TOO_LONG', async () => {
    const r = await t.app.inject({ method: 'GET', url: `/api/models/${'a'.repeat(101)}` });
    expect(r.statusCode).toBe(400);
    const e = expectErrorShape(400, r.body, '101');
    expect(e.error.code).toBe('SN_SCHEMA');
    expect(e.error.issues[0].pointer).toBe('/id');
    const long = await t.app.inject({ method: 'GET', url: `/api/models/${'a'.repeat(1001)}` });
    expect(long.statusCode).toBe(414);
    expect(expectErrorShape(414, long.body, '1001').error.code).toBe('SN_PATH_TOO_LONG');
  });

  it('a percent-escape that is not UTF-8 is 400 SN_BAD_REQUEST', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/models/%ED%A0%BD' });
    expect(r.statusCode).toBe(400);
    expect(expectErrorShape(400, r.body, 'bad url').error.code).toBe('SN_BAD_REQUEST');
  });

  it('a path with another method is 405 SN_METHOD with Allow; an unknown path is 404 SN_NOT_FOUND', async () => {
    const del = await t.app.inject({ method: 'DELETE', url: '/api/models', headers: json });
    expect(del.statusCode).toBe(405);
    expect(expectErrorShape(405, del.body, 'delete').error.code).toBe('SN_METHOD');
    expect(del.headers.allow).toBe('GET, HEAD, POST');
    const patch = await t.app.inject({ method: 'PATCH', url: '/api/health', headers: json });
    expect(patch.statusCode).toBe(405);
    expect(patch.headers.allow).toBe('GET, HEAD');
    const options = await t.app.inject({ method: 'OPTIONS', url: '/api/models/abcdefghijklmnop/archive' });
    expect(options.statusCode).toBe(405);
    expect(options.headers.allow).toBe('POST');
    const none = await t.app.inject({ method: 'GET', url: '/api/nothing' });
    expect(none.statusCode).toBe(404);
    expect(expectErrorShape(404, none.body, 'none').error.code).toBe('SN_NOT_FOUND');
  });

  it('a body that is not JSON, and a "__proto__" key named by its position', async () => {
    const xml = await t.app.inject({ method: 'POST', url: '/api/solve', headers: { 'content-type': 'application/xml' }, payload: '<a/>' });
    expect(xml.statusCode).toBe(400);
    expect(expectErrorShape(400, xml.body, 'xml').error.code).toBe('SN_JSON');
    const proto = await t.app.inject({ method: 'POST', url: '/api/solve', headers: json, payload: '{"format":"shaftnet/1","shafts":[{"id":"s"},{"id":"t","__proto__":{"x":1}}]}' });
    expect(proto.statusCode).toBe(400);
    const e = expectErrorShape(400, proto.body, 'proto');
    expect(e.error.code).toBe('SN_JSON');
    expect(e.error.issues[0].pointer).toBe('/shafts/1/__proto__');
    const wrapped = await t.app.inject({ method: 'POST', url: '/api/models', headers: json, payload: '{"author":"a","model":{"__proto__":{}}}' });
    expect(errorOf(wrapped.body).error.issues[0].pointer).toBe('/model/__proto__');
  });
});

describe('cross-site requests', () => {
  let t: TestApp;
  let id = '';
  beforeAll(async () => {
    t = await makeApp({ clientDir: null });
  });
  afterAll(async () => {
    await t.close();
  });
  const archived = async () => (await t.app.inject({ method: 'GET', url: `/api/models/${id}` })).json().archived as boolean;

  it('a bodyless archive without a JSON content type is refused (open mode): 403 SN_CROSS_SITE, nothing archived', async () => {
    const made = await t.app.inject({ method: 'POST', url: '/api/models', headers: json, payload: JSON.stringify({ model: cantilever(1), author: 'a' }) });
    id = made.json().id;
    const cases: Array<Record<string, string>> = [
      {}, // a fetch in no-cors mode without a body
      { 'content-type': 'application/x-www-form-urlencoded' }, // an empty form
      { 'content-type': 'text/plain;charset=UTF-8' },
      { 'content-type': 'multipart/form-data; boundary=x' },
    ];
    for (const headers of cases) {
      const r = await t.app.inject({ method: 'POST', url: `/api/models/${id}/archive`, headers });
      expect(r.statusCode, JSON.stringify(headers)).toBe(403);
      expect(expectErrorShape(403, r.body, 'cross').error.code).toBe('SN_CROSS_SITE');
    }
    expect(await archived()).toBe(false);
    // A form's type with a body is refused as not JSON, as before.
    const form = await t.app.inject({ method: 'POST', url: `/api/models/${id}/archive`, headers: { 'content-type': 'application/x-www-form-urlencoded' }, payload: 'a=1' });
    expect(form.statusCode).toBe(400);
    expect(errorOf(form.body).error.code).toBe('SN_JSON');
    expect(await archived()).toBe(false);
  });

  it('a foreign Origin or Sec-Fetch-Site is refused even with JSON; this origin is served', async () => {
    const foreign: Array<Record<string, string>> = [
      { origin: 'http://evil.example' },
      { origin: 'http://localhost:81' }, // another port of this host: same site, not same origin
      { origin: 'null' },
      { 'sec-fetch-site': 'cross-site' },
      { 'sec-fetch-site': 'same-site' },
    ];
    for (const h of foreign) {
      const r = await t.app.inject({ method: 'POST', url: `/api/models/${id}/archive`, headers: { ...json, ...h }, payload: '' });
      expect(r.statusCode, JSON.stringify(h)).toBe(403);
      expect(errorOf(r.body).error.code).toBe('SN_CROSS_SITE');
    }
    expect(await archived()).toBe(false);
    // inject() sends Host localhost:80: this origin is http://localhost.
    const own = await t.app.inject({ method: 'POST', url: `/api/models/${id}/archive`, headers: { ...json, origin: 'http://localhost', 'sec-fetch-site': 'same-origin' }, payload: '' });
    expect(own.statusCode).toBe(200);
    expect(await archived()).toBe(true);
    // The browser's own page without a content type: Sec-Fetch-Site: same-origin is a header no other page can send.
    const restore = await t.app.inject({ method: 'POST', url: `/api/models/${id}/restore`, headers: { 'sec-fetch-site': 'same-origin', origin: 'http://localhost' } });
    expect(restore.statusCode).toBe(200);
    expect(await archived()).toBe(false);
    // Reads are not refused for an Origin: a page of another site cannot read the answer anyway.
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: { origin: 'http://evil.example' } })).statusCode).toBe(200);
  });

  it('token mode: the cookie alone does not make a bodyless POST; the bearer header (scripts) does', async () => {
    const tok = await makeApp({ token: TOKEN, clientDir: null });
    try {
      const made = await tok.app.inject({ method: 'POST', url: '/api/models', headers: { ...bearer, ...json }, payload: JSON.stringify({ model: cantilever(1), author: 'a' }) });
      const mid = made.json().id as string;
      const signIn = await tok.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: TOKEN }) });
      const cookie = { cookie: String(signIn.headers['set-cookie']).split(';')[0] };
      const viaCookie = await tok.app.inject({ method: 'POST', url: `/api/models/${mid}/archive`, headers: cookie });
      expect(viaCookie.statusCode).toBe(403);
      expect(errorOf(viaCookie.body).error.code).toBe('SN_CROSS_SITE');
      const viaBearer = await tok.app.inject({ method: 'POST', url: `/api/models/${mid}/archive`, headers: bearer });
      expect(viaBearer.statusCode).toBe(200);
      // Sign-in itself needs JSON: a form cannot sign a browser in to the attacker's session.
      const formSignIn = await tok.app.inject({ method: 'POST', url: '/api/session', headers: { 'content-type': 'text/plain', origin: 'http://evil.example' }, payload: JSON.stringify({ token: TOKEN }) });
      expect(formSignIn.statusCode).toBe(403);
    } finally {
      await tok.close();
    }
  });
});

describe('Host names (DNS rebinding)', () => {
  it('parses Host headers', () => {
    expect(hostName('LOCALHOST:8080')).toBe('localhost');
    expect(hostName('[::1]:8080')).toBe('::1');
    expect(hostName('shaftnet.example.')).toBe('shaftnet.example');
    expect(hostName('10.0.0.5')).toBe('10.0.0.5');
  });

  it('bound to loopback: loopback names and configured names only', () => {
    const ok = hostPolicy('127.0.0.1', ['Shaftnet.Example']);
    expect(['localhost', '127.0.0.1', '127.0.0.2', '::1', 'shaftnet.example'].every(ok)).toBe(true);
    expect(['evil.example', '10.0.0.5', 'shaftnet.example.evil', ''].some(ok)).toBe(false);
  });

  it('bound to one address: that address, localhost and configured names', () => {
    const ok = hostPolicy('192.168.1.5');
    expect(['192.168.1.5', 'localhost'].every(ok)).toBe(true);
    expect(['127.0.0.1', '192.168.1.6', 'evil.example'].some(ok)).toBe(false);
  });

  it('bound to every address: any IP address, loopback, this machine\'s name; no other name', () => {
    const ok = hostPolicy('0.0.0.0');
    expect(['10.1.2.3', '192.168.1.5', '::1', 'localhost', os.hostname().toLowerCase()].every(ok)).toBe(true);
    expect(ok('evil.example')).toBe(false);
  });

  it('refuses a foreign Host on the API and the client page: 421 SN_HOST', async () => {
    const t = await makeApp({ clientDir: null, allowedHosts: ['shaftnet.example'] });
    try {
      for (const url of ['/api/health', '/api/models', '/']) {
        const r = await t.app.inject({ method: 'GET', url, headers: { host: 'attacker.example' } });
        expect(r.statusCode, url).toBe(421);
        expect(expectErrorShape(421, r.body, url).error.code).toBe('SN_HOST');
      }
      const named = await t.app.inject({ method: 'GET', url: '/api/health', headers: { host: 'shaftnet.example:8080' } });
      expect(named.statusCode).toBe(200);
      const loop = await t.app.inject({ method: 'GET', url: '/api/health', headers: { host: '127.0.0.1:8080' } });
      expect(loop.statusCode).toBe(200);
    } finally {
      await t.close();
    }
  });

  it('behind a trusted proxy the forwarded host is the one checked', async () => {
    const t = await makeApp({ clientDir: null, trustProxy: ['127.0.0.1'], allowedHosts: ['shaftnet.example'] });
    try {
      const evil = await t.app.inject({ method: 'GET', url: '/api/health', headers: { 'x-forwarded-host': 'attacker.example' } });
      expect(evil.statusCode).toBe(421);
      const good = await t.app.inject({ method: 'GET', url: '/api/health', headers: { 'x-forwarded-host': 'shaftnet.example' } });
      expect(good.statusCode).toBe(200);
    } finally {
      await t.close();
    }
  });
});

describe('sessions', () => {
  let clock = Date.UTC(2026, 0, 1);
  const now = () => clock;
  let t: TestApp;
  beforeAll(async () => {
    t = await makeApp({ token: TOKEN, clientDir: null, now });
  });
  afterAll(async () => {
    await t.close();
  });

  const HOUR = 3600_000;
  let address = 0;
  /** Signs in from its own address (so the sign-in limit of one address is not what is tested here). */
  async function signIn(app = t.app): Promise<Record<string, string>> {
    const r = await app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: TOKEN }), remoteAddress: `10.9.0.${++address}` });
    expect(r.statusCode).toBe(200);
    return { cookie: String(r.headers['set-cookie']).split(';')[0] };
  }
  const status = async (cookie: Record<string, string>) => (await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode;

  it('each sign-in has its own random session; signing one out leaves the other', async () => {
    const a = await signIn();
    const b = await signIn();
    expect(a.cookie).not.toBe(b.cookie);
    expect(a.cookie).toMatch(/^shaftnet_session=[A-Za-z0-9_-]{43}$/); // 32 random bytes, base64url
    expect(await status(a)).toBe(200);
    expect(await status(b)).toBe(200);
    await t.app.inject({ method: 'DELETE', url: '/api/session', headers: { ...a, ...json } });
    expect(await status(a)).toBe(401);
    expect(await status(b)).toBe(200);
  });

  it('ends after 12 hours unused, and 7 days after sign-in however often it is used', async () => {
    const idle = await signIn();
    clock += 12 * HOUR - 1000;
    expect(await status(idle)).toBe(200); // use within 12 h refreshes it
    clock += 12 * HOUR - 1000;
    expect(await status(idle)).toBe(200);
    clock += 12 * HOUR;
    expect(await status(idle)).toBe(401);

    const busy = await signIn();
    const start = clock;
    while (clock - start < 7 * 24 * HOUR - 11 * HOUR) {
      clock += 11 * HOUR;
      expect(await status(busy)).toBe(200);
    }
    clock = start + 7 * 24 * HOUR;
    expect(await status(busy)).toBe(401);
  });

  it('the cookie is Secure when the request came over TLS through a trusted proxy, not on a forged header', async () => {
    const proxied = await makeApp({ token: TOKEN, clientDir: null, trustProxy: ['127.0.0.1'] });
    const direct = await makeApp({ token: TOKEN, clientDir: null });
    try {
      const body = JSON.stringify({ token: TOKEN });
      const viaProxy = await proxied.app.inject({ method: 'POST', url: '/api/session', headers: { ...json, 'x-forwarded-proto': 'https' }, payload: body });
      expect(String(viaProxy.headers['set-cookie'])).toMatch(/; Secure/);
      const forged = await direct.app.inject({ method: 'POST', url: '/api/session', headers: { ...json, 'x-forwarded-proto': 'https' }, payload: body });
      expect(String(forged.headers['set-cookie'])).not.toMatch(/Secure/);
      // A proxy that is not the trusted one is not believed either.
      const other = await proxied.app.inject({ method: 'POST', url: '/api/session', headers: { ...json, 'x-forwarded-proto': 'https' }, payload: body, remoteAddress: '10.0.0.9' });
      expect(String(other.headers['set-cookie'])).not.toMatch(/Secure/);
    } finally {
      await proxied.close();
      await direct.close();
    }
  });

  it('sign-in is limited to 10 attempts a minute per address (wrong bearer tokens count); 429 with Retry-After', async () => {
    const from = '10.7.7.7';
    const attempt = (token: string) =>
      t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token }), remoteAddress: from });
    for (let i = 0; i < 9; i++) expect((await attempt(`wrong-token-${i}`)).statusCode).toBe(401);
    const wrongBearer = await t.app.inject({ method: 'GET', url: '/api/models', headers: { authorization: 'Bearer wrong-token-x' }, remoteAddress: from });
    expect(wrongBearer.statusCode).toBe(401); // the tenth attempt
    const limited = await attempt(TOKEN); // even the right token, until the minute is over
    expect(limited.statusCode).toBe(429);
    expect(expectErrorShape(429, limited.body, '429').error.code).toBe('SN_RATE_LIMITED');
    expect(Number(limited.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(limited.headers['set-cookie']).toBeUndefined();
    const limitedBearer = await t.app.inject({ method: 'GET', url: '/api/models', headers: bearer, remoteAddress: from });
    expect(limitedBearer.statusCode).toBe(429);
    // Another address is not held back.
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: bearer, remoteAddress: '10.7.7.8' })).statusCode).toBe(200);
    clock += 60_000;
    expect((await attempt(TOKEN)).statusCode).toBe(200);
  });

  it('the store keeps at most maxSessions, dropping the oldest', () => {
    const store = new MemorySessionStore({ idleMs: 1000, absoluteMs: 5000, maxSessions: 3 });
    const ids = [0, 1, 2, 3].map((i) => store.create(i));
    expect(store.check(ids[0], 10)).toBe(false);
    expect(ids.slice(1).every((x) => store.check(x, 10))).toBe(true);
    expect(store.check('not-a-session', 10)).toBe(false);
    store.revoke(ids[1]);
    expect(store.size(10)).toBe(2);
  });
});
