/**
 * `shaftnet migrate --from DIR --to postgres://…`: a SQLite library with
 * revisions, archived models, review states, personal keys (one revoked),
 * Unicode and a meta flag, copied into a throwaway
 * PostgreSQL cluster and read back through both stores: identical, and the stored
 * text byte for byte. Expected values are what the test itself saved.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';
import { verifyMigration } from '../../server/cli-migrate.js';
import { makeKey } from '../../server/store/keys.js';
import { openPgStore } from '../../server/store/pg-store.js';
import { DATABASE_FILE, openSqliteStore } from '../../server/store/sqlite-store.js';
import { freePort, pgSuiteGate, startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';

const gate = pgSuiteGate('shaftnet migrate');

async function cli(args: string[]) {
  const out: string[] = [];
  const err: string[] = [];
  const code = await runCli(['migrate', ...args], (s) => out.push(s), (s) => err.push(s));
  return { code, out: out.join('\n'), err: err.join('\n') };
}

describe.skipIf(gate.skip)('shaftnet migrate', () => {
  let cluster: PgCluster;
  let dir: string;
  let url: string;
  const ids: string[] = [];

  beforeAll(async () => {
    cluster = await startPgCluster(gate.bin);
    url = await cluster.createDatabase('migrated');
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-migrate-'));
    const store = openSqliteStore(dir);
    const odd = 'Getriebewelle ü 軸 👩‍🔧 \u0000 "q"';
    const model = (name: string, k: number) => ({ format: 'shaftnet/1', name, z: k, notes: odd, a: { y: 1, b: [0.1 + 0.2, 1e-300] } });
    for (let m = 0; m < 5; m++) {
      const name = `Shaft ${m} ü`;
      const { id } = store.create({ model: model(name, 0), name, author: `author ${m}`, message: `first of ${m} 軸` });
      for (let r = 1; r <= m; r++) store.save(id, r, { model: model(`${name} r${r + 1}`, r), name: `${name} r${r + 1}`, author: 'bob', message: `rev ${r + 1}` });
      ids.push(id);
      await new Promise((res) => setTimeout(res, 3));
    }
    store.setArchived(ids[1], true);
    store.setArchived(ids[3], true);
    store.setMeta('demosSeeded', '2026-01-01T00:00:00.000Z');
    // Review states: model 2's revision 3 checked then approved; model 4's revision 5 returned with a note.
    store.review({ id: ids[2], revision: 3, state: 'checked', by: 'Cy', note: null });
    store.review({ id: ids[2], revision: 3, state: 'approved', by: 'Dan', note: 'fine ü' });
    store.review({ id: ids[4], revision: 5, state: 'returned', by: 'Eve', note: 'check the key seat 軸' });
    // Personal keys: two, one of them revoked.
    store.addKey((await makeKey('Cy', 'checker')).record);
    store.addKey((await makeKey('Dan', 'approver')).record);
    store.revokeKey('Cy', '2026-06-01T00:00:00.000Z');
    store.close();
  });
  afterAll(() => {
    cluster?.destroy();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it('copies every model, revision, archived flag, review change, key and meta flag, checks them and says so', async () => {
    const r = await cli(['--from', dir, '--to', url]);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    // 5 models with 1+2+3+4+5 = 15 revisions, 2 archived, 3 review changes, 2 keys, 1 meta flag (what beforeAll saved)
    expect(r.out).toContain(`into 127.0.0.1:${cluster.port}, database migrated`);
    expect(r.out).toContain('copied 5 models, 15 revisions, 3 review changes, 2 keys, 1 meta flags');
    expect(r.out).toMatch(/source\s+5 models \(2 archived\)\s+15 revisions\s+3 review changes\s+2 keys\s+1 meta flags/);
    expect(r.out).toMatch(/target\s+5 models \(2 archived\)\s+15 revisions\s+3 review changes\s+2 keys\s+1 meta flags/);
    expect(r.out).toContain('SHA-256 of the stored model text: 15 of 15 revisions equal on both sides');
    expect(r.out).toContain("SHA-256 of each key's salt, hash and parameters: 2 of 2 keys equal on both sides");
    expect(r.out).toContain('verified');

    // Read back through both stores: the same answers everywhere.
    const sqlite = openSqliteStore(dir);
    const postgres = await openPgStore(url);
    try {
      for (const archived of [false, true]) expect(await postgres.list({ archived })).toEqual(sqlite.list({ archived }));
      for (const id of ids) {
        expect(await postgres.revisions(id)).toEqual(sqlite.revisions(id));
        for (const { revision } of sqlite.revisions(id)!) expect(await postgres.get(id, revision)).toEqual(sqlite.get(id, revision));
      }
      expect(await postgres.getMeta('demosSeeded')).toBe('2026-01-01T00:00:00.000Z');
      // Review states (in get's history above, and here by name) and keys, with their hashes.
      expect((await postgres.get(ids[2]))?.review.history.map((h) => [h.state, h.by, h.note])).toEqual([
        ['prepared', 'bob', null],
        ['checked', 'Cy', null],
        ['approved', 'Dan', 'fine ü'],
      ]);
      expect((await postgres.list({ archived: false })).find((m) => m.id === ids[4])?.reviewState).toBe('returned');
      expect(await postgres.keys()).toEqual(sqlite.keys());
      expect((await postgres.keys()).map((k) => [k.name, k.revoked])).toEqual([
        ['Cy', '2026-06-01T00:00:00.000Z'],
        ['Dan', null],
      ]);
      for (const k of sqlite.keys()) expect(await postgres.keyRecord(k.id)).toEqual(sqlite.keyRecord(k.id));
      // The stored text itself, byte for byte.
      const src = new Database(path.join(dir, DATABASE_FILE), { readonly: true });
      const srcText = (src.prepare('SELECT model_id, revision, model FROM revisions ORDER BY model_id, revision').all() as Array<{ model_id: string; revision: number; model: string }>).map(
        (x) => `${x.model_id}#${x.revision}:${x.model}`,
      );
      src.close();
      const client = new pg.Client({ connectionString: url });
      await client.connect();
      const dstText = (await client.query('SELECT model_id, revision, model FROM revisions ORDER BY model_id, revision')).rows.map((x) => `${x.model_id}#${x.revision}:${x.model}`);
      await client.end();
      expect(dstText).toEqual(srcText);
      expect(srcText).toHaveLength(15);
      // and the copy is a working library: the next save continues the numbering
      expect(await postgres.save(ids[4], 5, { model: { format: 'shaftnet/1' }, name: 'next', author: 'cy', message: 'after the move' })).toEqual({ id: ids[4], revision: 6 });
    } finally {
      sqlite.close();
      await postgres.close();
    }
  });

  it('refuses a target that already holds a library, and with --force replaces it', async () => {
    const refused = await cli(['--from', dir, '--to', url]);
    expect(refused.code).toBe(1);
    expect(refused.err).toMatch(/already holds a library: nothing was copied.*--force/);
    const before = await openPgStore(url);
    expect((await before.get(ids[4]))?.revision).toBe(6); // the save of the test above is still there
    await before.close();

    const forced = await cli(['--from', dir, '--to', url, '--force']);
    expect(forced.err).toBe('');
    expect(forced.code).toBe(0);
    expect(forced.out).toContain('SHA-256 of the stored model text: 15 of 15 revisions equal on both sides');
    const after = await openPgStore(url);
    expect((await after.get(ids[4]))?.revision).toBe(5);
    expect(await after.count()).toBe(5);
    await after.close();
  });

  it('the check finds a changed model text, a changed message, a missing revision, a changed review note and a changed key hash', async () => {
    const target = await cluster.createDatabase('tampered');
    expect((await cli(['--from', dir, '--to', target])).code).toBe(0);
    const client = new pg.Client({ connectionString: target });
    await client.connect();
    await client.query("UPDATE revisions SET model = model || ' ' WHERE model_id = $1 AND revision = 1", [ids[0]]);
    await client.query("UPDATE revisions SET message = 'changed' WHERE model_id = $1 AND revision = 2", [ids[2]]);
    await client.query('DELETE FROM revisions WHERE model_id = $1 AND revision = 3', [ids[3]]);
    await client.query("UPDATE reviews SET note = 'other' WHERE model_id = $1", [ids[4]]);
    await client.query("UPDATE keys SET hash = 'A' || hash WHERE name = 'Dan'");
    await client.end();
    const v = await verifyMigration(dir, target);
    expect(v.hashesEqual).toBe(13);
    expect(v.keyHashesEqual).toBe(1);
    expect(v.target.revisions).toBe(14);
    expect(v.differences).toEqual(
      expect.arrayContaining([
        expect.stringMatching(new RegExp(`^revision ${ids[0]}#1: the model text differs`)),
        `revision ${ids[2]}#2: message differs`,
        `revision ${ids[3]}#3 is missing from the target`,
        `review change ${ids[4]}#5#1: note differs`,
        expect.stringMatching(/^key \S+: its salt, hash or parameters differ$/),
      ]),
    );
    expect(v.differences).toHaveLength(5);
  });

  it('names what is wrong: no library at --from, an unreachable --to, a missing argument', async () => {
    const empty = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-migrate-empty-'));
    try {
      const noLib = await cli(['--from', empty, '--to', url]);
      expect(noLib.code).toBe(1);
      expect(noLib.err).toContain(`there is no library to copy at ${path.join(empty, DATABASE_FILE)}`);
      expect(fs.readdirSync(empty)).toEqual([]); // nothing made there
    } finally {
      fs.rmSync(empty, { recursive: true, force: true });
    }
    const closed = await freePort(); // free a moment ago: nothing listens there
    const down = `postgres://postgres@127.0.0.1:${closed}/x`;
    const noServer = await cli(['--from', dir, '--to', down]);
    expect(noServer.code).toBe(1);
    expect(noServer.err).toContain(`cannot connect to the PostgreSQL server at 127.0.0.1:${closed}, database x`);
    const usage = await cli(['--from', dir]);
    expect(usage.code).toBe(1);
    expect(usage.err).toMatch(/name both the source.*\nusage: shaftnet migrate/s);
  });
});
