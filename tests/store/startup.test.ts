/**
 * The server as a process (node dist/server/main.js, which is serveFromArgs, and
 * once through `shaftnet serve`): a data path that cannot hold a library, or a
 * library file that is empty or damaged, stops it at once with exit status 1 and
 * one line on stderr naming the path and what to do; the file is left as it was.
 * And six servers started together on one new directory seed the demos once.
 */
import { spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_FILE, openSqliteStore } from '../../server/store/sqlite-store.js';
import { mountTmpfs, unmount } from './mounts.js';
import { spawnServer, type ServerProcess } from '../helpers/server-process.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const mainJs = path.join(root, 'dist', 'server', 'main.js');
const cliJs = path.join(root, 'dist', 'server', 'cli.js');
const children = new Set<ChildProcess>();
let tmp: string;

beforeAll(() => {
  if (!fs.existsSync(mainJs)) {
    // `npm test` builds first (pretest); a bare `vitest run` may not have.
    spawnSync(process.execPath, [path.join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', 'tsconfig.build.json'], { cwd: root, stdio: 'ignore' });
  }
  expect(fs.existsSync(mainJs), 'dist/server/main.js (npm run build:server)').toBe(true);
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-startup-'));
});

// Root writes through chmod, so read-only needs a read-only mount; where mount is refused that one case is not run.
const ro = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-ro-'));
const mounted = mountTmpfs(ro, '64k', ['ro']);

afterAll(() => {
  if (mounted) unmount(ro);
  fs.rmSync(ro, { recursive: true, force: true });
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  fs.rmSync(tmp, { recursive: true, force: true });
});

/** Runs the server on `dataDir` expecting it to refuse to start; its exit status and stderr. */
function refused(dataDir: string, viaCli = false): { status: number | null; stderr: string; stdout: string } {
  const args = viaCli ? [cliJs, 'serve'] : [mainJs];
  const r = spawnSync(process.execPath, [...args, '--port', '0', '--host', '127.0.0.1', '--data', dataDir, '--log-level', 'warn', '--workers', '1'], {
    cwd: root,
    encoding: 'utf8',
    timeout: 30_000,
  });
  return { status: r.status, stderr: r.stderr, stdout: r.stdout };
}

function expectRefusal(r: { status: number | null; stderr: string; stdout: string }, line: string): void {
  expect(r.stdout).not.toContain('listening');
  expect(r.status).toBe(1);
  expect(r.stderr).toBe(`shaftnet serve: cannot start: ${line}\n`);
  expect(r.stderr).not.toMatch(/unable to open database file|ENOENT|mkdir|at .*\.js:\d+/);
}

describe('the server refuses a data path that cannot hold a library', () => {
  it('a data path that is a file', () => {
    const file = path.join(tmp, 'a-file');
    fs.writeFileSync(file, 'x');
    expectRefusal(
      refused(file),
      `the data path ${file} is a file, not a directory: --data names the directory that holds the library file ${DATABASE_FILE}. Choose another --data.`,
    );
  });

  it('a data directory whose parent is a file (the open fails before SQLite is asked), through `shaftnet serve` too', () => {
    const file = path.join(tmp, 'parent-file');
    fs.writeFileSync(file, 'x');
    const dir = path.join(file, 'data');
    const line = `the data directory ${dir} cannot exist: ${file} is a file, not a directory. Choose another --data.`;
    expectRefusal(refused(dir), line);
    expectRefusal(refused(dir, true), line);
  });

  it('a missing parent directory', () => {
    const parent = path.join(tmp, 'no-such-drive');
    const dir = path.join(parent, 'shaftnet');
    expectRefusal(
      refused(dir),
      `the data directory ${dir} does not exist, and neither does its parent ${parent}: Shaftnet creates only the data directory itself. Create ${parent} (or mount the drive it is on), or choose another --data.`,
    );
    expect(fs.existsSync(parent)).toBe(false);
  });

  it.runIf(mounted)('a read-only data directory (a read-only tmpfs)', () => {
    expectRefusal(
      refused(ro),
      `the data directory ${ro} is not writable (read-only file system, EROFS): Shaftnet writes the library ${DATABASE_FILE} and its -wal and -shm files there. Choose another --data, or make ${ro} writable.`,
    );
  });
});

describe('the server refuses an empty or damaged library and leaves it as it is', () => {
  it('a 0-byte library file', () => {
    const dir = fs.mkdtempSync(path.join(tmp, 'empty-'));
    const file = path.join(dir, DATABASE_FILE);
    fs.writeFileSync(file, '');
    expectRefusal(
      refused(dir),
      `the library file ${file} is empty (0 bytes): it was not written by Shaftnet, which never leaves its library empty, ` +
        `so Shaftnet will not use it. Move it aside (or delete it) to start a new library there, or copy your last backup to ${file}.`,
    );
    expect(fs.statSync(file).size).toBe(0);
  });

  it('a library with a zeroed table page: no start, so no save can go into it', () => {
    const dir = fs.mkdtempSync(path.join(tmp, 'zeroed-'));
    const store = openSqliteStore(dir);
    for (let i = 0; i < 20; i++) store.create({ model: { format: 'shaftnet/1', name: `m${i}`, notes: 'n'.repeat(1500) }, name: `m${i}`, author: 'a', message: '' });
    store.close();
    const file = path.join(dir, DATABASE_FILE);
    const db = new Database(file, { readonly: true });
    const pageSize = db.pragma('page_size', { simple: true }) as number;
    const { pageno } = db.prepare("SELECT pageno FROM dbstat WHERE name = 'models' AND pagetype = 'leaf'").get() as { pageno: number };
    db.close();
    const bytes = fs.readFileSync(file);
    bytes.fill(0, (pageno - 1) * pageSize, pageno * pageSize);
    fs.writeFileSync(file, bytes);

    const r = refused(dir);
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(new RegExp(`^shaftnet serve: cannot start: the library ${escape(file)} is damaged \\(the check (found|stopped at): .+\\); Shaftnet will not read it or save into it\\. `));
    expect(r.stderr).toContain(`move ${file} (and ${file}-wal and ${file}-shm, if they exist) aside, and copy your last backup to ${file}.`);
    expect(fs.readFileSync(file).equals(bytes)).toBe(true);
    expect(fs.existsSync(file + '-wal')).toBe(false);
  });
});

const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&');

/** Starts a server; resolves its URL once it listens (rejects if it exits first). */
function start(dataDir: string): Promise<ServerProcess> {
  const args = ['--port', '0', '--host', '127.0.0.1', '--data', dataDir, '--log-level', 'warn', '--workers', '1', '--rate-limit', '0'];
  return spawnServer(mainJs, args, { cwd: root, children, timeoutMs: 60_000 });
}

describe('seeding the demos', () => {
  it('six servers started together on one new directory: every one starts, and the library holds each demo once', async () => {
    const demos = fs.readdirSync(path.join(root, 'server', 'demos')).filter((f) => f.endsWith('.json'));
    expect(demos.length).toBeGreaterThan(1);
    const dir = path.join(tmp, 'shared-new'); // does not exist yet: the servers race to make it and the library
    const servers = await Promise.all(Array.from({ length: 6 }, () => start(dir)));
    try {
      for (const s of servers) {
        const r = await fetch(`${s.url}/api/models`);
        expect(r.status).toBe(200);
        const names = ((await r.json()) as { models: Array<{ name: string; author: string }> }).models.map((m) => m.name);
        expect(names).toHaveLength(demos.length);
        expect(new Set(names).size).toBe(demos.length);
      }
    } finally {
      await Promise.all(
        servers.map(
          (s) =>
            new Promise((r) => {
              s.child.once('exit', r);
              s.child.kill('SIGTERM');
            }),
        ),
      );
    }
    expect(fs.readdirSync(dir).filter((f) => f.includes('.new-'))).toEqual([]); // the losers' temporary libraries are gone
    const store = openSqliteStore(dir);
    try {
      expect(store.count()).toBe(demos.length);
      expect(store.getMeta('demosSeeded')).toBeDefined();
    } finally {
      store.close();
    }
    // A seventh start later seeds nothing more.
    const late = await start(dir);
    const n = ((await (await fetch(`${late.url}/api/models`)).json()) as { models: unknown[] }).models.length;
    await new Promise((r) => {
      late.child.once('exit', r);
      late.child.kill('SIGTERM');
    });
    expect(n).toBe(demos.length);
  });
});
