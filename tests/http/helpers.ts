/** Shared setup of the HTTP tests: an app on a throwaway library, and small models. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FastifyInstance } from 'fastify';
import { buildApp, type AppOptions } from '../../server/http/app.js';
import { openSqliteStore, type SqliteStore } from '../../server/store/sqlite-store.js';

export interface TestApp {
  app: FastifyInstance;
  store: SqliteStore;
  dir: string;
  close(): Promise<void>;
}

/** An app on a fresh library in a temp directory; demos not seeded unless asked. */
export async function makeApp(opts: Partial<AppOptions> = {}): Promise<TestApp> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-http-'));
  const store = openSqliteStore(dir);
  const app = await buildApp({ seedDemos: false, rateLimitPerMinute: 0, ...opts, store });
  await app.ready();
  return {
    app,
    store,
    dir,
    async close() {
      await app.close();
      store.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A demo model from server/demos, parsed. */
export function demo(id: string): Record<string, unknown> {
  return JSON.parse(fs.readFileSync(path.join(fileURLToPath(new URL('../../server/demos/', import.meta.url)), id + '.json'), 'utf8'));
}

/**
 * One steel shaft (d = 40 mm, G = 80 GPa) of `segments` equal pieces over 1 m,
 * fixed at z = 0, with a torque T at the free end: a statically determinate
 * case with closed forms T(z) = T and φ(L) = T L / (G J), J = π d⁴ / 32.
 */
export function cantilever(segments = 1, torque = 100): Record<string, unknown> {
  return {
    format: 'shaftnet/1',
    name: `Cantilever with ${segments} segments`,
    materials: [{ id: 'steel', G: 80e9 }],
    sections: [{ id: 'd40', shape: 'solid', d: 0.04 }],
    shafts: [
      {
        id: 's',
        segments: Array.from({ length: segments }, () => ({ length: 1 / segments, section: 'd40', material: 'steel' })),
      },
    ],
    supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T', shaft: 's', at: 1, torque }],
  };
}

/** A shaft with no support: a mechanism (422 on solve). */
export function freeShaft(): Record<string, unknown> {
  const m = cantilever(1);
  m.supports = [];
  m.name = 'Free shaft';
  return m;
}

export interface ErrorBodyT {
  error: { code: string; message: string; issues: Array<{ code: string; pointer: string; message: string; shafts?: string[]; connections?: string[] }> };
  currentRevision?: number;
}

export function errorOf(body: string): ErrorBodyT {
  return JSON.parse(body) as ErrorBodyT;
}
