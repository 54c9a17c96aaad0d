/**
 * Backup and restore of the SQLite library, for `shaftnet backup` and
 * `shaftnet restore` (server/cli-backup.ts).
 *
 * A backup uses SQLite's online backup (better-sqlite3's `db.backup()`) while
 * servers keep saving: the whole file is copied in one step, under one read
 * transaction, so the copy is the library as it was at one moment, and holds
 * every save acknowledged before the backup began. The copy is checked
 * (`PRAGMA quick_check`) and switched to a self-contained file (no -wal) before
 * it takes its name, so a half-written backup never carries the name asked for.
 *
 * A restore checks the file first (a SQLite file, quick_check, a Shaftnet
 * library), refuses a library that a running server has open (it would keep
 * writing into the file it has open), and refuses to replace an existing
 * library unless forced; a replaced library is kept beside it, renamed.
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { DATABASE_FILE } from './sqlite-store.js';

/** Something the user must fix; the CLI prints the message. */
export class BackupError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'BackupError';
  }
}

/** `PRAGMA application_id` of a Shaftnet library (as in sqlite-store.ts). */
const APPLICATION_ID = 0x53684e74;
const SQLITE_MAGIC = Buffer.from('SQLite format 3\0', 'latin1');
/** Pages per backup step: all of them, so the copy is one snapshot. */
const ALL_PAGES = 0x7fffffff;

/** What a backup or restore copied. */
export interface CopySummary {
  readonly file: string;
  readonly models: number;
  readonly revisions: number;
  readonly bytes: number;
}

function exists(p: string): boolean {
  return fs.existsSync(p);
}

/** True when another connection (a running server) has the library open. */
export function libraryInUse(file: string): boolean {
  const db = new Database(file, { fileMustExist: true });
  try {
    db.pragma('busy_timeout = 0');
    // An exclusive lock is granted only when no other connection has the file open (WAL keeps a shared lock while open).
    db.pragma('locking_mode = EXCLUSIVE');
    db.exec('BEGIN EXCLUSIVE');
    db.exec('COMMIT');
    return false;
  } catch (err) {
    if ((err as { code?: string }).code === 'SQLITE_BUSY' || (err as { code?: string }).code === 'SQLITE_LOCKED') return true;
    throw err;
  } finally {
    db.close();
  }
}

/**
 * Checks that `file` is a whole Shaftnet library (a SQLite file that passes
 * quick_check and holds our tables); answers what it holds. Opens it read-only.
 */
export function checkLibraryCopy(file: string): CopySummary {
  let head: Buffer;
  try {
    const fd = fs.openSync(file, 'r');
    try {
      head = Buffer.alloc(SQLITE_MAGIC.length);
      fs.readSync(fd, head, 0, head.length, 0);
    } finally {
      fs.closeSync(fd);
    }
  } catch (err) {
    throw new BackupError(`cannot read ${file}: ${(err as Error).message}`);
  }
  if (!head.equals(SQLITE_MAGIC)) throw new BackupError(`${file} is not a SQLite file, so not a Shaftnet backup`);
  let db: Database.Database;
  try {
    db = new Database(file, { readonly: true, fileMustExist: true });
  } catch (err) {
    throw new BackupError(`cannot open ${file}: ${(err as Error).message}`);
  }
  try {
    let problems: string[];
    try {
      problems = (db.pragma('quick_check(5)') as Array<{ quick_check: string }>).map((r) => r.quick_check);
    } catch (err) {
      throw new BackupError(`${file} is damaged: ${(err as Error).message}`);
    }
    if (problems.length !== 1 || problems[0] !== 'ok') throw new BackupError(`${file} is damaged: ${problems.join('; ')}`);
    const appId = db.pragma('application_id', { simple: true }) as number;
    const tables = (db.prepare("SELECT name FROM sqlite_schema WHERE type = 'table'").all() as Array<{ name: string }>).map((r) => r.name);
    if ((appId !== 0 && appId !== APPLICATION_ID) || !tables.includes('models') || !tables.includes('revisions')) {
      throw new BackupError(`${file} is a SQLite file but not a Shaftnet library`);
    }
    const models = (db.prepare('SELECT COUNT(*) AS n FROM models').get() as { n: number }).n;
    const revisions = (db.prepare('SELECT COUNT(*) AS n FROM revisions').get() as { n: number }).n;
    return { file, models, revisions, bytes: fs.statSync(file).size };
  } finally {
    db.close();
  }
}

