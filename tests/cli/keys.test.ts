/**
 * `shaftnet keys add | list | revoke`: the key printed once and alone, only
 * its hash kept, a server on the same library taking a new key and a
 * revocation at once, and the refusals with exit status 1. The behaviour is
 * this project's contract (README "Review and sign-off").
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';
import { buildApp } from '../../server/http/app.js';
import { KEY_PATTERN } from '../../server/store/keys.js';
import { DATABASE_FILE, openSqliteStore } from '../../server/store/sqlite-store.js';

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, (s) => (out += s + '\n'), (s) => (err += s + '\n'));
  return { code, out, err };
}

let dir: string;
beforeEach(() => {
  dir = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-keys-')), 'lib');
});
afterEach(() => {
  fs.rmSync(path.dirname(dir), { recursive: true, force: true });
});

describe('shaftnet keys', () => {
  it('add prints the key alone, once; list shows it without the secret; a server on the library takes it; revoke stops it at once', async () => {
    let key = '';
    const store = openSqliteStore(dir);
    const app = await buildApp({ store, seedDemos: false, signInPerMinute: 1000 });
    try {
      expect((await app.inject({ method: 'GET', url: '/api/models' })).statusCode).toBe(200); // open: no key yet

      const added = await run(['keys', 'add', 'Ann Lee', '--role', 'checker', '--data', dir]);
      expect(added.code).toBe(0);
      key = added.out.trim();
      expect(key).toMatch(KEY_PATTERN);
      expect(added.err).toContain('Ann Lee');
      expect(added.err).not.toContain(key.slice(16));
      const id = KEY_PATTERN.exec(key)![1];

      const list = await run(['keys', 'list', '--data', dir]);
      expect(list.code).toBe(0);
      expect(list.out).toMatch(new RegExp(`^${id}\\s+Ann Lee\\s+checker\\s+\\d{4}-\\d\\d-\\d\\dT[\\d:.]+Z\\s+-$`, 'm'));
      expect(list.out).not.toContain(key.slice(16));
      const listed = JSON.parse((await run(['keys', 'list', '--data', dir, '--json'])).out);
      expect(listed).toEqual([{ id, name: 'Ann Lee', role: 'checker', created: expect.any(String), revoked: null }]);

      // The running server needs a key now, and takes this one.
      expect((await app.inject({ method: 'GET', url: '/api/models' })).statusCode).toBe(401);
      const session = await app.inject({ method: 'GET', url: '/api/session', headers: { authorization: `Bearer ${key}` } });
      expect(session.json()).toEqual({ tokenRequired: true, signedIn: true, identity: { name: 'Ann Lee', role: 'checker' } });

      const revoked = await run(['keys', 'revoke', 'Ann Lee', '--data', dir]);
      expect(revoked.code).toBe(0);
      expect(revoked.out).toContain(id);
      expect((await app.inject({ method: 'GET', url: '/api/models', headers: { authorization: `Bearer ${key}` } })).statusCode).toBe(401);
      const after = JSON.parse((await run(['keys', 'list', '--data', dir, '--json'])).out);
      expect(after[0].revoked).toMatch(/Z$/);
    } finally {
      await app.close();
      store.close();
    }
    // Only the hash is in the library (the server and the command have closed it: no -wal left).
    const bytes = fs.readFileSync(path.join(dir, DATABASE_FILE)).toString('latin1');
    expect(bytes).toContain('Ann Lee');
    expect(bytes).not.toContain(key.slice(`snk_${KEY_PATTERN.exec(key)![1]}_`.length));
  });

  it('refuses a missing or unknown role, a missing name or --data, a live name twice, an unknown key, a missing library: exit 1', async () => {
    const cases: Array<[string[], RegExp]> = [
      [['keys', 'add', 'Bo', '--data', dir], /--role takes editor, checker, approver/],
      [['keys', 'add', 'Bo', '--role', 'boss', '--data', dir], /not boss/],
      [['keys', 'add', '--role', 'editor', '--data', dir], /name the key's holder/],
      [['keys', 'add', ' Bo', '--role', 'editor', '--data', dir], /space/],
      [['keys', 'add', 'Bo', '--role', 'editor'], /--data DIR/],
      [['keys', 'list', '--data', dir], /no library/],
      [['keys', 'frobnicate', '--data', dir], /unknown keys command/],
      [['keys', 'add', 'Bo', '--role', 'editor', '--data', dir, '--colour'], /unknown option --colour/],
    ];
    const env = process.env.SHAFTNET_DATA;
    delete process.env.SHAFTNET_DATA;
    try {
      for (const [args, message] of cases) {
        const r = await run(args);
        expect(r.code, args.join(' ')).toBe(1);
        expect(r.err, args.join(' ')).toMatch(message);
        expect(r.out, args.join(' ')).toBe('');
      }
      expect((await run(['keys', 'add', 'Bo', '--role', 'editor', '--data', dir])).code).toBe(0);
      const twice = await run(['keys', 'add', 'bo', '--role', 'approver', '--data', dir]);
      expect(twice.code).toBe(1);
      expect(twice.err).toMatch(/exists and is not revoked/);
      const unknown = await run(['keys', 'revoke', 'Nobody', '--data', dir]);
      expect(unknown.code).toBe(1);
      expect(unknown.err).toMatch(/no key with id or name Nobody/);
    } finally {
      if (env !== undefined) process.env.SHAFTNET_DATA = env;
    }
  });
});
