/**
 * The model library in one SQLite file (better-sqlite3).
 *
 * Durability: WAL journal with synchronous=FULL, so a save is on disk (the WAL
 * fsynced) before `create`/`save` return and the API acknowledges it. A crash
 * after that loses nothing; a crash before it loses only the unacknowledged
 * save. Saves run in IMMEDIATE transactions, so two writers (even two processes
 * on one file) can never both write revision n+1.
 */
import fs from 'node:fs';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import Database from 'better-sqlite3';
import {
  ModelNotFoundError,
  StaleRevisionError,
  type ListFilter,
  type ModelStore,
  type ModelSummary,
  type RevisionInfo,
  type SaveInput,
  type SaveResult,
  type StoredRevision,
} from './store.js';

/** File name of the database inside the data directory. */
export const DATABASE_FILE = 'shaftnet.sqlite';

const SCHEMA_VERSION = 1;

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

interface ModelRow {
  id: string;
  name: string;
  updated: string;
  author: string;
  revision: number;
  archived: number;
}

interface RevisionRow {
  revision: number;
  model: string;
  author: string;
  message: string;
  created: string;
}

/** Opens (creating if needed) the library in `dataDir`; `':memory:'` for a throwaway one. */
export function openSqliteStore(dataDir: string): SqliteStore {
  let file = ':memory:';
  if (dataDir !== ':memory:') {
    fs.mkdirSync(dataDir, { recursive: true });
    file = path.join(dataDir, DATABASE_FILE);
  }
  return new SqliteStore(new Database(file));
}

export class SqliteStore implements ModelStore {
  private readonly stmts;
  private readonly createTx;
  private readonly saveTx;

  constructor(private readonly db: Database.Database) {
    db.pragma('journal_mode = WAL');
    // FULL: the WAL is fsynced at every commit, so an acknowledged save survives power loss.
    db.pragma('synchronous = FULL');
    db.pragma('foreign_keys = ON');
    db.pragma('busy_timeout = 5000'); // ms: another process holding the write lock
    db.exec(SCHEMA);
    const version = db.pragma('user_version', { simple: true }) as number;
    if (version === 0) db.pragma(`user_version = ${SCHEMA_VERSION}`);
    else if (version > SCHEMA_VERSION) {
      throw new Error(`the database was written by a newer Shaftnet (schema ${version}, this one reads ${SCHEMA_VERSION})`);
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
        'SELECT revision, author, message, created FROM revisions WHERE model_id = ? ORDER BY revision DESC',
      ),
      list: db.prepare<[number], ModelRow>(
        'SELECT id, name, updated, author, revision, archived FROM models WHERE archived = ? ORDER BY updated DESC, id',
      ),
      search: db.prepare<[number, string], ModelRow>(
        "SELECT id, name, updated, author, revision, archived FROM models WHERE archived = ? AND name LIKE ? ESCAPE '\\' ORDER BY updated DESC, id",
      ),
      setArchived: db.prepare('UPDATE models SET archived = ? WHERE id = ?'),
      count: db.prepare<[], { n: number }>('SELECT COUNT(*) AS n FROM models'),
      getMeta: db.prepare<[string], { value: string }>('SELECT value FROM meta WHERE key = ?'),
      setMeta: db.prepare('INSERT INTO meta (key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET value = excluded.value'),
    };

    this.createTx = db.transaction((input: SaveInput): SaveResult => {
      const now = new Date().toISOString();
      let id = newModelId();
      while (this.stmts.modelById.get(id)) id = newModelId();
      this.stmts.insertModel.run(id, input.name, now, now, input.author);
      this.stmts.insertRevision.run(id, 1, JSON.stringify(input.model), input.author, input.message, now);
      return { id, revision: 1 };
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

  create(input: SaveInput): SaveResult {
    return this.createTx.immediate(input);
  }

  save(id: string, baseRevision: number, input: SaveInput): SaveResult {
    return this.saveTx.immediate(id, baseRevision, input);
  }

  list(filter: ListFilter): ModelSummary[] {
    const archived = filter.archived ? 1 : 0;
    const q = filter.q?.trim() ?? '';
    const rows =
      q === ''
        ? this.stmts.list.all(archived)
        : this.stmts.search.all(archived, '%' + q.replace(/[\\%_]/g, (c) => '\\' + c) + '%');
    return rows.map(summary);
  }

  get(id: string, revision?: number): StoredRevision | undefined {
    const row = this.stmts.modelById.get(id);
    if (!row) return undefined;
    const rev = this.stmts.revision.get(id, revision ?? row.revision);
    if (!rev) return undefined;
    return {
      id,
      revision: rev.revision,
      model: JSON.parse(rev.model),
      author: rev.author,
      message: rev.message,
      created: rev.created,
      archived: row.archived === 1,
    };
  }

  revisions(id: string): RevisionInfo[] | undefined {
    if (!this.stmts.modelById.get(id)) return undefined;
    return this.stmts.revisions.all(id).map((r) => ({
      revision: r.revision,
      author: r.author,
      message: r.message,
      created: r.created,
    }));
  }

  setArchived(id: string, archived: boolean): { id: string; archived: boolean } | undefined {
    const result = this.stmts.setArchived.run(archived ? 1 : 0, id);
    return result.changes === 0 ? undefined : { id, archived };
  }

  count(): number {
    return this.stmts.count.get()?.n ?? 0;
  }

  getMeta(key: string): string | undefined {
    return this.stmts.getMeta.get(key)?.value;
  }

  setMeta(key: string, value: string): void {
    this.stmts.setMeta.run(key, value);
  }

  close(): void {
    if (this.db.open) this.db.close();
  }
}

function summary(row: ModelRow): ModelSummary {
  return {
    id: row.id,
    name: row.name,
    author: row.author,
    updated: row.updated,
    revision: row.revision,
    archived: row.archived === 1,
  };
}
