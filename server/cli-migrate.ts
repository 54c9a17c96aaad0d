/**
 * `shaftnet migrate --from DIR --to postgres://… [--force]`: copies a SQLite
 * library (DIR/shaftnet.sqlite) into a PostgreSQL database, then checks the copy.
 *
 * Copied as they are: every model (id, name, times, author, latest revision,
 * archived flag), every revision (author, message, time, and the model's stored
 * text character for character), every review change (state, who, when, note),
 * every personal key (name, role, times; its salt and scrypt hash only: no
 * secret exists to copy) and every meta flag. The copy is one
 * transaction: a failure leaves the target as it was. The target must hold no
 * library yet; `--force` empties it first (in the same transaction).
 *
 * The check reads both sides afresh: counts of models, archived models,
 * revisions, review changes, keys and meta flags; every model row, revision,
 * review change and key field; and a SHA-256 of each revision's stored model
 * text and of each key's salt, hash and cost parameters, computed by PostgreSQL itself on the
 * target and by this process on the source. Exit status 0 when all agree, 1
 * otherwise (and for any error: usage, source, target).
 *
 * Stop the servers that use the SQLite library first: the copy reads one
 * consistent snapshot of it, and saves made after that are not in the copy.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { DATABASE_FILE, LibraryOpenError, openSqliteStore } from './store/sqlite-store.js';
import { openPgStore, type PgStore } from './store/pg-store.js';
import { SchemaRefusedError } from './store/pg-migrations.js';
import { StoreConnectError, StoreUnavailableError } from './store/store-errors.js';
import { KEY_COLUMNS, type KeyRow as StoredKeyRow, type ReviewRow as StoredReviewRow } from './store/store-common.js';

export const MIGRATE_USAGE = `usage: shaftnet migrate --from DIR --to postgres://USER@HOST:PORT/DATABASE [--force]
  --from DIR   the data directory that holds the SQLite library (${DATABASE_FILE})
  --to URL     the PostgreSQL database to copy it into (made ready by the same migrations as a server's)
  --force      empty a target that already holds a library before copying (its models are lost)`;

interface MigrateArgs {
  from: string;
  to: string;
  force: boolean;
}

class MigrateUsageError extends Error {}

function parseArgs(args: string[]): MigrateArgs {
  let from: string | undefined;
  let to: string | undefined;
  let force = false;
  for (let k = 0; k < args.length; k++) {
    const a = args[k];
    const value = (name: string) => {
      const v = a === name ? args[++k] : a.slice(name.length + 1);
      if (!v) throw new MigrateUsageError(`${name} takes a value`);
      return v;
    };
    if (a === '--from' || a.startsWith('--from=')) from = value('--from');
    else if (a === '--to' || a.startsWith('--to=')) to = value('--to');
    else if (a === '--force') force = true;
    else throw new MigrateUsageError(`unknown argument ${a}`);
  }
  if (from === undefined || to === undefined) throw new MigrateUsageError('name both the source (--from DIR) and the target (--to postgres://…)');
  if (!/^postgres(ql)?:\/\//.test(to)) throw new MigrateUsageError(`--to takes a postgres:// URL, not ${to}`);
  return { from, to, force };
}

interface ModelRow {
  id: string;
  name: string;
  created: string;
  updated: string;
  author: string;
  revision: number;
  archived: boolean;
}

interface RevisionRow {
  model_id: string;
  revision: number;
  author: string;
  message: string;
  created: string;
}

/** A review change with the revision it belongs to. */
interface ReviewRow extends StoredReviewRow {
  model_id: string;
  revision: number;
  seq: number;
}

/** A key's fields, and the SHA-256 (hex) of "salt|hash|params" in place of them. */
type KeyRow = Omit<StoredKeyRow, 'salt' | 'hash' | 'params'> & { sha256: string };

/** Everything the check compares, from one side. */
interface Snapshot {
  models: Map<string, ModelRow>;
  /** "id#revision" → the revision's fields and the SHA-256 (hex) of its model text. */
  revisions: Map<string, RevisionRow & { sha256: string }>;
  /** "id#revision#seq" → the review change. */
  reviews: Map<string, ReviewRow>;
  /** key id → the key's fields and the SHA-256 of its hash material. */
  keys: Map<string, KeyRow>;
  meta: Map<string, string>;
}

/** What the check found: the figures of each side and the differences (empty when identical). */
export interface Verification {
  readonly source: Figures;
  readonly target: Figures;
  /** Revisions whose SHA-256 matched on both sides. */
  readonly hashesEqual: number;
  /** Keys whose SHA-256 of salt, hash and parameters matched on both sides. */
  readonly keyHashesEqual: number;
  readonly differences: readonly string[];
}

