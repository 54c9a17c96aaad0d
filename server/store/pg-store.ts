/**
 * The model library in PostgreSQL, shared by any number of server processes.
 *
 * One pg.Pool per process. Every statement is named (prepared once per
 * connection). Every write is one transaction:
 *   - save: reads the model's row `FOR UPDATE` (so concurrent saves on one
 *     model queue on that row, across processes), refuses a stale base, inserts
 *     revision n+1 (UNIQUE (model_id, revision) makes a second n+1 impossible
 *     whatever happens) and moves the row to n+1. Of several saves on one base
 *     exactly one wins; the others get StaleRevisionError, as with SQLite.
 *   - create: the model's row and its revision 1 together.
 *   - seedOnce: under an advisory lock, with the models table locked against
 *     other writers, so servers started together seed once between them.
 * An acknowledged save is committed (PostgreSQL's own durability settings apply:
 * keep `synchronous_commit` on).
 *
 * Faults: `openPgStore` rejects with StoreConnectError (naming host and port)
 * when the server cannot be reached; a server lost later makes every call reject
 * with StoreUnavailableError (the transaction is rolled back by the server: no
 * half-written save), and the pool connects again by itself once it is back.
 */
import pg from 'pg';
import { migrate, type MigrationResult } from './pg-migrations.js';
import { describeTarget } from './pg-target.js';

export { describeTarget };
import { StoreConnectError, StoreUnavailableError } from './store-errors.js';
import { newModelId } from './sqlite-store.js';
import type { ReviewEntry, ReviewState } from '../../shared-types/library.js';
import { currentState, samePerson } from './review-rules.js';
import { KEY_COLUMNS, STATE_OF, keyInfo, keyRecord, modelSummary, newKeyInfo, preparedEntry, reviewChange, type KeyRow, type ModelRowCommon, type ReviewRow } from './store-common.js';
import {
  KeyNameTakenError,
  ModelNotFoundError,
  ReviewStaleError,
  RevisionNotFoundError,
  StaleRevisionError,
  type KeyInfo,
  type KeyRecord,
  type NewKey,
  type ReviewInput,
  type ReviewResult,
  type ListFilter,
  type ModelSummary,
  type RevisionInfo,
  type SaveInput,
  type SaveResult,
  type StoredRevision,
} from './store.js';
import type { AsyncModelStore } from './async-store.js';

/** ms to wait for a new connection before a call fails as unavailable. */
const CONNECT_TIMEOUT_MS = 5_000;
/** ms a `ready()` probe may take before health says not ready. */
const READY_TIMEOUT_MS = 2_000;
/** Connections per process: enough for a server's concurrent requests, few enough for many instances. */
const DEFAULT_POOL_SIZE = 10;
/** Key of the advisory lock held while seeding ("ShNt" and 2). */
const SEED_LOCK_KEY = 0x53684e74_02;
/** Key of the advisory lock held while adding or revoking a personal key ("ShNt" and 3): names stay unique among live keys. */
const KEYS_LOCK_KEY = 0x53684e74_03;

/** SQLSTATE of a unique violation. */
const UNIQUE_VIOLATION = '23505';

/** Socket-level codes that mean the server is away (Node's errno names). */
const NETWORK_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'ENOTFOUND', 'EHOSTUNREACH', 'ENETUNREACH', 'EAI_AGAIN', 'ENOENT']);
/** SQLSTATEs that mean the server is away or going: shutdown (57P01-57P03), connection exceptions (08xxx). */
const SERVER_GONE = /^(08...|57P0[123])$/;

/**
 * Whether an error from the driver means the database server is unreachable
 * (rather than a fault of the statement).
 */
export function isConnectionLoss(err: unknown): boolean {
  const e = err as { code?: unknown; message?: unknown };
  if (typeof e?.code === 'string' && (NETWORK_CODES.has(e.code) || SERVER_GONE.test(e.code))) return true;
  const msg = typeof e?.message === 'string' ? e.message : '';
  return /Connection terminated|connection timeout|timeout exceeded when trying to connect|Client has encountered a connection error|Client was closed|not queryable/i.test(msg);
}

interface ModelRow extends ModelRowCommon {
  archived: boolean;
}

export interface PgStoreOptions {
  /** Connections in this process's pool (default 10). */
  readonly poolSize?: number;
  /** Whether to run the migrations (default true; the migrate command and tests may say false after running them). */
  readonly migrate?: boolean;
}

/**
 * Connects, checks that the server answers, runs the migrations (once across
 * processes) and answers the store. Rejects with StoreConnectError naming the
 * host and port when the server cannot be reached or refuses us, and with
 * SchemaRefusedError for a database that is not ours to change.
 */
