/**
 * `shaftnet backup` during a burst of saves on a running server, and
 * `shaftnet restore` of that backup into a new directory: a server started on
 * it has every revision acknowledged before the backup began, exactly as
 * sent. Then the refusals: a running server's library, an existing library
 * without --force, a file that is not a whole library, an existing --out.
 * Real processes: node dist/server/main.js and dist/server/cli.js.
 */
import { execFile, spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cantilever } from '../http/helpers.js';
import { spawnServer, type ServerProcess } from '../helpers/server-process.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const mainJs = path.join(root, 'dist', 'server', 'main.js');
const cliJs = path.join(root, 'dist', 'server', 'cli.js');
const children = new Set<ChildProcess>();
let work: string;

beforeAll(() => {
  if (!fs.existsSync(mainJs) || !fs.existsSync(path.join(root, 'dist', 'server', 'cli-backup.js'))) {
    // `npm test` builds first (pretest); a bare `vitest run` may not have.
    spawnSync('npm', ['run', 'build:server'], { cwd: root, stdio: 'ignore' });
  }
  expect(fs.existsSync(cliJs), 'dist/server/cli.js (npm run build:server)').toBe(true);
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-backup-'));
});

afterAll(() => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  fs.rmSync(work, { recursive: true, force: true });
});

const run = promisify(execFile);

/** Runs the command line; answers its exit status and output (never throws on a non-zero status). */
async function cli(...args: string[]): Promise<{ code: number; out: string; err: string }> {
  try {
    const { stdout, stderr } = await run(process.execPath, [cliJs, ...args], { cwd: root });
    return { code: 0, out: stdout, err: stderr };
  } catch (e) {
    const x = e as { code: number; stdout: string; stderr: string };
    return { code: x.code, out: x.stdout, err: x.stderr };
  }
}

function start(dataDir: string): Promise<ServerProcess> {
  return spawnServer(mainJs, ['--port', '0', '--data', dataDir, '--log-level', 'warn', '--rate-limit', '0'], { cwd: root, children, timeoutMs: 30_000 });
}

async function stop(server: ServerProcess): Promise<void> {
  const exited = new Promise((resolve) => server.child.once('exit', resolve));
  server.child.kill('SIGTERM');
  await exited;
}

const modelWith = (marker: string) => ({ ...cantilever(2), name: `backup ${marker}`, notes: marker });

async function send(url: string, method: string, body: unknown): Promise<Response> {
  return fetch(url, { method, body: JSON.stringify(body), headers: { 'content-type': 'application/json' } });
}

