/**
 * The model library in one SQLite file (better-sqlite3).
 *
 * Durability: WAL journal with synchronous=FULL, so a save is on disk (the WAL
 * fsynced) before `create`/`save` return and the API acknowledges it. A crash
 * after that loses nothing; a crash before it loses only the unacknowledged
 * save. Saves run in IMMEDIATE transactions, so two writers (even two processes
 * on one file) can never both write revision n+1.
 *
 * Faults of the file (see `openSqliteStore`): a new library is built under a
 * temporary name and linked into place whole, so no process ever sees a
 * half-made one; an existing one is checked (`PRAGMA quick_check`) before it is
 * used, and a damaged, empty or foreign file is refused with a message that names
 * it and says how to restore a backup. A full disk makes a write throw
 * `StoreFullError` after a complete rollback; the next write tries again.
 */
import fs from 'node:fs';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import Database from 'better-sqlite3';
import type { ReviewEntry, ReviewState } from '../../shared-types/library.js';
import { currentState, samePerson } from './review-rules.js';
import { KEY_COLUMNS, STATE_OF, keyInfo, keyRecord, modelSummary, newKeyInfo, preparedEntry, reviewChange, type KeyRow, type ModelRowCommon, type ReviewRow } from './store-common.js';
import {
  KeyNameTakenError,
  ModelNotFoundError,
  ReviewStaleError,
  RevisionNotFoundError,
  StaleRevisionError,
  StoreFullError,
  type KeyInfo,
  type KeyRecord,
  type ListFilter,
  type ModelStore,
  type ModelSummary,
  type NewKey,
  type ReviewInput,
  type ReviewResult,
  type RevisionInfo,
  type SaveInput,
  type SaveResult,
  type StoredRevision,
} from './store.js';

/** File name of the database inside the data directory. */
export const DATABASE_FILE = 'shaftnet.sqlite';

/** 2: review changes and personal keys (an older server refuses the library rather than ignore its keys). */
const SCHEMA_VERSION = 2;

const SCHEMA = `
CREATE TABLE IF NOT EXISTS models (
  id        TEXT PRIMARY KEY,
  name      TEXT NOT NULL,
  created   TEXT NOT NULL,
  updated   TEXT NOT NULL,
  author    TEXT NOT NULL,
  revision  INTEGER NOT NULL,
  archived  INTEGER NOT NULL DEFAULT 0
);
CREATE TABLE IF NOT EXISTS revisions (
  model_id  TEXT NOT NULL REFERENCES models(id),
  revision  INTEGER NOT NULL,
  model     TEXT NOT NULL,
  author    TEXT NOT NULL,
  message   TEXT NOT NULL,
  created   TEXT NOT NULL,
  PRIMARY KEY (model_id, revision)
) WITHOUT ROWID;
CREATE INDEX IF NOT EXISTS models_updated ON models(archived, updated DESC);
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS reviews (
  model_id  TEXT NOT NULL,
  revision  INTEGER NOT NULL,
  seq       INTEGER NOT NULL,
  state     TEXT NOT NULL CHECK (state IN ('checked', 'approved', 'returned')),
  actor     TEXT NOT NULL,
  at        TEXT NOT NULL,
  note      TEXT,
  PRIMARY KEY (model_id, revision, seq),
  FOREIGN KEY (model_id, revision) REFERENCES revisions(model_id, revision)
) WITHOUT ROWID;
CREATE TABLE IF NOT EXISTS keys (
  id        TEXT PRIMARY KEY,
  name      TEXT NOT NULL,
  role      TEXT NOT NULL CHECK (role IN ('editor', 'checker', 'approver')),
  created   TEXT NOT NULL,
  revoked   TEXT,
  salt      TEXT NOT NULL,
  hash      TEXT NOT NULL,
  params    TEXT NOT NULL
);
`;

// 32 symbols without look-alikes (no l, o, 0, 1): ids read well in /m/:id links.
const ID_ALPHABET = 'abcdefghijkmnpqrstuvwxyz23456789';

