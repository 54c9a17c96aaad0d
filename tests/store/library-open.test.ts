/**
 * Opening the library: a damaged, empty or foreign file is refused before
 * anything reads or writes it, and a data directory that cannot hold a library
 * is named with the reason. Every damaged file is written in a temp directory
 * from a real library; each message must name the file and say how to restore.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_FILE, LibraryDamagedError, LibraryOpenError, openSqliteStore, type SqliteStore } from '../../server/store/sqlite-store.js';
import { mountTmpfs, unmount } from './mounts.js';

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-open-'));
// Root writes through chmod, so read-only needs a read-only mount; where mount is refused that one case is not run.
const ro = path.join(root, 'ro');
fs.mkdirSync(ro);
const mounted = mountTmpfs(ro, '64k', ['ro']);
afterAll(() => {
  if (mounted) unmount(ro);
  fs.rmSync(root, { recursive: true, force: true });
});

let n = 0;
const freshDir = () => {
  const d = path.join(root, `d${n++}`);
  fs.mkdirSync(d);
  return d;
};

/** What openSqliteStore threw (and closes the store if it did not throw). */
function openError(dataDir: string): LibraryOpenError {
  let store;
  try {
    store = openSqliteStore(dataDir);
  } catch (err) {
    expect(err).toBeInstanceOf(LibraryOpenError);
    return err as LibraryOpenError;
  }
  store.close();
  throw new Error(`${dataDir} was opened, not refused`);
}

/** A closed library of 60 models (each with a 1.5 kB note), so its tables span leaf and interior pages. */
let good: Buffer;
let btreePages: Array<{ name: string; pageno: number; pagetype: string }>;
let pageSize: number;
beforeAll(() => {
  const dir = freshDir();
  const store = openSqliteStore(dir);
  for (let i = 0; i < 60; i++) {
    const name = `model ${i}`;
    store.create({ model: { format: 'shaftnet/1', name, notes: `${i} `.repeat(500) }, name, author: 'ann', message: `m${i}` });
  }
  store.close(); // checkpoints: the whole library is in the one file
  const file = path.join(dir, DATABASE_FILE);
  good = fs.readFileSync(file);
  const db = new Database(file, { readonly: true });
  pageSize = db.pragma('page_size', { simple: true }) as number;
  btreePages = db.prepare("SELECT name, pageno, pagetype FROM dbstat WHERE pagetype IN ('internal', 'leaf')").all() as typeof btreePages;
  expect(db.pragma('freelist_count', { simple: true })).toBe(0); // every page is in use
  db.close();
});

/** A data directory holding `bytes` as the library file. */
function libraryOf(bytes: Buffer): { dir: string; file: string } {
  const dir = freshDir();
  const file = path.join(dir, DATABASE_FILE);
  fs.writeFileSync(file, bytes);
  return { dir, file };
}

function expectRestoreAdvice(message: string, file: string): void {
  expect(message).toContain(file);
  expect(message).toContain(`copy your last backup to ${file}`);
  expect(message).toMatch(/move .* aside/);
}