/** Copies the database `from` into a new file `to` in one snapshot, then makes `to` self-contained (no -wal). */
async function snapshot(from: Database.Database, to: string): Promise<void> {
  await from.backup(to, { progress: () => ALL_PAGES });
  const copy = new Database(to, { fileMustExist: true });
  try {
    copy.pragma('journal_mode = DELETE');
  } finally {
    copy.close();
  }
}

function removeQuietly(...files: string[]): void {
  for (const f of files) fs.rmSync(f, { force: true });
}

/**
 * `shaftnet backup`: the library of `dataDir` into `outFile` (refused when it
 * exists, unless `force`), while servers may be running on it.
 */
export async function backupLibrary(dataDir: string, outFile: string, opts: { force?: boolean } = {}): Promise<CopySummary> {
  const file = path.join(path.resolve(dataDir), DATABASE_FILE);
  const out = path.resolve(outFile);
  if (!exists(file)) throw new BackupError(`there is no library in ${path.resolve(dataDir)} (no ${DATABASE_FILE}); check --data`);
  if (exists(out) && !opts.force) throw new BackupError(`${out} exists; choose another --out, or add --force to replace it`);
  if (!exists(path.dirname(out))) throw new BackupError(`the directory of ${out} does not exist`);
  if (out === file) throw new BackupError('--out names the library itself');
  const temp = `${out}.partial-${process.pid}`;
  removeQuietly(temp, temp + '-journal');
  let db: Database.Database;
  try {
    db = new Database(file, { fileMustExist: true });
  } catch (err) {
    throw new BackupError(`cannot open the library ${file}: ${(err as Error).message}`);
  }
  try {
    db.pragma('busy_timeout = 5000'); // ms: a server committing a save
    await snapshot(db, temp);
  } catch (err) {
    removeQuietly(temp, temp + '-journal');
    throw err instanceof BackupError ? err : new BackupError(`the backup of ${file} failed: ${(err as Error).message}`);
  } finally {
    db.close();
  }
  try {
    const summary = checkLibraryCopy(temp);
    fs.renameSync(temp, out);
    return { ...summary, file: out };
  } finally {
    removeQuietly(temp, temp + '-journal');
  }
}

/**
 * `shaftnet restore`: puts the backup `fromFile` in place as the library of
 * `dataDir`. Refuses a damaged or foreign file, a library a running server has
 * open, and (unless `force`) an existing library, which is otherwise kept as
 * `shaftnet.sqlite.before-restore-<time>`.
 */
export async function restoreLibrary(
  dataDir: string,
  fromFile: string,
  opts: { force?: boolean; now?: Date } = {},
): Promise<CopySummary & { replaced: string | null }> {
  const from = path.resolve(fromFile);
  if (!exists(from)) throw new BackupError(`there is no backup file ${from}`);
  checkLibraryCopy(from); // before anything is touched
  const dir = path.resolve(dataDir);
  if (!exists(dir)) {
    if (!exists(path.dirname(dir))) throw new BackupError(`neither ${dir} nor its parent exists; create the parent first`);
    fs.mkdirSync(dir);
  }
  const file = path.join(dir, DATABASE_FILE);
  if (from === file) throw new BackupError('--from names the library itself');
  let replaced: string | null = null;
  if (exists(file)) {
    if (libraryInUse(file)) {
      throw new BackupError(`a running Shaftnet server (or another program) has the library ${file} open; stop it before restoring`);
    }
    if (!opts.force) {
      throw new BackupError(`${dir} holds a library already; add --force to replace it (it is kept beside, renamed), or choose another --data`);
    }
    // Opening and closing folds any -wal into the file, so the renamed library is whole.
    new Database(file, { fileMustExist: true }).close();
    replaced = `${file}.before-restore-${(opts.now ?? new Date()).toISOString().replace(/[:.]/g, '-')}`;
    fs.renameSync(file, replaced);
  } else if (exists(file + '-wal') && !opts.force) {
    throw new BackupError(`${file}-wal is there without its library: a library was moved away after a crash; add --force to restore over it`);
  }
  removeQuietly(file + '-wal', file + '-shm');
  const temp = `${file}.restore-${process.pid}`;
  removeQuietly(temp, temp + '-journal');
  const source = new Database(from, { readonly: true, fileMustExist: true });
  try {
    await snapshot(source, temp);
  } finally {
    source.close();
  }
  try {
    const summary = checkLibraryCopy(temp);
    fs.renameSync(temp, file);
    return { ...summary, file, replaced };
  } finally {
    removeQuietly(temp, temp + '-journal');
  }
}
