/**
 * The library's personal keys and review changes (server/store/), the review
 * rules as a table, and the upgrade of a library made before them. The rules
 * are this project's contract (server/http/API.md "Review"); four eyes is
 * common practice, no source.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { ReviewEntry, ReviewTarget } from '../../shared-types/library.js';
import { makeKey, parseKey, secretMatches } from '../../server/store/keys.js';
import { NEXT_STATES, reviewRefusal, roleMay } from '../../server/store/review-rules.js';
import { DATABASE_FILE, openSqliteStore, type SqliteStore } from '../../server/store/sqlite-store.js';
import { KeyNameTakenError, ModelNotFoundError, ReviewRefusedError, ReviewStaleError, RevisionNotFoundError } from '../../server/store/store.js';

const input = (name: string, author = 'ann') => ({ model: { format: 'shaftnet/1', name }, name, author, message: 'm' });

let dir: string;
let store: SqliteStore;
beforeEach(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-review-store-'));
  store = openSqliteStore(dir);
});
afterEach(() => {
  store.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('review rules', () => {
  const saved: ReviewEntry = { state: 'prepared', by: 'Ann', at: '2026-01-01T00:00:00.000Z', note: null };
  const checked: ReviewEntry = { state: 'checked', by: 'Bob', at: '2026-01-01T01:00:00.000Z', note: null };

  it('the transitions: prepared → checked | returned, checked → approved | returned, approved and returned final', () => {
    expect(NEXT_STATES).toEqual({ prepared: ['checked', 'returned'], checked: ['approved', 'returned'], approved: [], returned: [] });
    const targets: ReviewTarget[] = ['checked', 'approved', 'returned'];
    const after = (e: ReviewEntry['state']): ReviewEntry[] => (e === 'prepared' ? [saved] : e === 'checked' ? [saved, checked] : [saved, checked, { ...checked, state: e, by: 'Dan' }]);
    const allowed = (['prepared', 'checked', 'approved', 'returned'] as const).map((s) => [s, targets.filter((t) => reviewRefusal(after(s), t, 'Zed') === null)]);
    expect(allowed).toEqual([
      ['prepared', ['checked', 'returned']],
      ['checked', ['approved', 'returned']],
      ['approved', []],
      ['returned', []],
    ]);
  });

  it('four eyes: the author never (the checker may also approve); names compared without case or spaces', () => {
    expect(reviewRefusal([saved], 'checked', 'ann')?.kind).toBe('four-eyes');
    expect(reviewRefusal([saved], 'returned', ' ANN ')?.kind).toBe('four-eyes');
    expect(reviewRefusal([saved, checked], 'approved', 'bob')).toBeNull();
    expect(reviewRefusal([saved, checked], 'approved', 'Ann')?.kind).toBe('four-eyes');
    expect(reviewRefusal([saved, checked], 'returned', 'Bob')).toBeNull();
    expect(reviewRefusal([saved, checked], 'approved', 'Dan')).toBeNull();
  });

  it('roles: checker = editor + check and return; approver = checker + approve', () => {
    const table = (['editor', 'checker', 'approver'] as const).map((r) => [r, (['checked', 'returned', 'approved'] as const).filter((t) => roleMay(r, t))]);
    expect(table).toEqual([
      ['editor', []],
      ['checker', ['checked', 'returned']],
      ['approver', ['checked', 'returned', 'approved']],
    ]);
  });
});

describe('review changes in the library', () => {
  it('records each change with who, when and the note, in the revision and the lists', () => {
    const { id } = store.create(input('A'));
    const r = store.review({ id, revision: 1, state: 'checked', by: 'Bob', note: 'ok' });
    expect(r.history.map((h) => [h.state, h.by, h.note])).toEqual([
      ['prepared', 'ann', null],
      ['checked', 'Bob', 'ok'],
    ]);
    store.review({ id, revision: 1, state: 'approved', by: 'Dan', note: '  ' });
    const got = store.get(id, 1)!;
    expect(got.review.state).toBe('approved');
    expect(got.review.history[2]).toMatchObject({ state: 'approved', by: 'Dan', note: null });
    expect(store.list({ archived: false })[0].reviewState).toBe('approved');
    expect(store.revisions(id)![0].reviewState).toBe('approved');
  });

  it('refuses: unknown model or revision, a stale revision, a state that cannot follow, four eyes; nothing is recorded', () => {
    const { id } = store.create(input('A'));
    expect(() => store.review({ id: 'nope', revision: 1, state: 'checked', by: 'Bob', note: null })).toThrow(ModelNotFoundError);
    expect(() => store.review({ id, revision: 2, state: 'checked', by: 'Bob', note: null })).toThrow(RevisionNotFoundError);
    store.save(id, 1, input('A2'));
    const stale = (() => {
      try {
        store.review({ id, revision: 1, state: 'checked', by: 'Bob', note: null });
      } catch (e) {
        return e;
      }
    })();
    expect(stale).toBeInstanceOf(ReviewStaleError);
    expect((stale as ReviewStaleError).currentRevision).toBe(2);
    expect(() => store.review({ id, revision: 2, state: 'approved', by: 'Dan', note: null })).toThrow(ReviewRefusedError);
    expect(() => store.review({ id, revision: 2, state: 'checked', by: 'ANN', note: null })).toThrow(/authored/);
    expect(store.get(id, 1)!.review.history).toHaveLength(1);
    expect(store.get(id, 2)!.review.history).toHaveLength(1);
  });
});

describe('personal keys in the library', () => {
  it('stores only the hash; lists, finds and revokes by id or name; a live name is unique', async () => {
    const { key, record } = await makeKey('Ann Lee', 'checker');
    expect(store.hasKeys()).toBe(false);
    expect(store.addKey(record)).toEqual({ id: record.id, name: 'Ann Lee', role: 'checker', created: record.created, revoked: null });
    expect(store.hasKeys()).toBe(true);
    const parsed = parseKey(key)!;
    expect(parsed.id).toBe(record.id);
    const stored = store.keyRecord(record.id)!;
    expect(stored.hash).not.toContain(parsed.secret);
    expect(await secretMatches(parsed.secret, stored)).toBe(true);
    expect(await secretMatches(parsed.secret.slice(0, -1) + (parsed.secret.endsWith('A') ? 'B' : 'A'), stored)).toBe(false);
    // The whole file holds no secret.
    store.close();
    const bytes = fs.readFileSync(path.join(dir, DATABASE_FILE)).toString('latin1') + (fs.existsSync(path.join(dir, DATABASE_FILE + '-wal')) ? fs.readFileSync(path.join(dir, DATABASE_FILE + '-wal')).toString('latin1') : '');
    expect(bytes).not.toContain(parsed.secret);
    store = openSqliteStore(dir);

    const other = await makeKey('ann lee', 'editor');
    expect(() => store.addKey(other.record)).toThrow(KeyNameTakenError);
    const revoked = store.revokeKey('ANN LEE', '2026-12-02T08:00:00.000Z');
    expect(revoked).toMatchObject({ id: record.id, revoked: '2026-12-02T08:00:00.000Z' });
    expect(store.revokeKey('Ann Lee', '2026-12-02T09:00:00.000Z')).toBeUndefined(); // by name: live keys only
    expect(store.revokeKey(record.id, '2026-12-02T09:00:00.000Z')?.revoked).toBe('2026-12-02T08:00:00.000Z'); // keeps its time
    store.addKey(other.record); // the name is free again
    expect(store.keys().map((k) => [k.name, k.revoked === null])).toEqual([
      ['Ann Lee', false],
      ['ann lee', true],
    ]);
    expect(store.hasKeys()).toBe(true);
  });
});

describe('a library made before review', () => {
  it('opens, gains the new tables and schema 2, and reads its revisions as prepared', () => {
    store.close();
    const old = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-v1-'));
    const file = path.join(old, DATABASE_FILE);
    const db = new Database(file);
    db.exec(`CREATE TABLE models (id TEXT PRIMARY KEY, name TEXT NOT NULL, created TEXT NOT NULL, updated TEXT NOT NULL, author TEXT NOT NULL, revision INTEGER NOT NULL, archived INTEGER NOT NULL DEFAULT 0);
      CREATE TABLE revisions (model_id TEXT NOT NULL REFERENCES models(id), revision INTEGER NOT NULL, model TEXT NOT NULL, author TEXT NOT NULL, message TEXT NOT NULL, created TEXT NOT NULL, PRIMARY KEY (model_id, revision)) WITHOUT ROWID;
      CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
      INSERT INTO models VALUES ('m1', 'Old', '2025-01-01T00:00:00.000Z', '2025-01-01T00:00:00.000Z', 'olga', 1, 0);
      INSERT INTO revisions VALUES ('m1', 1, '{"format":"shaftnet/1","name":"Old"}', 'olga', 'first', '2025-01-01T00:00:00.000Z');`);
    db.pragma('user_version = 1');
    db.pragma('application_id = 1399344756'); // 0x53684e74
    db.close();
    store = openSqliteStore(old);
    try {
      expect(store.get('m1')!.review).toEqual({ state: 'prepared', history: [{ state: 'prepared', by: 'olga', at: '2025-01-01T00:00:00.000Z', note: null }] });
      expect(store.list({ archived: false })[0].reviewState).toBe('prepared');
      expect(store.review({ id: 'm1', revision: 1, state: 'checked', by: 'Bob', note: null }).state).toBe('checked');
      expect((store as unknown as { db: Database.Database }).db.pragma('user_version', { simple: true })).toBe(2);
    } finally {
      store.close();
      store = openSqliteStore(dir);
      fs.rmSync(old, { recursive: true, force: true });
    }
  });
});