export async function openPgStore(connectionString: string, options: PgStoreOptions = {}): Promise<PgStore> {
  const target = describeTarget(connectionString);
  const pool = new pg.Pool({
    connectionString,
    max: options.poolSize ?? DEFAULT_POOL_SIZE,
    connectionTimeoutMillis: CONNECT_TIMEOUT_MS,
    keepAlive: true,
    application_name: 'shaftnet',
  });
  // An idle connection the server drops (restart, network) is reported here; the
  // pool discards it and opens a new one when next needed. Without a listener the
  // process would end on it.
  pool.on('error', () => undefined);
  let client: pg.PoolClient;
  try {
    client = await pool.connect();
  } catch (err) {
    await pool.end().catch(() => undefined);
    throw new StoreConnectError(`cannot connect to the PostgreSQL server at ${target}: ${describeDriverError(err)}`, target);
  }
  let migration: MigrationResult | undefined;
  const onError = () => undefined; // a loss between statements: the next statement rejects (see transaction)
  client.on('error', onError);
  try {
    if (options.migrate !== false) migration = await migrate(client);
    client.removeListener('error', onError);
    client.release();
  } catch (err) {
    client.removeListener('error', onError);
    client.release(true);
    await pool.end().catch(() => undefined);
    if (isConnectionLoss(err)) throw new StoreConnectError(`lost the PostgreSQL server at ${target} while preparing the library: ${describeDriverError(err)}`, target);
    throw err;
  }
  return new PgStore(pool, target, migration);
}

/** The driver's words, with its code (errno or SQLSTATE) kept for searching. */
function describeDriverError(err: unknown): string {
  const e = err as { code?: unknown; message?: unknown; errors?: unknown };
  // Node's AggregateError (a host with several addresses) carries its reasons inside.
  if (Array.isArray(e?.errors) && e.errors.length > 0 && !e.message) return describeDriverError(e.errors[0]);
  const msg = typeof e?.message === 'string' && e.message !== '' ? e.message : String(err);
  return typeof e?.code === 'string' && !msg.includes(e.code) ? `${msg} (${e.code})` : msg;
}

/** Named statements: each is prepared once per connection, then only executed. */
const SQL = {
  modelForUpdate: 'SELECT revision FROM models WHERE id = $1 FOR UPDATE',
  modelExists: 'SELECT 1 FROM models WHERE id = $1',
  insertModel: 'INSERT INTO models (id, name, created, updated, author, revision, archived) VALUES ($1, $2, $3, $3, $4, 1, false)',
  updateModel: 'UPDATE models SET name = $1, updated = $2, author = $3, revision = $4 WHERE id = $5',
  insertRevision: 'INSERT INTO revisions (model_id, revision, model, author, message, created) VALUES ($1, $2, $3, $4, $5, $6)',
  latestRevision: 'SELECT revision FROM models WHERE id = $1',
  getRevision:
    'SELECT r.revision, r.model, r.author, r.message, r.created, m.archived FROM models m JOIN revisions r ON r.model_id = m.id AND r.revision = COALESCE($2::integer, m.revision) WHERE m.id = $1',
  revisions: `SELECT revision, author, message, created, ${STATE_OF('v.model_id', 'v.revision')} AS review_state FROM revisions v WHERE model_id = $1 ORDER BY revision DESC`,
  list: `SELECT id, name, updated, author, revision, archived, ${STATE_OF('m.id', 'm.revision')} AS review_state FROM models m WHERE archived = $1 ORDER BY updated DESC, id`,
  search: `SELECT id, name, updated, author, revision, archived, ${STATE_OF('m.id', 'm.revision')} AS review_state FROM models m WHERE archived = $1 AND name ILIKE $2 ESCAPE '\\' ORDER BY updated DESC, id`,
  revisionRow: 'SELECT revision, author, created FROM revisions WHERE model_id = $1 AND revision = $2',
  reviews: 'SELECT state, actor, at, note FROM reviews WHERE model_id = $1 AND revision = $2 ORDER BY seq',
  insertReview: 'INSERT INTO reviews (model_id, revision, seq, state, actor, at, note) VALUES ($1, $2, $3, $4, $5, $6, $7)',
  insertKey: 'INSERT INTO keys (id, name, role, created, revoked, salt, hash, params) VALUES ($1, $2, $3, $4, NULL, $5, $6, $7)',
  keys: `SELECT ${KEY_COLUMNS} FROM keys ORDER BY created, id`,
  keyById: `SELECT ${KEY_COLUMNS} FROM keys WHERE id = $1`,
  activeKeys: `SELECT ${KEY_COLUMNS} FROM keys WHERE revoked IS NULL`,
  revokeKey: 'UPDATE keys SET revoked = $1 WHERE id = $2 AND revoked IS NULL',
  anyKey: 'SELECT 1 AS one FROM keys LIMIT 1',
  keysLock: 'SELECT pg_advisory_xact_lock($1)',
  setArchived: 'UPDATE models SET archived = $1 WHERE id = $2',
  count: 'SELECT count(*)::integer AS n FROM models',
  getMeta: 'SELECT value FROM meta WHERE key = $1',
  setMeta: 'INSERT INTO meta (key, value) VALUES ($1, $2) ON CONFLICT (key) DO UPDATE SET value = excluded.value',
  seedLock: 'SELECT pg_advisory_xact_lock($1)',
} as const;

