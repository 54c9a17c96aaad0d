/**
 * A full disk: a save that cannot be written is refused (StoreFullError in the
 * store, 507 SN_DISK_FULL over HTTP), leaves the library exactly as it was, and
 * the same save succeeds once space returns, on the same connection, with no
 * restart.
 *
 * How the disk is filled, in order of preference:
 * - "tmpfs": the library lives on a 1 MiB tmpfs mounted for the test, filled to
 *   the last byte by a filler file; SQLite's writes then fail with ENOSPC, which
 *   it reports as SQLITE_FULL. Space returns when the filler is deleted.
 * - "max_page_count" (where the container refuses mount): `PRAGMA max_page_count`
 *   is lowered on the live connection to the pages the file has, so the next page
 *   SQLite needs fails with its own SQLITE_FULL, through the same code path; space
 *   returns when the limit is raised back.
 * Each test's title names the mode it ran in. SHAFTNET_TEST_NO_MOUNT=1 forces the
 * second mode where mount works, to try it.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from '../../server/http/app.js';
import { openSqliteStore, type SqliteStore } from '../../server/store/sqlite-store.js';
import { StoreFullError } from '../../server/store/store.js';
import { cantilever, errorOf } from '../http/helpers.js';
import { fillDisk, freeBytes, mountTmpfs, unmount } from './mounts.js';

type Db = { pragma(s: string, o?: object): unknown; prepare(s: string): { get(...a: unknown[]): unknown } };
const dbOf = (store: SqliteStore) => (store as unknown as { db: Db }).db;

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-full-'));
const mode: 'tmpfs' | 'max_page_count' = process.env.SHAFTNET_TEST_NO_MOUNT !== '1' && mountTmpfs(root, '1m') ? 'tmpfs' : 'max_page_count';
afterAll(() => {
  if (mode === 'tmpfs') unmount(root);
  fs.rmSync(root, { recursive: true, force: true });
});

/** Fills the disk under `store` (or its page budget); returns the function that gives the space back. */
function exhaust(store: SqliteStore, dir: string): () => void {
  const db = dbOf(store);
  if (mode === 'tmpfs') {
    // Fold the WAL into the file and cut it to 0 bytes, so a new save needs new blocks.
    db.pragma('wal_checkpoint(TRUNCATE)');
    const filler = path.join(dir, 'filler');
    fillDisk(filler);
    expect(freeBytes(dir)).toBe(0);
    return () => fs.rmSync(filler);
  }
  const before = db.pragma('max_page_count', { simple: true }) as number;
  const pages = db.pragma('page_count', { simple: true }) as number;
  db.pragma(`max_page_count = ${pages}`);
  return () => db.pragma(`max_page_count = ${before}`);
}

/** Text that no page already holds room for: 20,000 characters (the longest `notes` the format allows). */
const bigNotes = (seed: string) => Array.from({ length: 2000 }, (_, i) => `${seed}${i}`.padEnd(10, '.')).join('').slice(0, 20000);

let dirCount = 0;
function libraryDir(): string {
  const dir = path.join(root, `lib${dirCount++}`);
  fs.mkdirSync(dir);
  return dir;
}

describe(`full disk (${mode})`, () => {
  let dir: string;
  let store: SqliteStore;
  beforeAll(() => {
    dir = libraryDir();
    store = openSqliteStore(dir);
  });
  afterAll(() => store.close());

  it(`store: create and save throw StoreFullError, nothing is written, and both succeed once space returns (${mode})`, () => {
    const input = (name: string, notes = 'short') => ({ model: { format: 'shaftnet/1', name, notes }, name, author: 'ann', message: name });
    const first = store.create(input('kept'));
    const restore = exhaust(store, dir);
    if (mode === 'tmpfs') {
      // Archiving rewrites a page the file already has: only a truly full disk (no WAL room) refuses it.
      expect(() => store.setArchived(first.id, true)).toThrow(StoreFullError);
      expect(store.get(first.id)?.archived).toBe(false);
    }
    let err: unknown;
    try {
      store.save(first.id, 1, input('big revision', bigNotes('r')));
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(StoreFullError);
    expect((err as StoreFullError).message).toContain(path.join(dir, 'shaftnet.sqlite'));
    expect(() => store.create(input('big new model', bigNotes('c')))).toThrow(StoreFullError);

    // The library is as it was: one model at revision 1, no row of the refused saves.
    const db = dbOf(store);
    expect(store.count()).toBe(1);
    expect(store.get(first.id)).toMatchObject({ revision: 1, message: 'kept' });
    expect(store.revisions(first.id)).toHaveLength(1);
    expect(db.prepare('SELECT COUNT(*) AS n FROM revisions').get()).toEqual({ n: 1 });
    expect(db.pragma('quick_check', { simple: true })).toBe('ok');

    restore();
    expect(store.save(first.id, 1, input('big revision', bigNotes('r')))).toEqual({ id: first.id, revision: 2 });
    const made = store.create(input('big new model', bigNotes('c')));
    expect(made.revision).toBe(1);
    expect((store.get(first.id)?.model as { notes: string }).notes).toBe(bigNotes('r'));

    // and a fresh open (quick_check included) sees exactly the saves that succeeded
    const again = openSqliteStore(dir);
    try {
      expect(again.count()).toBe(2);
      expect(again.revisions(first.id)?.map((r) => r.message)).toEqual(['big revision', 'kept']);
    } finally {
      again.close();
    }
  });
});

describe(`full disk over HTTP (${mode})`, () => {
  it(`PUT and POST answer 507 SN_DISK_FULL, the library stays intact, and the same requests succeed once space returns (${mode})`, async () => {
    const dir = libraryDir();
    const store = openSqliteStore(dir);
    const app = await buildApp({ store, seedDemos: false, rateLimitPerMinute: 0 });
    try {
      const json = { 'content-type': 'application/json' };
      const created = await app.inject({ method: 'POST', url: '/api/models', headers: json, payload: { model: cantilever(1), author: 'ann', message: 'first' } });
      expect(created.statusCode).toBe(201);
      const { id } = created.json() as { id: string };
      const big = { ...cantilever(3), notes: bigNotes('h') };
      const put = { method: 'PUT' as const, url: `/api/models/${id}`, headers: json, payload: { model: big, baseRevision: 1, author: 'bob', message: 'second' } };
      const post = { method: 'POST' as const, url: '/api/models', headers: json, payload: { model: big, author: 'cy', message: 'another' } };

      const restore = exhaust(store, dir);
      for (const req of [put, post]) {
        const r = await app.inject(req);
        expect(r.statusCode, req.method).toBe(507);
        const e = errorOf(r.body).error;
        expect(e.code).toBe('SN_DISK_FULL');
        expect(e.message).toMatch(/nothing was saved: the library's disk is full/);
        expect(r.body).not.toContain(dir); // no server path in the answer
      }
      const latest = await app.inject({ method: 'GET', url: `/api/models/${id}` });
      expect(latest.statusCode).toBe(200);
      expect(latest.json()).toMatchObject({ revision: 1, message: 'first', model: cantilever(1) });
      expect((await app.inject({ method: 'GET', url: '/api/models' })).json().models).toHaveLength(1);

      restore();
      const saved = await app.inject(put);
      expect(saved.statusCode).toBe(200);
      expect(saved.json()).toEqual({ id, revision: 2 });
      const posted = await app.inject(post);
      expect(posted.statusCode).toBe(201);
      expect((await app.inject({ method: 'GET', url: `/api/models/${id}` })).json().model.notes).toBe(bigNotes('h'));
    } finally {
      await app.close();
      store.close();
    }
  });
});