/** A new random model id: 16 symbols, 80 bits. */
export function newModelId(): string {
  const bytes = randomBytes(16);
  let id = '';
  for (const b of bytes) id += ID_ALPHABET[b & 31];
  return id;
}

interface ModelRow extends ModelRowCommon {
  archived: number;
}

interface RevisionRow {
  revision: number;
  model: string;
  author: string;
  message: string;
  created: string;
  review_state?: ReviewState;
}

/**
 * `PRAGMA application_id` of a Shaftnet library ("ShNt" in ASCII): tells our
 * file from another program's SQLite database. Libraries made before it was set
 * carry 0 and are recognised by their tables.
 */
const APPLICATION_ID = 0x53684e74;

/** The 16 bytes every SQLite database file begins with. */
const SQLITE_MAGIC = Buffer.from('SQLite format 3\0', 'latin1');

/** Below this much free space (bytes) an I/O error on write is taken for a full disk. */
const LOW_SPACE_BYTES = 1024 * 1024;

/**
 * The library cannot be used: its directory cannot be made or written, or the
 * file is empty, damaged or not a Shaftnet library. The message names the path
 * and what to do; the server prints it and does not start.
 */
export class LibraryOpenError extends Error {
  constructor(
    message: string,
    /** The directory or file at fault. */
    readonly path: string,
  ) {
    super(message);
    this.name = 'LibraryOpenError';
  }
}

/**
 * Opens (creating if needed) the library in `dataDir`; `':memory:'` for a throwaway one.
 *
 * The directory is created if it is missing, but not its parents: a missing parent
 * is more often a typing error or a drive that is not mounted than a wish. An
 * existing library must pass `PRAGMA quick_check` before anything reads or
 * writes it. quick_check walks every page of every table and index (b-tree
 * structure, page links, free list, record format, NOT NULL) in time linear in
 * the file's size; it leaves out only the cross-check of each index against its
 * table (the slower O(N log N) half of integrity_check), which matters for a
 * faulty program's writes, not for pages a disk or a copy has zeroed or
 * overwritten. Throws LibraryOpenError for anything the user must fix.
 */
export function openSqliteStore(dataDir: string): SqliteStore {
  if (dataDir === ':memory:') return new SqliteStore(new Database(':memory:'));
  const dir = path.resolve(dataDir);
  prepareDataDir(dir);
  const file = path.join(dir, DATABASE_FILE);
  let stat = statOrUndefined(file);
  if (stat === undefined) {
    // SQLite would replay a left-behind log into the new file as if it were its own.
    // (The second look: another server may have just made the library and begun its log.)
    if ((statOrUndefined(file + '-wal')?.size ?? 0) > 0 && statOrUndefined(file) === undefined) {
      throw new LibraryOpenError(
        `${file}-wal is there but the library ${file} is not: the library was moved or deleted after a server was stopped abruptly, ` +
          `and this log holds its latest saves. Put the library back beside it, or move ${file}-wal (and ${file}-shm) aside to start a new library.`,
        file,
      );
    }
    if (statOrUndefined(file) === undefined) createLibrary(dir, file);
    stat = fs.statSync(file);
  }
  checkLibraryFile(file, stat);
  let db: Database.Database;
  try {
    db = new Database(file, { fileMustExist: true });
  } catch (err) {
    throw openFault(file, err);
  }
  try {
    checkOpenedLibrary(db, file);
    return new SqliteStore(db, file);
  } catch (err) {
    db.close();
    throw err instanceof LibraryOpenError ? err : openFault(file, err);
  }
}

/** How to get a working library back, for every message about a bad library file. */
function restoreAdvice(file: string): string {
  return (
    `To restore a backup: stop every Shaftnet server that uses this library, move ${file} ` +
    `(and ${file}-wal and ${file}-shm, if they exist) aside, and copy your last backup to ${file}. ` +
    `To start a new, empty library instead, only move those files aside.`
  );
}

