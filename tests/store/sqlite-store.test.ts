import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { DATABASE_FILE, newModelId, openSqliteStore, type SqliteStore } from '../../server/store/sqlite-store.js';
import { ModelNotFoundError, StaleRevisionError } from '../../server/store/store.js';

const model = (name: string, extra: Record<string, unknown> = {}) => ({ format: 'shaftnet/1', name, ...extra });
const input = (name: string, author = 'ann', message = 'm') => ({ model: model(name), name, author, message });

let dir: string;
let store: SqliteStore;

beforeEach(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-store-'));
  store = openSqliteStore(dir);
});
afterEach(() => {
  store.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('SqliteStore', () => {
  it('creates the database file in WAL mode with synchronous=FULL', () => {
    expect(fs.existsSync(path.join(dir, DATABASE_FILE))).toBe(true);
    const db = (store as unknown as { db: { pragma(s: string, o: object): unknown } }).db;
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    // 2 = FULL (SQLite documents the values 0 OFF, 1 NORMAL, 2 FULL, 3 EXTRA)
    expect(db.pragma('synchronous', { simple: true })).toBe(2);
  });

  it('creates at revision 1 and reads the model back exactly', () => {
    const m = model('Shaft A', { notes: 'ü "quoted" \\ back', shafts: [{ id: 's', segments: [{ length: '40 mm' }] }] });
    const { id, revision } = store.create({ model: m, name: 'Shaft A', author: 'ann', message: 'first' });
    expect(revision).toBe(1);
    expect(id).toMatch(/^[a-z2-9]{16}$/);
    const got = store.get(id);
    expect(got).toMatchObject({ id, revision: 1, author: 'ann', message: 'first', archived: false });
    expect(got?.model).toEqual(m);
    expect(Date.parse(got!.created)).toBeGreaterThan(Date.parse('2020-01-01'));
  });

  it('saves revisions on the latest base and keeps every old one unchanged', () => {
    const { id } = store.create(input('v1'));
    expect(store.save(id, 1, input('v2', 'bob', 'second'))).toEqual({ id, revision: 2 });
    expect(store.save(id, 2, input('v3', 'cy', 'third'))).toEqual({ id, revision: 3 });
    expect((store.get(id, 1)?.model as { name: string }).name).toBe('v1');
    expect((store.get(id, 2)?.model as { name: string }).name).toBe('v2');
    expect(store.get(id)?.revision).toBe(3);
    expect(store.revisions(id)?.map((r) => [r.revision, r.author, r.message])).toEqual([
      [3, 'cy', 'third'],
      [2, 'bob', 'second'],
      [1, 'ann', 'm'],
    ]);
    expect(store.get(id, 4)).toBeUndefined();
  });

  it('refuses a stale base revision and names the current one', () => {
    const { id } = store.create(input('v1'));
    store.save(id, 1, input('v2'));
    let caught: unknown;
    try {
      store.save(id, 1, input('other'));
    } catch (err) {
      caught = err;
    }
    expect(caught).toBeInstanceOf(StaleRevisionError);
    expect((caught as StaleRevisionError).currentRevision).toBe(2);
    expect(store.revisions(id)).toHaveLength(2);
    expect(() => store.save('nope', 1, input('x'))).toThrow(ModelNotFoundError);
  });

  it('two connections to one file: exactly one of two saves on the same base wins', () => {
    const other = openSqliteStore(dir);
    try {
      const { id } = store.create(input('v1'));
      const results = [store, other].map((s) => {
        try {
          return s.save(id, 1, input('mine'));
        } catch (err) {
          return err;
        }
      });
      expect(results.filter((r) => r instanceof StaleRevisionError)).toHaveLength(1);
      expect(results.filter((r) => !(r instanceof Error))).toEqual([{ id, revision: 2 }]);
      expect(other.revisions(id)).toHaveLength(2);
    } finally {
      other.close();
    }
  });

  it('lists active or archived models, newest first, and searches names case-insensitively', async () => {
    const a = store.create(input('Mixer drive'));
    await new Promise((r) => setTimeout(r, 5));
    const b = store.create(input('Pump shaft 50%_off'));
    await new Promise((r) => setTimeout(r, 5));
    store.save(a.id, 1, input('Mixer drive v2', 'dee'));
    expect(store.list({ archived: false }).map((m) => m.id)).toEqual([a.id, b.id]);
    expect(store.list({ archived: false })[0]).toMatchObject({ name: 'Mixer drive v2', author: 'dee', revision: 2, archived: false });
    expect(store.list({ q: 'MIXER', archived: false }).map((m) => m.id)).toEqual([a.id]);
    // % and _ are searched literally, not as LIKE wildcards
    expect(store.list({ q: '50%_', archived: false }).map((m) => m.id)).toEqual([b.id]);
    expect(store.list({ q: '5%f', archived: false })).toEqual([]);
    expect(store.setArchived(b.id, true)).toEqual({ id: b.id, archived: true });
    expect(store.list({ archived: false }).map((m) => m.id)).toEqual([a.id]);
    expect(store.list({ archived: true }).map((m) => m.id)).toEqual([b.id]);
    expect(store.get(b.id)?.archived).toBe(true);
    expect(store.setArchived(b.id, false)).toEqual({ id: b.id, archived: false });
    expect(store.list({ archived: true })).toEqual([]);
    expect(store.setArchived('nope', true)).toBeUndefined();
    expect(store.count()).toBe(2);
  });

  it('keeps everything across a reopen, and a meta flag too', () => {
    const { id } = store.create(input('persist'));
    store.save(id, 1, input('persist 2'));
    store.setMeta('demosSeeded', 'yes');
    store.close();
    store = openSqliteStore(dir);
    expect(store.get(id)?.revision).toBe(2);
    expect(store.getMeta('demosSeeded')).toBe('yes');
    expect(store.getMeta('other')).toBeUndefined();
  });

  it('seedOnce: creates into an empty library once, sets the flag, and never again', () => {
    const demos = [input('demo a'), input('demo b'), input('demo c')];
    expect(store.seedOnce('demosSeeded', demos)).toBe(3);
    expect(store.getMeta('demosSeeded')).toMatch(/^\d{4}-\d\d-\d\dT/);
    expect(store.list({ archived: false }).map((m) => m.name).sort()).toEqual(['demo a', 'demo b', 'demo c']);
    // archived demos are not seeded again, nor are they on a second connection
    for (const m of store.list({ archived: false })) store.setArchived(m.id, true);
    expect(store.seedOnce('demosSeeded', demos)).toBe(0);
    const other = openSqliteStore(dir);
    try {
      expect(other.seedOnce('demosSeeded', demos)).toBe(0);
    } finally {
      other.close();
    }
    expect(store.count()).toBe(3);
  });

  it('seedOnce: a library that already holds models gets the flag and no demo', () => {
    store.create(input('mine'));
    expect(store.seedOnce('demosSeeded', [input('demo a')])).toBe(0);
    expect(store.getMeta('demosSeeded')).toBeDefined();
    expect(store.count()).toBe(1);
  });

  it('seedOnce: all or none; a failure half-way leaves no model and no flag', () => {
    const bad = { model: { n: 1n }, name: 'cannot be written', author: 'x', message: '' }; // JSON.stringify throws on a BigInt
    expect(() => store.seedOnce('demosSeeded', [input('demo a'), bad])).toThrow(TypeError);
    expect(store.count()).toBe(0);
    expect(store.getMeta('demosSeeded')).toBeUndefined();
    expect(store.seedOnce('demosSeeded', [input('demo a')])).toBe(1);
  });

  it('makes ids without look-alike characters', () => {
    const ids = new Set(Array.from({ length: 2000 }, () => newModelId()));
    expect(ids.size).toBe(2000);
    for (const id of ids) expect(id).toMatch(/^[a-km-np-z2-9]{16}$/);
  });
});
