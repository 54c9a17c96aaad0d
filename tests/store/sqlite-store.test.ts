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

// What every store must do (create, save, stale bases, two connections on one library, listing,
// archive, meta, seedOnce, Unicode and large models) is held for SQLite and PostgreSQL alike by
// tests/store/contract.test.ts; here only what is SQLite's own.
describe('SqliteStore', () => {
  it('creates the database file in WAL mode with synchronous=FULL', () => {
    expect(fs.existsSync(path.join(dir, DATABASE_FILE))).toBe(true);
    const db = (store as unknown as { db: { pragma(s: string, o: object): unknown } }).db;
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    // 2 = FULL (SQLite documents the values 0 OFF, 1 NORMAL, 2 FULL, 3 EXTRA)
    expect(db.pragma('synchronous', { simple: true })).toBe(2);
  });

  it('makes ids without look-alike characters', () => {
    const ids = new Set(Array.from({ length: 2000 }, () => newModelId()));
    expect(ids.size).toBe(2000);
    for (const id of ids) expect(id).toMatch(/^[a-km-np-z2-9]{16}$/);
  });
});