function damaged(file: string, detail: string): LibraryOpenError {
  return new LibraryOpenError(
    `the library ${file} is damaged (${detail}); Shaftnet will not read it or save into it. ${restoreAdvice(file)}`,
    file,
  );
}

function statOrUndefined(p: string): fs.Stats | undefined {
  try {
    return fs.statSync(p);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return undefined;
    throw err;
  }
}

/** The nearest existing ancestor of `p` (a file, when a path runs through one). */
function nearestExisting(p: string): { path: string; stat: fs.Stats } | undefined {
  for (let q = path.dirname(p); ; q = path.dirname(q)) {
    try {
      return { path: q, stat: fs.statSync(q) };
    } catch {
      if (path.dirname(q) === q) return undefined;
    }
  }
}

/** Makes sure `dir` is a directory we may write in, creating it (not its parents) if missing. */
function prepareDataDir(dir: string): void {
  let stat: fs.Stats | undefined;
  try {
    stat = statOrUndefined(dir);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'ENOTDIR') {
      const file = nearestExisting(dir);
      throw new LibraryOpenError(
        `the data directory ${dir} cannot exist: ${file?.path ?? 'a part of its path'} is a file, not a directory. Choose another --data.`,
        dir,
      );
    }
    throw new LibraryOpenError(`cannot look at the data directory ${dir}: ${describeErrno(err)}`, dir);
  }
  if (stat !== undefined && !stat.isDirectory()) {
    throw new LibraryOpenError(
      `the data path ${dir} is a file, not a directory: --data names the directory that holds the library file ${DATABASE_FILE}. Choose another --data.`,
      dir,
    );
  }
  if (stat === undefined) {
    const parent = path.dirname(dir);
    const parentStat = nearestExisting(dir);
    if (parentStat === undefined || parentStat.path !== parent) {
      const through = parentStat && !parentStat.stat.isDirectory();
      throw new LibraryOpenError(
        through
          ? `the data directory ${dir} cannot exist: ${parentStat.path} is a file, not a directory. Choose another --data.`
          : `the data directory ${dir} does not exist, and neither does its parent ${parent}: Shaftnet creates only the data directory itself. Create ${parent} (or mount the drive it is on), or choose another --data.`,
        dir,
      );
    }
    if (!parentStat.stat.isDirectory()) {
      throw new LibraryOpenError(
        `the data directory ${dir} cannot exist: ${parent} is a file, not a directory. Choose another --data.`,
        dir,
      );
    }
    try {
      fs.mkdirSync(dir);
    } catch (err) {
      // Another server starting on the same new directory may have made it first.
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') {
        throw new LibraryOpenError(`cannot create the data directory ${dir} in ${parent}: ${describeErrno(err)}`, dir);
      }
    }
  }
  try {
    fs.accessSync(dir, fs.constants.W_OK | fs.constants.X_OK);
  } catch (err) {
    throw new LibraryOpenError(
      `the data directory ${dir} is not writable (${describeErrno(err)}): Shaftnet writes the library ${DATABASE_FILE} and its -wal and -shm files there. Choose another --data, or make ${dir} writable.`,
      dir,
    );
  }
}

/** A plain-words reason for a file-system error, keeping its code for searching. */
function describeErrno(err: unknown): string {
  const e = err as NodeJS.ErrnoException;
  const words: Record<string, string> = {
    EACCES: 'permission denied',
    EPERM: 'operation not permitted',
    EROFS: 'read-only file system',
    ENOSPC: 'no space left on the disk',
    EDQUOT: 'disk quota exceeded',
    ENOTDIR: 'a part of the path is a file, not a directory',
    ENOENT: 'no such file or directory',
    EISDIR: 'it is a directory',
  };
  return e.code && words[e.code] ? `${words[e.code]}, ${e.code}` : e.message;
}