describe('backup and restore', () => {
  it('a backup taken during a burst of saves restores every revision acknowledged before it began', async () => {
    const dataA = path.join(work, 'a');
    const dataB = path.join(work, 'b');
    const backupFile = path.join(work, 'library-backup.sqlite');
    const server = await start(dataA);
    const acked: Array<{ id: string; revision: number; marker: string }> = [];
    const ids: string[] = [];
    for (let c = 0; c < 6; c++) {
      const r = await send(`${server.url}/api/models`, 'POST', { model: modelWith(`c${c}-r1`), author: `client${c}`, message: 'start' });
      expect(r.status).toBe(201);
      const { id } = (await r.json()) as { id: string };
      ids.push(id);
      acked.push({ id, revision: 1, marker: `c${c}-r1` });
    }
    let stopBurst = false;
    const clients = ids.map(async (id, c) => {
      let base = 1;
      while (!stopBurst) {
        const marker = `c${c}-r${base + 1}`;
        const r = await send(`${server.url}/api/models/${id}`, 'PUT', { model: modelWith(marker), baseRevision: base, author: `client${c}`, message: marker });
        expect(r.status).toBe(200);
        base = ((await r.json()) as { revision: number }).revision;
        acked.push({ id, revision: base, marker });
      }
    });
    await expect.poll(() => acked.length, { timeout: 30_000 }).toBeGreaterThanOrEqual(40);
    const before = [...acked]; // every save acknowledged before the backup starts
    const backup = await cli('backup', '--data', dataA, '--out', backupFile);
    const during = acked.length - before.length;
    await expect.poll(() => acked.length, { timeout: 30_000 }).toBeGreaterThan(before.length + during + 6); // the burst went on after it
    stopBurst = true;
    await Promise.all(clients);
    expect(backup.err).toBe('');
    expect(backup.code).toBe(0);
    expect(backup.out).toMatch(/^backed up \d+ models, \d+ revisions \(\d+ bytes\) to /);
    console.log(`backup during the burst: ${before.length} saves acknowledged before it, ${during} while it ran; ${backup.out.trim()}`);

    // A running server's library is never restored over, not even with --force.
    const busy = await cli('restore', '--data', dataA, '--from', backupFile, '--force');
    expect(busy.code).toBe(1);
    expect(busy.err).toMatch(/running Shaftnet server .* has the library .* open/);
    await stop(server);

    const restored = await cli('restore', '--data', dataB, '--from', backupFile);
    expect(restored.code, restored.err).toBe(0);
    expect(fs.readdirSync(dataB).filter((f) => !f.startsWith('shaftnet.sqlite'))).toEqual([]);
    const second = await start(dataB);
    try {
      for (const a of before) {
        const r = await fetch(`${second.url}/api/models/${a.id}/revisions/${a.revision}`);
        expect(r.status, `${a.id} r${a.revision}`).toBe(200);
        const got = (await r.json()) as { model: { notes: string }; author: string };
        expect(got.model.notes).toBe(a.marker);
      }
      // The copy is one moment of the library: each model's revisions run 1..n without a gap.
      for (const id of ids) {
        const revs = ((await (await fetch(`${second.url}/api/models/${id}/revisions`)).json()) as { revisions: Array<{ revision: number }> }).revisions;
        expect(revs.map((r) => r.revision)).toEqual(Array.from({ length: revs.length }, (_, k) => revs.length - k));
      }
    } finally {
      await stop(second);
    }

    // An existing library needs --force, and is kept beside the restored one.
    const again = await cli('restore', '--data', dataB, '--from', backupFile);
    expect(again.code).toBe(1);
    expect(again.err).toMatch(/holds a library already; add --force/);
    const forced = await cli('restore', '--data', dataB, '--from', backupFile, '--force');
    expect(forced.code, forced.err).toBe(0);
    expect(fs.readdirSync(dataB).some((f) => f.startsWith('shaftnet.sqlite.before-restore-'))).toBe(true);

    // An existing --out needs --force.
    const overwrite = await cli('backup', '--data', dataB, '--out', backupFile);
    expect(overwrite.code).toBe(1);
    expect(overwrite.err).toMatch(/exists; choose another --out, or add --force/);
  });

  it('refuses to restore a file that is not a whole Shaftnet library, before touching the directory', async () => {
    const target = path.join(work, 'c');
    const text = path.join(work, 'notes.txt');
    fs.writeFileSync(text, 'not a library at all, just some text of more than sixteen bytes');
    const notSqlite = await cli('restore', '--data', target, '--from', text);
    expect(notSqlite.code).toBe(1);
    expect(notSqlite.err).toMatch(/not a SQLite file/);

    // A real library with a page overwritten: quick_check finds it.
    const source = path.join(work, 'source');
    const made = await cli('keys', 'add', 'Ann', '--role', 'editor', '--data', source);
    expect(made.code).toBe(0);
    const good = path.join(work, 'good.sqlite');
    expect((await cli('backup', '--data', source, '--out', good)).code).toBe(0);
    const damaged = path.join(work, 'damaged.sqlite');
    const db = new Database(good, { readonly: true });
    const root = (db.prepare("SELECT rootpage FROM sqlite_schema WHERE name = 'keys'").get() as { rootpage: number }).rootpage;
    db.close();
    const bytes = fs.readFileSync(good);
    const pageSize = bytes.readUInt16BE(16);
    bytes.fill(0, (root - 1) * pageSize, root * pageSize); // the keys table's page, zeroed
    fs.writeFileSync(damaged, bytes);
    const bad = await cli('restore', '--data', target, '--from', damaged);
    expect(bad.code).toBe(1);
    expect(bad.err).toMatch(/damaged|malformed/);
    expect(fs.existsSync(target)).toBe(false);

    const missing = await cli('restore', '--data', target);
    expect(missing.code).toBe(1);
    expect(missing.err).toMatch(/--from FILE/);
  });
});