type StatementName = keyof typeof SQL;

/** A query through a named statement (prepared per connection by the driver). */
function named(name: StatementName, values: unknown[]): pg.QueryConfig {
  return { name: `sn_${name}`, text: SQL[name], values };
}

/** The parts of pg.Pool and pg.PoolClient that run a query. */
type Queryable = Pick<pg.PoolClient, 'query'>;

export class PgStore implements AsyncModelStore {
  readonly kind = 'postgres' as const;
  private closed = false;

  constructor(
    private readonly pool: pg.Pool,
    /** Host and port (or socket directory), for messages. */
    readonly target: string,
    /** What the migrations did when this store was opened (undefined if they were not run). */
    readonly migration?: MigrationResult,
  ) {}

  /** A rejection for a lost server, or the error itself. */
  private fault(err: unknown): unknown {
    if (isConnectionLoss(err)) return new StoreUnavailableError(this.target, describeDriverError(err));
    return err;
  }

  /** One statement outside a transaction. */
  private async run<R extends pg.QueryResultRow>(name: StatementName, values: unknown[]): Promise<pg.QueryResult<R>> {
    if (this.closed) throw new Error('the library store is closed');
    try {
      return await this.pool.query<R>(named(name, values));
    } catch (err) {
      throw this.fault(err);
    }
  }

  /**
   * Runs `work` in one transaction on one connection: COMMIT if it returns,
   * ROLLBACK if it throws. A connection that failed is destroyed, not reused.
   */
  private async transaction<T>(work: (c: Queryable) => Promise<T>): Promise<T> {
    if (this.closed) throw new Error('the library store is closed');
    let client: pg.PoolClient;
    try {
      client = await this.pool.connect();
    } catch (err) {
      throw this.fault(err);
    }
    let broken: Error | undefined;
    // A connection lost between two statements is reported on the client, which the pool
    // leaves without a listener while it is checked out: without this one the process would end.
    const onError = (err: Error) => (broken ??= err);
    client.on('error', onError);
    try {
      await client.query('BEGIN');
      const result = await work(client);
      await client.query('COMMIT');
      return result;
    } catch (err) {
      if (isConnectionLoss(err)) broken = err as Error;
      else await client.query('ROLLBACK').catch((e: Error) => (broken = e));
      throw this.fault(err);
    } finally {
      client.removeListener('error', onError);
      client.release(broken ?? false);
    }
  }

  async create(input: SaveInput): Promise<SaveResult> {
    const text = JSON.stringify(input.model);
    for (;;) {
      const id = newModelId();
      try {
        return await this.transaction(async (c) => insertNew(c, id, text, input));
      } catch (err) {
        // 80 random bits: a clash is all but impossible, but costs only another try.
        if ((err as { code?: unknown }).code === UNIQUE_VIOLATION && (err as { constraint?: unknown }).constraint === 'models_pkey') continue;
        throw err;
      }
    }
  }

  async save(id: string, baseRevision: number, input: SaveInput): Promise<SaveResult> {
    const text = JSON.stringify(input.model);
    try {
      return await this.transaction(async (c) => {
        const row = await c.query<{ revision: number }>(named('modelForUpdate', [id]));
        if (row.rows.length === 0) throw new ModelNotFoundError(id);
        const current = row.rows[0].revision;
        if (current !== baseRevision) throw new StaleRevisionError(id, baseRevision, current);
        const now = new Date().toISOString();
        const revision = current + 1;
        await c.query(named('insertRevision', [id, revision, text, input.author, input.message, now]));
        await c.query(named('updateModel', [listingName(input.name), now, input.author, revision, id]));
        return { id, revision };
      });
    } catch (err) {
      // The row lock makes this unreachable for our own writers; the unique key is the
      // last word if anything else wrote revision n+1: still exactly one winner.
      if ((err as { code?: unknown }).code === UNIQUE_VIOLATION && (err as { constraint?: unknown }).constraint === 'revisions_model_revision') {
        const now = await this.run<{ revision: number }>('latestRevision', [id]);
        throw new StaleRevisionError(id, baseRevision, now.rows[0]?.revision ?? baseRevision + 1);
      }
      throw err;
    }
  }