/**
 * Builds a new library under a temporary name and links it into place, so every
 * process that finds the file finds it whole (schema, WAL mode, ids written). If
 * another process linked its own first, that one is kept and ours is dropped.
 */
function createLibrary(dir: string, file: string): void {
  const temp = path.join(dir, `${DATABASE_FILE}.new-${process.pid}-${randomBytes(4).toString('hex')}`);
  try {
    const db = new Database(temp);
    try {
      db.pragma('journal_mode = WAL');
      db.exec(SCHEMA);
      db.pragma(`user_version = ${SCHEMA_VERSION}`);
      db.pragma(`application_id = ${APPLICATION_ID}`);
    } finally {
      db.close(); // checkpoints the WAL into the file and removes it
    }
    try {
      fs.linkSync(temp, file); // atomic, and never replaces an existing file
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code;
      if (code === 'EEXIST') return;
      if (code !== 'EPERM' && code !== 'ENOTSUP' && code !== 'EOPNOTSUPP') throw err;
      // A file system without hard links: copy, still never over an existing file.
      try {
        fs.copyFileSync(temp, file, fs.constants.COPYFILE_EXCL);
      } catch (err2) {
        if ((err2 as NodeJS.ErrnoException).code !== 'EEXIST') throw err2;
      }
    }
  } catch (err) {
    const code = (err as { code?: string }).code;
    const reason = code === 'SQLITE_FULL' ? 'no space left on the disk' : code?.startsWith('E') ? describeErrno(err) : (err as Error).message;
    throw new LibraryOpenError(`cannot create the library ${file}: ${reason}`, file);
  } finally {
    for (const f of [temp, temp + '-wal', temp + '-shm', temp + '-journal']) fs.rmSync(f, { force: true });
  }
}

/** Refuses what is plainly not a library before SQLite opens it. */
function checkLibraryFile(file: string, stat: fs.Stats): void {
  if (stat.isDirectory()) {
    throw new LibraryOpenError(
      `${file} is a directory, but it is where the library file belongs: move it away, or choose another --data.`,
      file,
    );
  }
  if (stat.size === 0) {
    throw new LibraryOpenError(
      `the library file ${file} is empty (0 bytes): it was not written by Shaftnet, which never leaves its library empty, ` +
        `so Shaftnet will not use it. Move it aside (or delete it) to start a new library there, or copy your last backup to ${file}.`,
      file,
    );
  }
  const head = Buffer.alloc(SQLITE_MAGIC.length);
  let fd: number;
  try {
    fd = fs.openSync(file, 'r');
  } catch (err) {
    throw new LibraryOpenError(`cannot read the library ${file}: ${describeErrno(err)}`, file);
  }
  try {
    fs.readSync(fd, head, 0, head.length, 0);
  } finally {
    fs.closeSync(fd);
  }
  if (!head.equals(SQLITE_MAGIC)) {
    throw damaged(file, 'its first page does not begin as a SQLite database does: overwritten, zeroed, or not a library at all');
  }
}

/** After SQLite opened it: whole (quick_check), and ours (application id or our tables). */
function checkOpenedLibrary(db: Database.Database, file: string): void {
  db.pragma('busy_timeout = 5000'); // ms: another process holding the write lock
  let problems: string[];
  try {
    problems = (db.pragma('quick_check(5)') as Array<{ quick_check: string }>).map((r) => r.quick_check);
  } catch (err) {
    const code = (err as { code?: string }).code ?? '';
    if (code === 'SQLITE_NOTADB' || code.startsWith('SQLITE_CORRUPT')) throw damaged(file, `the check stopped at: ${(err as Error).message}`);
    throw err;
  }
  if (problems.length !== 1 || problems[0] !== 'ok') throw damaged(file, `the check found: ${problems.join('; ')}`);
  const appId = db.pragma('application_id', { simple: true }) as number;
  const tables = (db.prepare("SELECT name FROM sqlite_schema WHERE type = 'table'").all() as Array<{ name: string }>).map((r) => r.name);
  if ((appId !== 0 && appId !== APPLICATION_ID) || (tables.length > 0 && !tables.includes('models'))) {
    throw new LibraryOpenError(
      `${file} is a SQLite database written by another program, not a Shaftnet library; Shaftnet will not change it. ` +
        `Move it aside to start a new library there, or choose another --data.`,
      file,
    );
  }
}