/** The counts of one side. */
export interface Figures {
  readonly models: number;
  readonly archived: number;
  readonly revisions: number;
  readonly reviews: number;
  readonly keys: number;
  readonly meta: number;
}

const reviewKey = (r: Pick<ReviewRow, 'model_id' | 'revision' | 'seq'>) => `${r.model_id}#${r.revision}#${r.seq}`;
const sha256 = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex');
const revKey = (id: string, revision: number) => `${id}#${revision}`;

/** Opens the source library read-only, after the server's own checks (whole, ours). */
function openSource(dir: string): Database.Database {
  const file = path.join(path.resolve(dir), DATABASE_FILE);
  if (!fs.existsSync(file)) throw new LibraryOpenError(`there is no library to copy at ${file}: --from names the data directory that holds ${DATABASE_FILE}`, file);
  openSqliteStore(dir).close(); // quick_check, and refuses another program's database
  return new Database(file, { readonly: true, fileMustExist: true });
}

function readSource(db: Database.Database): Snapshot {
  const models = new Map<string, ModelRow>();
  for (const r of db.prepare('SELECT id, name, created, updated, author, revision, archived FROM models').all() as Array<Omit<ModelRow, 'archived'> & { archived: number }>) {
    models.set(r.id, { ...r, archived: r.archived === 1 });
  }
  const revisions = new Map<string, RevisionRow & { sha256: string }>();
  for (const r of db.prepare('SELECT model_id, revision, model, author, message, created FROM revisions').iterate() as Iterable<RevisionRow & { model: string }>) {
    revisions.set(revKey(r.model_id, r.revision), { model_id: r.model_id, revision: r.revision, author: r.author, message: r.message, created: r.created, sha256: sha256(r.model) });
  }
  const meta = new Map((db.prepare('SELECT key, value FROM meta').all() as Array<{ key: string; value: string }>).map((r) => [r.key, r.value]));
  const reviews = new Map<string, ReviewRow>();
  for (const r of db.prepare('SELECT model_id, revision, seq, state, actor, at, note FROM reviews').all() as ReviewRow[]) reviews.set(reviewKey(r), r);
  const keys = new Map<string, KeyRow>();
  for (const k of db.prepare(`SELECT ${KEY_COLUMNS} FROM keys`).all() as StoredKeyRow[]) {
    keys.set(k.id, { id: k.id, name: k.name, role: k.role, created: k.created, revoked: k.revoked, sha256: sha256(`${k.salt}|${k.hash}|${k.params}`) });
  }
  return { models, revisions, reviews, keys, meta };
}

async function readTarget(store: PgStore): Promise<Snapshot> {
  return store.withTransaction(async (c) => {
    const models = new Map<string, ModelRow>();
    for (const r of (await c.query<ModelRow>('SELECT id, name, created, updated, author, revision, archived FROM models')).rows) models.set(r.id, r);
    const revisions = new Map<string, RevisionRow & { sha256: string }>();
    // The hash of the stored text, computed by PostgreSQL over its own bytes.
    const revs = await c.query<RevisionRow & { sha256: string }>(
      "SELECT model_id, revision, author, message, created, encode(sha256(convert_to(model, 'UTF8')), 'hex') AS sha256 FROM revisions",
    );
    for (const r of revs.rows) revisions.set(revKey(r.model_id, r.revision), r);
    const meta = new Map((await c.query<{ key: string; value: string }>('SELECT key, value FROM meta')).rows.map((r) => [r.key, r.value]));
    const reviews = new Map<string, ReviewRow>();
    for (const r of (await c.query<ReviewRow>('SELECT model_id, revision, seq, state, actor, at, note FROM reviews')).rows) reviews.set(reviewKey(r), r);
    const keys = new Map<string, KeyRow>();
    const keyRows = await c.query<KeyRow>(
      "SELECT id, name, role, created, revoked, encode(sha256(convert_to(salt || '|' || hash || '|' || params, 'UTF8')), 'hex') AS sha256 FROM keys",
    );
    for (const k of keyRows.rows) keys.set(k.id, k);
    return { models, revisions, reviews, keys, meta };
  });
}

function figures(s: Snapshot) {
  let archived = 0;
  for (const m of s.models.values()) if (m.archived) archived++;
  return { models: s.models.size, archived, revisions: s.revisions.size, reviews: s.reviews.size, keys: s.keys.size, meta: s.meta.size };
}

