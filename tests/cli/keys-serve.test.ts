/**
 * A server started (node dist/server/main.js, no team token) on a library that
 * holds a personal key says so at start, and needs a key for the API at once.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const mainJs = path.join(root, 'dist', 'server', 'main.js');
let child: ChildProcess | undefined;
let dir: string;

beforeAll(() => {
  if (!fs.existsSync(mainJs)) spawnSync('npm', ['run', 'build:server'], { cwd: root, stdio: 'ignore' });
  expect(fs.existsSync(mainJs), 'dist/server/main.js (npm run build:server)').toBe(true);
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-keys-serve-'));
});
afterAll(() => {
  if (child && child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('serve with personal keys', () => {
  it('prints at start that every request needs a personal key, and refuses the API without one', async () => {
    let key = '';
    const code = await runCli(['keys', 'add', 'Ann', '--role', 'approver', '--data', dir], (s) => (key += s), () => {});
    expect(code).toBe(0);
    let out = '';
    child = spawn(process.execPath, [mainJs, '--port', '0', '--data', dir, '--log-level', 'warn'], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
    child.stdout!.on('data', (d: Buffer) => (out += String(d)));
    await expect.poll(() => out, { timeout: 30_000 }).toMatch(/personal key\(s\), so every request needs a personal key \(no team token is set\)/);
    const url = /listening on (http:\/\/\S+?)\/?\s/.exec(out)![1];
    expect((await fetch(`${url}/api/models`)).status).toBe(401);
    const withKey = await fetch(`${url}/api/session`, { headers: { authorization: `Bearer ${key.trim()}` } });
    expect(await withKey.json()).toEqual({ tokenRequired: true, signedIn: true, identity: { name: 'Ann', role: 'approver' } });
    expect(out).not.toContain(key.trim());
  });
});