/** The message for SQLite refusing to open or first use an existing file. */
function openFault(file: string, err: unknown): LibraryOpenError {
  const code = (err as { code?: string }).code ?? '';
  if (code === 'SQLITE_NOTADB' || code.startsWith('SQLITE_CORRUPT')) return damaged(file, (err as Error).message);
  if (code.startsWith('SQLITE_READONLY')) {
    return new LibraryOpenError(`the library ${file} cannot be written (read-only): make it and its directory writable, or choose another --data.`, file);
  }
  if (code === 'SQLITE_FULL') return new LibraryOpenError(`cannot open the library ${file}: its disk is full; free some space and start again.`, file);
  if (code === 'SQLITE_BUSY') {
    return new LibraryOpenError(`the library ${file} is locked by another program (busy for over 5 s); stop it, or choose another --data.`, file);
  }
  return new LibraryOpenError(`cannot open the library ${file}: ${(err as Error).message}${code ? ` (${code})` : ''}`, file);
}

/**
 * Thrown by every write once this store has met damage in its file while running
 * (SQLite reported the file corrupt, or a stored model no longer parses): the
 * server saves nothing more into it. The API answers 500 SN_INTERNAL and the
 * server log has this message, with the file and how to restore.
 */
export class LibraryDamagedError extends Error {
  constructor(
    readonly file: string,
    readonly detail: string,
  ) {
    super(
      `the library ${file} was found damaged while the server ran (${detail}); this server saves nothing more into it. ` +
        `Stop every server that uses it. ${restoreAdvice(file)}`,
    );
    this.name = 'LibraryDamagedError';
  }
}

const isCorrupt = (err: unknown): boolean => {
  const code = (err as { code?: unknown }).code;
  return typeof code === 'string' && (code === 'SQLITE_NOTADB' || code.startsWith('SQLITE_CORRUPT'));
};

export class SqliteStore implements ModelStore {
  /** Set once damage was met: what SQLite (or JSON.parse) said. */
  private damage: string | undefined;
  private readonly stmts;
  private readonly createTx;
  private readonly saveTx;
  private readonly seedTx;
  private readonly reviewTx;
  private readonly addKeyTx;
  private readonly revokeKeyTx;