  async seedOnce(marker: string, inputs: readonly SaveInput[]): Promise<number> {
    const texts = inputs.map((input) => JSON.stringify(input.model)); // a model that cannot be written fails before anything is
    return this.transaction(async (c) => {
      await c.query(named('seedLock', [SEED_LOCK_KEY]));
      if ((await c.query(named('getMeta', [marker]))).rows.length > 0) return 0;
      // Other writers wait until the seeding commits, so "empty" stays true while we fill it.
      await c.query('LOCK TABLE models IN SHARE ROW EXCLUSIVE MODE');
      let created = 0;
      if ((await c.query<{ n: number }>(named('count', []))).rows[0].n === 0) {
        for (let k = 0; k < inputs.length; k++) {
          await insertNew(c, newModelId(), texts[k], inputs[k]);
          created++;
        }
      }
      await c.query(named('setMeta', [marker, new Date().toISOString()]));
      return created;
    });
  }

  async list(filter: ListFilter): Promise<ModelSummary[]> {
    const q = filter.q?.trim() ?? '';
    const rows =
      q === ''
        ? await this.run<ModelRow>('list', [filter.archived])
        : await this.run<ModelRow>('search', [filter.archived, '%' + q.replace(/[\\%_]/g, (ch) => '\\' + ch) + '%']);
    return rows.rows.map((r) => modelSummary(r, r.archived));
  }

  async get(id: string, revision?: number): Promise<StoredRevision | undefined> {
    const res = await this.run<{ revision: number; model: string; author: string; message: string; created: string; archived: boolean }>('getRevision', [
      id,
      revision ?? null,
    ]);
    const r = res.rows[0];
    if (r === undefined) return undefined;
    const history = await historyOf(this.pool, id, r, (e) => this.fault(e));
    return {
      id,
      revision: r.revision,
      model: JSON.parse(r.model),
      author: r.author,
      message: r.message,
      created: r.created,
      archived: r.archived,
      review: { state: currentState(history), history },
    };
  }

  async revisions(id: string): Promise<RevisionInfo[] | undefined> {
    // Every model has its revision 1, so no rows means no model.
    const res = await this.run<RevisionInfo & { review_state: ReviewState }>('revisions', [id]);
    if (res.rows.length === 0) return undefined;
    return res.rows.map((r) => ({ revision: r.revision, author: r.author, message: r.message, created: r.created, reviewState: r.review_state }));
  }

  async latestRevision(id: string): Promise<number | undefined> {
    return (await this.run<{ revision: number }>('latestRevision', [id])).rows[0]?.revision;
  }

  /**
   * One transaction: the model's row is locked (FOR UPDATE), so a save or another
   * review change on this model, from any process, waits; the rules are checked
   * against the history read under that lock, then the change is inserted.
   */
  async review(input: ReviewInput): Promise<ReviewResult> {
    return this.transaction(async (c) => {
      const row = await c.query<{ revision: number }>(named('modelForUpdate', [input.id]));
      if (row.rows.length === 0) throw new ModelNotFoundError(input.id);
      const rev = (await c.query<{ revision: number; author: string; created: string }>(named('revisionRow', [input.id, input.revision]))).rows[0];
      if (rev === undefined) throw new RevisionNotFoundError(input.id, input.revision);
      const current = row.rows[0].revision;
      if (current !== input.revision) throw new ReviewStaleError(input.id, input.revision, current);
      const history = await historyOf(c, input.id, rev);
      const change = reviewChange(history, input);
      await c.query(named('insertReview', [input.id, input.revision, history.length, change.state, change.by, change.at, change.note]));
      history.push(change);
      return { id: input.id, revision: input.revision, state: input.state, history };
    });
  }

  async addKey(key: NewKey): Promise<KeyInfo> {
    return this.transaction(async (c) => {
      await c.query(named('keysLock', [KEYS_LOCK_KEY]));
      const live = await c.query<KeyRow>(named('activeKeys', []));
      if (live.rows.some((k) => samePerson(k.name, key.name))) throw new KeyNameTakenError(key.name);
      await c.query(named('insertKey', [key.id, key.name, key.role, key.created, key.salt, key.hash, key.params]));
      return newKeyInfo(key);
    });
  }

