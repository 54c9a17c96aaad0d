import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseConfig } from '../../server/http/config.js';
import { startServer } from '../../server/main.js';
import { cantilever, errorOf, makeApp, type TestApp } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeApp();
});
afterAll(async () => {
  await t.close();
});

const CSP =
  "default-src 'self';script-src 'self';style-src 'self' 'unsafe-inline';img-src 'self' data: blob:;connect-src 'self';object-src 'none';frame-ancestors 'none'";

describe('server', () => {
  it('GET /api/health answers status, version, uptime and the pool', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/health' });
    expect(r.statusCode).toBe(200);
    const body = r.json();
    expect(body.status).toBe('ok');
    expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
    expect(body.uptimeSeconds).toBeGreaterThanOrEqual(0);
    expect(body.workers).toEqual({ busy: 0, total: 1 });
  });

  it('sends security headers with the client CSP on API and page responses', async () => {
    for (const url of ['/api/health', '/', '/m/abc']) {
      const r = await t.app.inject({ method: 'GET', url });
      expect(r.headers['content-security-policy'], url).toBe(CSP);
      expect(r.headers['x-content-type-options']).toBe('nosniff');
      expect(r.headers['x-frame-options']).toBe('DENY');
      expect(r.headers['strict-transport-security']).toBeUndefined();
    }
  });

  it('serves the OpenAPI document generated from the schemas, and the docs page', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/openapi.json' });
    expect(r.statusCode).toBe(200);
    const doc = r.json();
    expect(doc.openapi).toBe('3.0.3');
    for (const p of ['/api/solve', '/api/models', '/api/models/{id}', '/api/models/{id}/revisions/{rev}', '/api/health', '/api/demos', '/api/session', '/api/models/import', '/api/models/{id}/export']) {
      expect(doc.paths[p], p).toBeDefined();
    }
    const solveBody = doc.paths['/api/solve'].post.requestBody.content['application/json'].schema;
    expect(solveBody.properties.gearMeshes).toBeDefined();
    expect(doc.paths['/api/models/{id}'].put.responses['409']).toBeDefined();
    // The public routes say so in the document: no security requirement.
    for (const [p, m] of [['/api/health', 'get'], ['/api/session', 'get'], ['/api/session', 'post'], ['/api/session', 'delete']]) {
      expect(doc.paths[p][m].security, `${m} ${p}`).toEqual([]);
    }
    expect(doc.paths['/api/models'].get.security).toBeUndefined(); // the document's default (the token, in token mode)
    const page = await t.app.inject({ method: 'GET', url: '/api/docs' });
    expect(page.statusCode).toBe(200);
    expect(page.headers['content-type']).toMatch(/text\/html/);
    expect(page.headers['content-security-policy']).toMatch(/script-src 'self'/);
  });

  it('falls back to the client page for unknown non-API GETs; unknown API paths are JSON 404s', async () => {
    const page = await t.app.inject({ method: 'GET', url: '/m/somemodel' });
    expect(page.statusCode).toBe(200);
    expect(page.headers['content-type']).toMatch(/text\/html/);
    expect(page.body).toMatch(/<html/i);
    const api = await t.app.inject({ method: 'GET', url: '/api/nothing/here' });
    expect(api.statusCode).toBe(404);
    expect(errorOf(api.body).error.code).toBe('SN_NOT_FOUND');
    const asset = await t.app.inject({ method: 'GET', url: '/assets/missing-file.js' });
    expect(asset.statusCode).toBe(404);
    const post = await t.app.inject({ method: 'POST', url: '/m/abc', payload: '{}', headers: { 'content-type': 'application/json' } });
    expect(post.statusCode).toBe(404);
  });

  it('without a built client, / explains how to build it', async () => {
    const bare = await makeApp({ clientDir: null });
    try {
      const r = await bare.app.inject({ method: 'GET', url: '/' });
      expect(r.statusCode).toBe(200);
      expect(r.body).toContain('npm run build');
    } finally {
      await bare.close();
    }
  });

  it('logs requests without model contents', async () => {
    const lines: string[] = [];
    const stream = new Writable({
      write(chunk, _enc, cb) {
        lines.push(String(chunk));
        cb();
      },
    });
    const logged = await makeApp({ logger: { level: 'info', stream } });
    try {
      const m = cantilever(1) as Record<string, any>;
      m.name = 'SECRET-NAME-4711';
      m.notes = 'SECRET-NOTES-4711';
      await logged.app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(m), headers: { 'content-type': 'application/json' } });
      m.torques[0].torque = '5 SECRETUNIT';
      await logged.app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(m), headers: { 'content-type': 'application/json' } });
      await logged.app.inject({ method: 'POST', url: '/api/models', payload: JSON.stringify({ model: m, author: 'a' }), headers: { 'content-type': 'application/json' } });
      const all = lines.join('');
      expect(all).toContain('/api/solve'); // requests are logged...
      expect(all).not.toContain('4711'); // ...but not what the models hold
      expect(all).not.toContain('SECRETUNIT');
    } finally {
      await logged.close();
    }
  });

  it('never sends a stack trace: an internal fault is a 500 SN_INTERNAL with a plain message', async () => {
    const broken = await makeApp();
    try {
      const { buildApp } = await import('../../server/http/app.js');
      const app = await buildApp({ store: broken.store, seedDemos: false, rateLimitPerMinute: 0 });
      // A store that fails: every library read throws an internal error.
      (broken.store as unknown as { list: () => never }).list = () => {
        throw new Error('disk on fire at /secret/path');
      };
      const r = await app.inject({ method: 'GET', url: '/api/models' });
      expect(r.statusCode).toBe(500);
      const e = errorOf(r.body);
      expect(e.error.code).toBe('SN_INTERNAL');
      expect(r.body).not.toContain('disk on fire');
      expect(r.body).not.toContain('/secret/path');
      expect(r.body).not.toMatch(/at .*\.ts:\d+/);
      await app.close();
    } finally {
      await broken.close();
    }
  });

  it('startServer passes the bound address, --allowed-hosts and --trust-proxy to the app', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-start-'));
    const config = parseConfig(
      ['--port', '0', '--host', '127.0.0.1', '--data', dir, '--workers', '1', '--log-level', 'silent', '--allowed-hosts', 'shaftnet.example', '--trust-proxy', '127.0.0.1'],
      {},
    );
    const server = await startServer(config);
    try {
      const port = (server.app.server.address() as AddressInfo).port;
      const get = (headers: Record<string, string>) =>
        new Promise<{ status: number; body: string }>((resolve, reject) => {
          const req = http.request({ host: '127.0.0.1', port, path: '/api/health', headers }, (res) => {
            let body = '';
            res.setEncoding('utf8');
            res.on('data', (d) => (body += d));
            res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
          });
          req.on('error', reject);
          req.end();
        });
      expect((await get({ host: `127.0.0.1:${port}` })).status).toBe(200);
      expect((await get({ host: `localhost:${port}` })).status).toBe(200);
      expect((await get({ host: 'shaftnet.example' })).status).toBe(200);
      const evil = await get({ host: `attacker.example:${port}` });
      expect(evil.status).toBe(421);
      expect(errorOf(evil.body).error.code).toBe('SN_HOST');
      // The proxy on 127.0.0.1 is trusted: its forwarded host is the one checked.
      expect((await get({ host: `127.0.0.1:${port}`, 'x-forwarded-host': 'attacker.example' })).status).toBe(421);
    } finally {
      await server.close();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