  constructor(
    private readonly db: Database.Database,
    /** The library file (for messages), or ':memory:'. */
    readonly file = ':memory:',
  ) {
    db.pragma('busy_timeout = 5000'); // ms: another process holding the write lock
    db.pragma('journal_mode = WAL');
    // FULL: the WAL is fsynced at every commit, so an acknowledged save survives power loss.
    db.pragma('synchronous = FULL');
    db.pragma('foreign_keys = ON');
    db.exec(SCHEMA);
    const version = db.pragma('user_version', { simple: true }) as number;
    if (version < SCHEMA_VERSION) db.pragma(`user_version = ${SCHEMA_VERSION}`); // 0 and 1: the new tables were just made
    else if (version > SCHEMA_VERSION) {
      throw new LibraryOpenError(
        `the library ${file} was written by a newer Shaftnet (schema ${version}, this one reads ${SCHEMA_VERSION}); run that version, or choose another --data.`,
        file,
      );
    }

    this.stmts = {
      insertModel: db.prepare(
        'INSERT INTO models (id, name, created, updated, author, revision, archived) VALUES (?, ?, ?, ?, ?, 1, 0)',
      ),
      updateModel: db.prepare('UPDATE models SET name = ?, updated = ?, author = ?, revision = ? WHERE id = ?'),
      insertRevision: db.prepare(
        'INSERT INTO revisions (model_id, revision, model, author, message, created) VALUES (?, ?, ?, ?, ?, ?)',
      ),
      modelById: db.prepare<[string], ModelRow>(
        'SELECT id, name, updated, author, revision, archived FROM models WHERE id = ?',
      ),
      revision: db.prepare<[string, number], RevisionRow>(
        'SELECT revision, model, author, message, created FROM revisions WHERE model_id = ? AND revision = ?',
      ),
      revisions: db.prepare<[string], RevisionRow>(
        `SELECT revision, author, message, created, ${STATE_OF('v.model_id', 'v.revision')} AS review_state FROM revisions v WHERE model_id = ? ORDER BY revision DESC`,
      ),
      list: db.prepare<[number], ModelRow>(
        `SELECT id, name, updated, author, revision, archived, ${STATE_OF('m.id', 'm.revision')} AS review_state FROM models m WHERE archived = ? ORDER BY updated DESC, id`,
      ),
      search: db.prepare<[number, string], ModelRow>(
        `SELECT id, name, updated, author, revision, archived, ${STATE_OF('m.id', 'm.revision')} AS review_state FROM models m WHERE archived = ? AND name LIKE ? ESCAPE '\\' ORDER BY updated DESC, id`,
      ),
      reviews: db.prepare<[string, number], ReviewRow>(
        'SELECT state, actor, at, note FROM reviews WHERE model_id = ? AND revision = ? ORDER BY seq',
      ),
      insertReview: db.prepare(
        'INSERT INTO reviews (model_id, revision, seq, state, actor, at, note) VALUES (?, ?, ?, ?, ?, ?, ?)',
      ),
      insertKey: db.prepare(
        'INSERT INTO keys (id, name, role, created, revoked, salt, hash, params) VALUES (?, ?, ?, ?, NULL, ?, ?, ?)',
      ),
      keys: db.prepare<[], KeyRow>(`SELECT ${KEY_COLUMNS} FROM keys ORDER BY created, id`),
      keyById: db.prepare<[string], KeyRow>(`SELECT ${KEY_COLUMNS} FROM keys WHERE id = ?`),
      activeKeys: db.prepare<[], KeyRow>(`SELECT ${KEY_COLUMNS} FROM keys WHERE revoked IS NULL`),
      revokeKey: db.prepare('UPDATE keys SET revoked = ? WHERE id = ? AND revoked IS NULL'),
      anyKey: db.prepare<[], { one: number }>('SELECT 1 AS one FROM keys LIMIT 1'),
      setArchived: db.prepare('UPDATE models SET archived = ? WHERE id = ?'),
      count: db.prepare<[], { n: number }>('SELECT COUNT(*) AS n FROM models'),
      getMeta: db.prepare<[string], { value: string }>('SELECT value FROM meta WHERE key = ?'),
      setMeta: db.prepare('INSERT INTO meta (key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET value = excluded.value'),
    };

    const insertNew = (input: SaveInput): SaveResult => {
      const now = new Date().toISOString();
      let id = newModelId();
      while (this.stmts.modelById.get(id)) id = newModelId();
      this.stmts.insertModel.run(id, input.name, now, now, input.author);
      this.stmts.insertRevision.run(id, 1, JSON.stringify(input.model), input.author, input.message, now);
      return { id, revision: 1 };
    };
    this.createTx = db.transaction(insertNew);

    this.seedTx = db.transaction((marker: string, inputs: readonly SaveInput[]): number => {
      if (this.stmts.getMeta.get(marker) !== undefined) return 0;
      let created = 0;
      if ((this.stmts.count.get()?.n ?? 0) === 0) {
        for (const input of inputs) {
          insertNew(input);
          created++;
        }
      }
      this.stmts.setMeta.run(marker, new Date().toISOString());
      return created;
    });

    this.reviewTx = db.transaction((input: ReviewInput): ReviewResult => {
      const row = this.stmts.modelById.get(input.id);
      if (!row) throw new ModelNotFoundError(input.id);
      const rev = this.stmts.revision.get(input.id, input.revision);
      if (!rev) throw new RevisionNotFoundError(input.id, input.revision);
      if (row.revision !== input.revision) throw new ReviewStaleError(input.id, input.revision, row.revision);
      const history = this.history(input.id, rev);
      const change = reviewChange(history, input);
      this.stmts.insertReview.run(input.id, input.revision, history.length, change.state, change.by, change.at, change.note);
      history.push(change);
      return { id: input.id, revision: input.revision, state: input.state, history };
    });

    this.addKeyTx = db.transaction((key: NewKey): KeyInfo => {
      if (this.stmts.activeKeys.all().some((k) => samePerson(k.name, key.name))) throw new KeyNameTakenError(key.name);
      this.stmts.insertKey.run(key.id, key.name, key.role, key.created, key.salt, key.hash, key.params);
      return newKeyInfo(key);
    });

    this.revokeKeyTx = db.transaction((idOrName: string, at: string): KeyInfo | undefined => {
      const row = this.stmts.keyById.get(idOrName) ?? this.stmts.activeKeys.all().find((k) => samePerson(k.name, idOrName));
      if (!row) return undefined;
      this.stmts.revokeKey.run(at, row.id);
      return keyInfo(this.stmts.keyById.get(row.id) as KeyRow);
    });

    this.saveTx = db.transaction((id: string, baseRevision: number, input: SaveInput): SaveResult => {
      const row = this.stmts.modelById.get(id);
      if (!row) throw new ModelNotFoundError(id);
      if (row.revision !== baseRevision) throw new StaleRevisionError(id, baseRevision, row.revision);
      const now = new Date().toISOString();
      const revision = row.revision + 1;
      this.stmts.insertRevision.run(id, revision, JSON.stringify(input.model), input.author, input.message, now);
      this.stmts.updateModel.run(input.name, now, input.author, revision, id);
      return { id, revision };
    });
  }