/** Compares two snapshots field by field; at most `limit` differences are listed. */
function compare(source: Snapshot, target: Snapshot, limit = 20): Verification {
  const differences: string[] = [];
  const differ = (text: string) => {
    if (differences.length < limit) differences.push(text);
  };
  let hashesEqual = 0;
  const sameRow = <T extends object>(a: T, b: T, fields: (keyof T)[]) => fields.filter((f) => a[f] !== b[f]);
  for (const [id, m] of source.models) {
    const t = target.models.get(id);
    if (!t) differ(`model ${id} is missing from the target`);
    else for (const f of sameRow(m, t, ['name', 'created', 'updated', 'author', 'revision', 'archived'])) differ(`model ${id}: ${f} differs`);
  }
  for (const id of target.models.keys()) if (!source.models.has(id)) differ(`model ${id} is in the target only`);
  for (const [key, r] of source.revisions) {
    const t = target.revisions.get(key);
    if (!t) {
      differ(`revision ${key} is missing from the target`);
      continue;
    }
    for (const f of sameRow(r, t, ['author', 'message', 'created'])) differ(`revision ${key}: ${f} differs`);
    if (t.sha256 === r.sha256) hashesEqual++;
    else differ(`revision ${key}: the model text differs (SHA-256 ${r.sha256.slice(0, 12)}… here, ${t.sha256.slice(0, 12)}… there)`);
  }
  for (const key of target.revisions.keys()) if (!source.revisions.has(key)) differ(`revision ${key} is in the target only`);
  for (const [key, r] of source.reviews) {
    const t = target.reviews.get(key);
    if (!t) differ(`review change ${key} is missing from the target`);
    else for (const f of sameRow(r, t, ['state', 'actor', 'at', 'note'])) differ(`review change ${key}: ${f} differs`);
  }
  for (const key of target.reviews.keys()) if (!source.reviews.has(key)) differ(`review change ${key} is in the target only`);
  let keyHashesEqual = 0;
  for (const [id, k] of source.keys) {
    const t = target.keys.get(id);
    if (!t) {
      differ(`key ${id} is missing from the target`);
      continue;
    }
    for (const f of sameRow(k, t, ['name', 'role', 'created', 'revoked'])) differ(`key ${id}: ${f} differs`);
    if (t.sha256 === k.sha256) keyHashesEqual++;
    else differ(`key ${id}: its salt, hash or parameters differ`);
  }
  for (const id of target.keys.keys()) if (!source.keys.has(id)) differ(`key ${id} is in the target only`);
  for (const [key, v] of source.meta) if (target.meta.get(key) !== v) differ(`meta flag ${key} differs or is missing`);
  for (const key of target.meta.keys()) if (!source.meta.has(key)) differ(`meta flag ${key} is in the target only`);
  return { source: figures(source), target: figures(target), hashesEqual, keyHashesEqual, differences };
}

/** Reads both libraries afresh and compares them (the command's check, also usable alone). */
export async function verifyMigration(fromDir: string, toUrl: string): Promise<Verification> {
  const db = openSource(fromDir);
  const store = await openPgStore(toUrl);
  try {
    db.exec('BEGIN'); // one snapshot of the source
    const source = readSource(db);
    db.exec('COMMIT');
    return compare(source, await readTarget(store));
  } finally {
    db.close();
    await store.close();
  }
}