describe('a damaged library is refused', () => {
  it('the intact copy opens (the control for every case below)', () => {
    const { dir } = libraryOf(good);
    const store = openSqliteStore(dir);
    expect(store.count()).toBe(60);
    store.close();
    expect(btreePages.some((p) => p.pagetype === 'internal')).toBe(true);
    expect(btreePages.length).toBeGreaterThan(10);
  });

  it('a file of random bytes', () => {
    const bytes = Buffer.alloc(good.length);
    for (let i = 0, x = 12345; i < bytes.length; i++) bytes[i] = (x = (x * 1103515245 + 12345) >>> 0) >>> 24; // seeded LCG
    const { dir, file } = libraryOf(bytes);
    const e = openError(dir);
    expect(e.message).toMatch(/is damaged \(its first page does not begin as a SQLite database does/);
    expectRestoreAdvice(e.message, file);
    expect(fs.readFileSync(file).equals(bytes)).toBe(true); // not touched
  });

  it('the first page zeroed', () => {
    const bytes = Buffer.from(good);
    bytes.fill(0, 0, pageSize);
    const { dir, file } = libraryOf(bytes);
    const e = openError(dir);
    expect(e.message).toContain('is damaged');
    expectRestoreAdvice(e.message, file);
  });

  it('every b-tree page after the first, zeroed one at a time, is found by quick_check', () => {
    const missed: number[] = [];
    for (const p of btreePages.filter((q) => q.pageno > 1)) {
      const bytes = Buffer.from(good);
      bytes.fill(0, (p.pageno - 1) * pageSize, p.pageno * pageSize);
      const { dir, file } = libraryOf(bytes);
      const e = openError(dir);
      if (!/is damaged \(/.test(e.message)) missed.push(p.pageno);
      expectRestoreAdvice(e.message, file);
      expect(fs.readFileSync(file).equals(bytes), `page ${p.pageno}: the file was changed`).toBe(true);
    }
    expect(missed).toEqual([]);
  });

  it('random bytes over a table page and over an index page (seeded)', () => {
    const table = btreePages.find((p) => p.name === 'revisions' && p.pagetype === 'leaf')!;
    const index = btreePages.find((p) => p.name === 'models_updated')!;
    for (const [p, seed] of [
      [table, 7],
      [index, 11],
      [table, 99],
    ] as const) {
      const bytes = Buffer.from(good);
      for (let i = (p.pageno - 1) * pageSize, x = seed; i < p.pageno * pageSize; i++) bytes[i] = (x = (x * 1103515245 + 12345) >>> 0) >>> 24;
      const { dir, file } = libraryOf(bytes);
      const e = openError(dir);
      expect(e.message, `page ${p.pageno} (${p.name}), seed ${seed}`).toContain('is damaged (');
      expectRestoreAdvice(e.message, file);
    }
  });

  it('a 0-byte file: not written by Shaftnet, named, and left as it is', () => {
    const { dir, file } = libraryOf(Buffer.alloc(0));
    const e = openError(dir);
    expect(e.message).toBe(
      `the library file ${file} is empty (0 bytes): it was not written by Shaftnet, which never leaves its library empty, ` +
        `so Shaftnet will not use it. Move it aside (or delete it) to start a new library there, or copy your last backup to ${file}.`,
    );
    expect(fs.statSync(file).size).toBe(0);
  });

  it("another program's SQLite database is not written into", () => {
    const dir = freshDir();
    const file = path.join(dir, DATABASE_FILE);
    const other = new Database(file);
    other.exec('CREATE TABLE invoices (n INTEGER)');
    other.close();
    const before = fs.readFileSync(file);
    expect(openError(dir).message).toBe(
      `${file} is a SQLite database written by another program, not a Shaftnet library; Shaftnet will not change it. Move it aside to start a new library there, or choose another --data.`,
    );
    expect(fs.readFileSync(file).equals(before)).toBe(true);
  });

  it('a library of a newer schema is refused by name', () => {
    const { dir, file } = libraryOf(good);
    const db = new Database(file);
    db.pragma('user_version = 99');
    db.close();
    expect(openError(dir).message).toMatch(new RegExp(`^the library ${file.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')} was written by a newer Shaftnet \\(schema 99`));
  });
});

describe('the data directory', () => {
  it('is created when missing (its parent exists), with a library that passes the check', () => {
    const dir = path.join(freshDir(), 'new');
    const store = openSqliteStore(dir);
    store.close();
    expect(fs.statSync(path.join(dir, DATABASE_FILE)).size).toBeGreaterThan(0);
    expect(fs.readdirSync(dir).filter((f) => f.includes('.new-'))).toEqual([]); // no temporary file left
    const again = openSqliteStore(dir);
    expect(again.count()).toBe(0);
    again.close();
  });

  it('a log (-wal) left without its library is not replayed into a new one', () => {
    const dir = freshDir();
    const file = path.join(dir, DATABASE_FILE);
    fs.writeFileSync(file + '-wal', Buffer.alloc(4128, 1));
    expect(openError(dir).message).toBe(
      `${file}-wal is there but the library ${file} is not: the library was moved or deleted after a server was stopped abruptly, ` +
        `and this log holds its latest saves. Put the library back beside it, or move ${file}-wal (and ${file}-shm) aside to start a new library.`,
    );
    expect(fs.existsSync(file)).toBe(false);
  });

  it('a missing parent is named, and nothing is created', () => {
    const parent = path.join(freshDir(), 'not-mounted');
    const dir = path.join(parent, 'shaftnet');
    expect(openError(dir).message).toBe(
      `the data directory ${dir} does not exist, and neither does its parent ${parent}: Shaftnet creates only the data directory itself. Create ${parent} (or mount the drive it is on), or choose another --data.`,
    );
    expect(fs.existsSync(parent)).toBe(false);
  });

  it('a data path that is a file is named', () => {
    const file = path.join(freshDir(), 'notes.txt');
    fs.writeFileSync(file, 'x');
    expect(openError(file).message).toBe(
      `the data path ${file} is a file, not a directory: --data names the directory that holds the library file ${DATABASE_FILE}. Choose another --data.`,
    );
  });

  it('a data path under a regular file names that file', () => {
    const file = path.join(freshDir(), 'notes.txt');
    fs.writeFileSync(file, 'x');
    for (const dir of [path.join(file, 'data'), path.join(file, 'a', 'b')]) {
      expect(openError(dir).message).toBe(`the data directory ${dir} cannot exist: ${file} is a file, not a directory. Choose another --data.`);
    }
  });

  it('a directory where the library file belongs is named', () => {
    const dir = freshDir();
    fs.mkdirSync(path.join(dir, DATABASE_FILE));
    expect(openError(dir).message).toMatch(/shaftnet\.sqlite is a directory, but it is where the library file belongs/);
  });

  describe('read-only (a tmpfs mounted read-only)', () => {
    it.runIf(mounted)('a read-only data directory, existing or to be made in it, is named with the reason', () => {
      expect(openError(ro).message).toBe(
        `the data directory ${ro} is not writable (read-only file system, EROFS): Shaftnet writes the library ${DATABASE_FILE} and its -wal and -shm files there. Choose another --data, or make ${ro} writable.`,
      );
      const inside = path.join(ro, 'data');
      expect(openError(inside).message).toBe(`cannot create the data directory ${inside} in ${ro}: read-only file system, EROFS`);
    });
  });
});

describe('damage met while the server runs', () => {
  /** A library of 12 models, each with a 6 kB note (so its text runs onto overflow pages), open in `store`. */
  function openLibrary() {
    const dir = freshDir();
    const first = openSqliteStore(dir);
    const ids = Array.from({ length: 12 }, (_, i) => first.create({ model: { format: 'shaftnet/1', name: `m${i}`, notes: `${i}`.repeat(6000) }, name: `m${i}`, author: 'a', message: '' }).id);
    first.close();
    const file = path.join(dir, DATABASE_FILE);
    const raw = new Database(file, { readonly: true });
    const pages = raw.prepare("SELECT pageno, pagetype FROM dbstat WHERE name = 'revisions'").all() as Array<{ pageno: number; pagetype: string }>;
    const size = raw.pragma('page_size', { simple: true }) as number;
    raw.close();
    return { dir, file, ids, pages, size, store: openSqliteStore(dir) };
  }

  /** Another connection commits, so the store's page cache is dropped and it reads the file again. */
  function touch(file: string) {
    const other = new Database(file);
    other.prepare("INSERT INTO meta (key, value) VALUES ('touched', 'yes')").run();
    other.close();
  }

  function readAll(store: SqliteStore, ids: string[]): unknown[] {
    const failures: unknown[] = [];
    for (const id of ids) {
      try {
        store.get(id);
      } catch (err) {
        failures.push(err);
      }
    }
    return failures;
  }

  it('a table page zeroed under a running store: reads fail, and every later write is refused', () => {
    const lib = openLibrary();
    try {
      const leaf = lib.pages.find((p) => p.pagetype === 'leaf')!;
      const fd = fs.openSync(lib.file, 'r+');
      fs.writeSync(fd, Buffer.alloc(lib.size), 0, lib.size, (leaf.pageno - 1) * lib.size);
      fs.closeSync(fd);
      touch(lib.file);
      const failures = readAll(lib.store, lib.ids);
      expect(failures.length).toBeGreaterThan(0);
      expect((failures[0] as { code: string }).code).toMatch(/^SQLITE_CORRUPT/);
      const save = () => lib.store.create({ model: { format: 'shaftnet/1', name: 'x' }, name: 'x', author: 'a', message: '' });
      expect(save).toThrow(LibraryDamagedError);
      expect(save).toThrow(`the library ${lib.file} was found damaged while the server ran (database disk image is malformed); this server saves nothing more into it.`);
      expect(() => lib.store.setArchived(lib.ids[0], true)).toThrow(LibraryDamagedError);
    } finally {
      lib.store.close();
    }
  });

  it('text changed inside a stored model passes quick_check (SQLite keeps no checksum of it), but reading it stops every later write', () => {
    const lib = openLibrary();
    lib.store.close();
    const overflow = lib.pages.find((p) => p.pagetype === 'overflow')!;
    const fd = fs.openSync(lib.file, 'r+');
    // Past the page's 4-byte link to the next overflow page: only stored text changes.
    fs.writeSync(fd, Buffer.alloc(64), 0, 64, (overflow.pageno - 1) * lib.size + 100);
    fs.closeSync(fd);
    const store = openSqliteStore(lib.dir); // the structure is whole: the check passes
    try {
      const failures = readAll(store, lib.ids);
      expect(failures).toHaveLength(1);
      expect(failures[0]).toBeInstanceOf(SyntaxError); // 64 NUL characters inside a JSON string
      expect(() => store.save(lib.ids[0], 1, { model: { format: 'shaftnet/1', name: 'x' }, name: 'x', author: 'a', message: '' })).toThrow(
        /was found damaged while the server ran \(revision 1 of model [a-z2-9]{16} is no longer the JSON that was saved\)/,
      );
    } finally {
      store.close();
    }
  });
});