  /**
   * Runs a write; a full disk becomes StoreFullError once the transaction is
   * rolled back (SQLite has then undone every page of it, and the WAL frames it
   * may have written carry no commit mark, so no reader ever sees them).
   */
  private write<T>(work: () => T): T {
    if (this.damage !== undefined) throw new LibraryDamagedError(this.file, this.damage);
    try {
      return work();
    } catch (err) {
      if (isCorrupt(err)) this.damage = (err as Error).message;
      if (this.db.inTransaction) {
        try {
          this.db.exec('ROLLBACK');
        } catch {
          // already rolled back by SQLite
        }
      }
      if (this.isDiskFull(err)) throw new StoreFullError(this.file);
      throw err;
    }
  }

  /**
   * SQLITE_FULL is SQLite's own "disk full" (also from a quota, or from
   * max_page_count). A write I/O error counts too when the file system has less
   * than LOW_SPACE_BYTES left: some writes (the -shm index) fail that way.
   */
  private isDiskFull(err: unknown): boolean {
    const code = (err as { code?: unknown }).code;
    if (code === 'SQLITE_FULL') return true;
    if (typeof code !== 'string' || !code.startsWith('SQLITE_IOERR') || this.file === ':memory:') return false;
    try {
      const fsStat = fs.statfsSync(path.dirname(this.file));
      return fsStat.bavail * fsStat.bsize < LOW_SPACE_BYTES;
    } catch {
      return false;
    }
  }

  /** Runs a read; damage met there stops every later write (see LibraryDamagedError). */
  private read<T>(work: () => T): T {
    try {
      return work();
    } catch (err) {
      if (isCorrupt(err)) this.damage ??= (err as Error).message;
      throw err;
    }
  }

  create(input: SaveInput): SaveResult {
    return this.write(() => this.createTx.immediate(input));
  }

  save(id: string, baseRevision: number, input: SaveInput): SaveResult {
    return this.write(() => this.saveTx.immediate(id, baseRevision, input));
  }