  async keys(): Promise<KeyInfo[]> {
    return (await this.run<KeyRow>('keys', [])).rows.map(keyInfo);
  }

  async keyRecord(id: string): Promise<KeyRecord | undefined> {
    const row = (await this.run<KeyRow>('keyById', [id])).rows[0];
    return row && keyRecord(row);
  }

  async revokeKey(idOrName: string, at: string): Promise<KeyInfo | undefined> {
    return this.transaction(async (c) => {
      await c.query(named('keysLock', [KEYS_LOCK_KEY]));
      const row =
        (await c.query<KeyRow>(named('keyById', [idOrName]))).rows[0] ??
        (await c.query<KeyRow>(named('activeKeys', []))).rows.find((k) => samePerson(k.name, idOrName));
      if (!row) return undefined;
      await c.query(named('revokeKey', [at, row.id]));
      return keyInfo((await c.query<KeyRow>(named('keyById', [row.id]))).rows[0]);
    });
  }

  async hasKeys(): Promise<boolean> {
    return (await this.run('anyKey', [])).rows.length > 0;
  }

  async setArchived(id: string, archived: boolean): Promise<{ id: string; archived: boolean } | undefined> {
    const res = await this.run('setArchived', [archived, id]);
    return res.rowCount === 0 ? undefined : { id, archived };
  }

  async count(): Promise<number> {
    return (await this.run<{ n: number }>('count', [])).rows[0].n;
  }

  async getMeta(key: string): Promise<string | undefined> {
    return (await this.run<{ value: string }>('getMeta', [key])).rows[0]?.value;
  }

  async setMeta(key: string, value: string): Promise<void> {
    await this.run('setMeta', [key, value]);
  }

  async ready(): Promise<boolean> {
    if (this.closed) return false;
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<boolean>((resolve) => (timer = setTimeout(() => resolve(false), READY_TIMEOUT_MS)));
    const probe = this.pool.query('SELECT 1').then(
      () => true,
      () => false,
    );
    try {
      return await Promise.race([probe, timeout]);
    } finally {
      clearTimeout(timer);
    }
  }

  /**
   * One statement of another part of the server kept in this database (the
   * sign-in sessions, pg-sessions.ts), by a name of its own (prepared per
   * connection); a lost server rejects with StoreUnavailableError.
   */
  async query<R extends pg.QueryResultRow>(name: string, text: string, values: unknown[]): Promise<pg.QueryResult<R>> {
    if (this.closed) throw new Error('the library store is closed');
    try {
      return await this.pool.query<R>({ name: `sn_x_${name}`, text, values });
    } catch (err) {
      throw this.fault(err);
    }
  }

  /**
   * Runs `work` in one transaction on one of the pool's connections (for the
   * migrate command's bulk copy); a lost server rejects with StoreUnavailableError.
   */
  withTransaction<T>(work: (client: Queryable) => Promise<T>): Promise<T> {
    return this.transaction(work);
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    await this.pool.end();
  }
}

/** A revision's review history, oldest first: the save (prepared), then every change. */
async function historyOf(
  q: Queryable | pg.Pool,
  id: string,
  rev: { revision: number; author: string; created: string },
  fault: (err: unknown) => unknown = (err) => err,
): Promise<ReviewEntry[]> {
  const history: ReviewEntry[] = [preparedEntry(rev)];
  let res: pg.QueryResult<ReviewRow>;
  try {
    res = await q.query(named('reviews', [id, rev.revision]));
  } catch (err) {
    throw fault(err);
  }
  for (const r of res.rows) history.push({ state: r.state as ReviewEntry['state'], by: r.actor, at: r.at, note: r.note });
  return history;
}

/** Inserts a new model at revision 1 (inside the caller's transaction). */
async function insertNew(c: Queryable, id: string, text: string, input: SaveInput): Promise<SaveResult> {
  const now = new Date().toISOString();
  await c.query(named('insertModel', [id, listingName(input.name), now, input.author]));
  await c.query(named('insertRevision', [id, 1, text, input.author, input.message, now]));
  return { id, revision: 1 };
}

/**
 * The model's name as kept in the listing column: PostgreSQL's text holds no NUL character,
 * so one (a model may carry it in its name; its stored JSON text escapes it and keeps it
 * exactly) shows there as U+FFFD.
 */
function listingName(name: string): string {
  return name.includes('\u0000') ? name.replaceAll('\u0000', '\uFFFD') : name;
}