/** Copies the library in one transaction; answers how many models, revisions and meta flags. */
async function copy(db: Database.Database, store: PgStore, force: boolean): Promise<{ models: number; revisions: number; reviews: number; keys: number; meta: number }> {
  return store.withTransaction(async (c) => {
    const held = (await c.query<{ n: number }>('SELECT (SELECT count(*) FROM models) + (SELECT count(*) FROM meta) + (SELECT count(*) FROM keys) AS n')).rows[0].n;
    if (Number(held) > 0) {
      if (!force) throw new TargetNotEmptyError(store.target);
      await c.query('TRUNCATE reviews, keys, sessions, revisions, models, meta');
    }
    db.exec('BEGIN'); // one snapshot of the source
    try {
      let revisions = 0;
      const models = db.prepare('SELECT id, name, created, updated, author, revision, archived FROM models ORDER BY id').all() as Array<Omit<ModelRow, 'archived'> & { archived: number }>;
      const revs = db.prepare('SELECT revision, model, author, message, created FROM revisions WHERE model_id = ? ORDER BY revision');
      for (const m of models) {
        await c.query({
          name: 'sn_migrate_model',
          text: 'INSERT INTO models (id, name, created, updated, author, revision, archived) VALUES ($1, $2, $3, $4, $5, $6, $7)',
          values: [m.id, m.name, m.created, m.updated, m.author, m.revision, m.archived === 1],
        });
        for (const r of revs.all(m.id) as Array<{ revision: number; model: string; author: string; message: string; created: string }>) {
          await c.query({
            name: 'sn_migrate_revision',
            text: 'INSERT INTO revisions (model_id, revision, model, author, message, created) VALUES ($1, $2, $3, $4, $5, $6)',
            values: [m.id, r.revision, r.model, r.author, r.message, r.created],
          });
          revisions++;
        }
      }
      const meta = db.prepare('SELECT key, value FROM meta ORDER BY key').all() as Array<{ key: string; value: string }>;
      for (const { key, value } of meta) await c.query('INSERT INTO meta (key, value) VALUES ($1, $2)', [key, value]);
      // Review changes after the revisions they refer to.
      const reviews = db.prepare('SELECT model_id, revision, seq, state, actor, at, note FROM reviews ORDER BY model_id, revision, seq').all() as ReviewRow[];
      for (const r of reviews) {
        await c.query({
          name: 'sn_migrate_review',
          text: 'INSERT INTO reviews (model_id, revision, seq, state, actor, at, note) VALUES ($1, $2, $3, $4, $5, $6, $7)',
          values: [r.model_id, r.revision, r.seq, r.state, r.actor, r.at, r.note],
        });
      }
      // Personal keys: their hash material as stored (a secret is never stored anywhere).
      const keys = db.prepare('SELECT id, name, role, created, revoked, salt, hash, params FROM keys ORDER BY created, id').all() as Array<Record<string, string | null>>;
      for (const k of keys) {
        await c.query({
          name: 'sn_migrate_key',
          text: 'INSERT INTO keys (id, name, role, created, revoked, salt, hash, params) VALUES ($1, $2, $3, $4, $5, $6, $7, $8)',
          values: [k.id, k.name, k.role, k.created, k.revoked, k.salt, k.hash, k.params],
        });
      }
      return { models: models.length, revisions, reviews: reviews.length, keys: keys.length, meta: meta.length };
    } finally {
      db.exec('COMMIT');
    }
  });
}

class TargetNotEmptyError extends Error {
  constructor(target: string) {
    super(`the target ${target} already holds a library: nothing was copied. Name an empty database, or add --force to empty this one first (its models are then lost).`);
  }
}

/** Runs the command; answers the exit status. */
export async function migrateFromArgs(args: string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  let parsed: MigrateArgs;
  try {
    parsed = parseArgs(args);
  } catch (e) {
    err(`${(e as Error).message}\n${MIGRATE_USAGE}`);
    return 1;
  }
  let db: Database.Database | undefined;
  let store: PgStore | undefined;
  try {
    db = openSource(parsed.from);
    store = await openPgStore(parsed.to);
    const source = path.join(path.resolve(parsed.from), DATABASE_FILE);
    out(`copying ${source} into ${store.target}`);
    const t0 = Date.now();
    const copied = await copy(db, store, parsed.force);
    out(`copied ${copied.models} models, ${copied.revisions} revisions, ${copied.reviews} review changes, ${copied.keys} keys, ${copied.meta} meta flags in ${((Date.now() - t0) / 1000).toFixed(1)} s; checking`);
  } catch (e) {
    if (e instanceof LibraryOpenError || e instanceof StoreConnectError || e instanceof StoreUnavailableError || e instanceof SchemaRefusedError || e instanceof TargetNotEmptyError) {
      err(`migrate: ${e.message}`);
      return 1;
    }
    err(`migrate: ${(e as Error).message}; nothing was copied`);
    return 1;
  } finally {
    db?.close();
    await store?.close();
  }
  let v: Verification;
  try {
    v = await verifyMigration(parsed.from, parsed.to);
  } catch (e) {
    err(`migrate: the copy was made, but the check could not run: ${(e as Error).message}`);
    return 1;
  }
  const row = (label: string, s: Figures) =>
    `  ${label.padEnd(7)} ${String(s.models).padStart(8)} models (${s.archived} archived) ${String(s.revisions).padStart(9)} revisions ${String(s.reviews).padStart(6)} review changes ${String(s.keys).padStart(4)} keys ${String(s.meta).padStart(4)} meta flags`;
  out(row('source', v.source));
  out(row('target', v.target));
  out(`  SHA-256 of the stored model text: ${v.hashesEqual} of ${v.source.revisions} revisions equal on both sides`);
  out(`  SHA-256 of each key's salt, hash and parameters: ${v.keyHashesEqual} of ${v.source.keys} keys equal on both sides`);
  if (v.differences.length > 0) {
    for (const d of v.differences) err(`  differs: ${d}`);
    err('migrate: the target does NOT hold the same library (differences above)');
    return 1;
  }
  out('verified: the target holds the same models, revisions, review changes, keys and meta flags, byte for byte');
  return 0;
}