  seedOnce(marker: string, inputs: readonly SaveInput[]): number {
    return this.write(() => this.seedTx.immediate(marker, inputs));
  }

  list(filter: ListFilter): ModelSummary[] {
    const archived = filter.archived ? 1 : 0;
    const q = filter.q?.trim() ?? '';
    const rows = this.read(() =>
      q === ''
        ? this.stmts.list.all(archived)
        : this.stmts.search.all(archived, '%' + q.replace(/[\\%_]/g, (c) => '\\' + c) + '%'),
    );
    return rows.map(summary);
  }

  get(id: string, revision?: number): StoredRevision | undefined {
    const row = this.read(() => this.stmts.modelById.get(id));
    if (!row) return undefined;
    const rev = this.read(() => this.stmts.revision.get(id, revision ?? row.revision));
    if (!rev) return undefined;
    let model: unknown;
    try {
      model = JSON.parse(rev.model);
    } catch (err) {
      // Only JSON.stringify's output is ever stored: text that does not parse was changed on disk.
      this.damage ??= `revision ${rev.revision} of model ${id} is no longer the JSON that was saved`;
      throw err;
    }
    const history = this.read(() => this.history(id, rev));
    return {
      id,
      revision: rev.revision,
      model,
      author: rev.author,
      message: rev.message,
      created: rev.created,
      archived: row.archived === 1,
      review: { state: currentState(history), history },
    };
  }

  /** A revision's review history, oldest first: the save (prepared), then every change. */
  private history(id: string, rev: Pick<RevisionRow, 'revision' | 'author' | 'created'>): ReviewEntry[] {
    const history: ReviewEntry[] = [preparedEntry(rev)];
    for (const r of this.stmts.reviews.all(id, rev.revision)) history.push({ state: r.state, by: r.actor, at: r.at, note: r.note });
    return history;
  }

  review(input: ReviewInput): ReviewResult {
    return this.write(() => this.reviewTx.immediate(input));
  }

  addKey(key: NewKey): KeyInfo {
    return this.write(() => this.addKeyTx.immediate(key));
  }

  keys(): KeyInfo[] {
    return this.read(() => this.stmts.keys.all()).map(keyInfo);
  }

  keyRecord(id: string): KeyRecord | undefined {
    const row = this.read(() => this.stmts.keyById.get(id));
    return row && keyRecord(row);
  }

  revokeKey(idOrName: string, at: string): KeyInfo | undefined {
    return this.write(() => this.revokeKeyTx.immediate(idOrName, at));
  }

  hasKeys(): boolean {
    return this.read(() => this.stmts.anyKey.get() !== undefined);
  }

  latestRevision(id: string): number | undefined {
    return this.read(() => this.stmts.modelById.get(id))?.revision;
  }

  revisions(id: string): RevisionInfo[] | undefined {
    if (!this.read(() => this.stmts.modelById.get(id))) return undefined;
    return this.read(() => this.stmts.revisions.all(id)).map((r) => ({
      revision: r.revision,
      author: r.author,
      message: r.message,
      created: r.created,
      reviewState: r.review_state ?? 'prepared',
    }));
  }

  setArchived(id: string, archived: boolean): { id: string; archived: boolean } | undefined {
    const result = this.write(() => this.stmts.setArchived.run(archived ? 1 : 0, id));
    return result.changes === 0 ? undefined : { id, archived };
  }

  count(): number {
    return this.read(() => this.stmts.count.get()?.n ?? 0);
  }

  getMeta(key: string): string | undefined {
    return this.read(() => this.stmts.getMeta.get(key)?.value);
  }

  setMeta(key: string, value: string): void {
    this.write(() => this.stmts.setMeta.run(key, value));
  }

  close(): void {
    if (this.db.open) this.db.close();
  }
}

function summary(row: ModelRow): ModelSummary {
  return modelSummary(row, row.archived === 1);
}
