/**
 * Durability: the real server process (node dist/server/main.js) is killed with
 * SIGKILL in the middle of a burst of saves; after a restart every save it had
 * acknowledged is there, exactly as sent.
 */
import { spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cantilever } from './helpers.js';
import { spawnServer, type ServerProcess } from '../helpers/server-process.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const mainJs = path.join(root, 'dist', 'server', 'main.js');
const children = new Set<ChildProcess>();
let dataDir: string;

beforeAll(() => {
  if (!fs.existsSync(mainJs)) {
    // `npm test` builds first (pretest); a bare `vitest run` may not have.
    spawnSync(process.execPath, [path.join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', 'tsconfig.build.json'], { cwd: root, stdio: 'ignore' });
  }
  expect(fs.existsSync(mainJs), 'dist/server/main.js (npm run build:server)').toBe(true);
  dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-durable-'));
});

afterAll(() => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  fs.rmSync(dataDir, { recursive: true, force: true });
});

/** Starts the server on a free loopback port; resolves its URL once it prints it. */
function startServer(): Promise<ServerProcess> {
  return spawnServer(mainJs, ['--port', '0', '--data', dataDir, '--log-level', 'warn', '--rate-limit', '0'], { cwd: root, children, timeoutMs: 30_000 });
}

const modelWith = (marker: string) => ({ ...cantilever(2), name: `durable ${marker}`, notes: marker });

async function send(url: string, method: string, body: unknown): Promise<Response> {
  return fetch(url, { method, body: JSON.stringify(body), headers: { 'content-type': 'application/json' } });
}

describe('durability', () => {
  it('every acknowledged save survives a SIGKILL during a burst of saves', async () => {
    const first = await startServer();
    const acked: Array<{ id: string; revision: number; marker: string }> = [];

    // Eight models, each saved by its own client in a chain of revisions.
    const ids: string[] = [];
    for (let c = 0; c < 8; c++) {
      const r = await send(`${first.url}/api/models`, 'POST', { model: modelWith(`c${c}-r1`), author: `client${c}`, message: 'start' });
      expect(r.status).toBe(201);
      const { id } = (await r.json()) as { id: string };
      ids.push(id);
      acked.push({ id, revision: 1, marker: `c${c}-r1` });
    }

    let stop = false;
    const chains = ids.map(async (id, c) => {
      let base = 1;
      while (!stop) {
        const marker = `c${c}-r${base + 1}`;
        let r: Response;
        try {
          r = await send(`${first.url}/api/models/${id}`, 'PUT', { model: modelWith(marker), baseRevision: base, author: `client${c}`, message: marker });
        } catch {
          return; // the connection died with the server: this save was not acknowledged
        }
        if (r.status !== 200) return;
        const { revision } = (await r.json()) as { revision: number };
        acked.push({ id, revision, marker });
        base = revision;
      }
    });
    // Creations too, in parallel with the revision chains.
    const creator = (async () => {
      for (let n = 0; !stop; n++) {
        try {
          const r = await send(`${first.url}/api/models`, 'POST', { model: modelWith(`new${n}`), author: 'creator', message: '' });
          if (r.status !== 201) return;
          const { id, revision } = (await r.json()) as { id: string; revision: number };
          acked.push({ id, revision, marker: `new${n}` });
        } catch {
          return;
        }
      }
    })();

    // Let the burst run until 80 saves are acknowledged (or 20 s on a loaded machine), then kill mid-burst.
    const t0 = Date.now();
    while (acked.length < 80 && Date.now() - t0 < 20_000) await new Promise((r) => setTimeout(r, 10));
    const before = acked.length;
    first.child.kill('SIGKILL');
    await new Promise((r) => first.child.once('exit', r));
    stop = true;
    await Promise.all([...chains, creator]);
    expect(before).toBeGreaterThan(20); // the kill really landed mid-burst

    const second = await startServer();
    try {
      for (const a of acked) {
        const r = await fetch(`${second.url}/api/models/${a.id}/revisions/${a.revision}`);
        expect(r.status, `${a.id} r${a.revision}`).toBe(200);
        const body = (await r.json()) as { model: { notes: string }; revision: number };
        expect(body.revision).toBe(a.revision);
        expect(body.model.notes).toBe(a.marker);
      }
      // and the chains can continue on top of what survived
      const latest = (await (await fetch(`${second.url}/api/models/${ids[0]}`)).json()) as { revision: number };
      const next = await send(`${second.url}/api/models/${ids[0]}`, 'PUT', { model: modelWith('after'), baseRevision: latest.revision, author: 'x', message: '' });
      expect(next.status).toBe(200);
    } finally {
      second.child.kill('SIGTERM');
      await new Promise((r) => second.child.once('exit', r));
    }
  });
});
