/**
 * The PostgreSQL library's schema, as numbered migrations.
 *
 * Each migration runs once per database, in order, and is recorded in
 * `schema_migrations`. `migrate` runs whatever is missing in one transaction that
 * first takes a transaction-level advisory lock, so servers started together on
 * one database migrate it once between them (the others wait, then find nothing
 * to do), and a migration that fails leaves the schema as it was.
 *
 * Never edit a migration that has shipped: add the next one.
 */
import type pg from 'pg';

export interface Migration {
  readonly version: number;
  /** A few words for the schema_migrations row and the log. */
  readonly name: string;
  readonly sql: string;
}

/**
 * Texts are compared byte for byte (COLLATE "C") wherever they are ordered, so
 * the listing's order does not hang on the database's locale and equals
 * SQLite's. Times are the ISO 8601 text the server writes (as in SQLite), so a
 * migrated library keeps them character for character.
 */
export const MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    name: 'models, revisions, meta',
    sql: `
CREATE TABLE models (
  id        text COLLATE "C" PRIMARY KEY,
  name      text NOT NULL,
  created   text COLLATE "C" NOT NULL,
  updated   text COLLATE "C" NOT NULL,
  author    text NOT NULL,
  revision  integer NOT NULL CHECK (revision >= 1),
  archived  boolean NOT NULL DEFAULT false
);
CREATE TABLE revisions (
  model_id  text COLLATE "C" NOT NULL REFERENCES models(id),
  revision  integer NOT NULL CHECK (revision >= 1),
  model     text NOT NULL,
  author    text NOT NULL,
  message   text NOT NULL,
  created   text COLLATE "C" NOT NULL,
  CONSTRAINT revisions_model_revision UNIQUE (model_id, revision)
);
CREATE INDEX models_listing ON models (archived, updated DESC, id);
CREATE TABLE meta (
  key    text PRIMARY KEY,
  value  text NOT NULL
);`,
  },
  {
    version: 2,
    name: 'review changes, personal keys',
    sql: `
CREATE TABLE reviews (
  model_id  text COLLATE "C" NOT NULL,
  revision  integer NOT NULL,
  seq       integer NOT NULL CHECK (seq >= 1),
  state     text NOT NULL CHECK (state IN ('checked', 'approved', 'returned')),
  actor     text NOT NULL,
  at        text COLLATE "C" NOT NULL,
  note      text,
  PRIMARY KEY (model_id, revision, seq),
  FOREIGN KEY (model_id, revision) REFERENCES revisions (model_id, revision)
);
CREATE TABLE keys (
  id        text COLLATE "C" PRIMARY KEY,
  name      text NOT NULL,
  role      text NOT NULL CHECK (role IN ('editor', 'checker', 'approver')),
  created   text COLLATE "C" NOT NULL,
  revoked   text,
  salt      text NOT NULL,
  hash      text NOT NULL,
  params    text NOT NULL
);`,
  },
  {
    version: 3,
    name: 'sign-in sessions',
    sql: `
CREATE TABLE sessions (
  digest     text COLLATE "C" PRIMARY KEY,
  key_id     text,
  created    bigint NOT NULL,
  last_used  bigint NOT NULL
);
CREATE INDEX sessions_created ON sessions (created);`,
  },
];

/** Key of the advisory lock held while migrating ("ShNt" and 1). */
export const MIGRATION_LOCK_KEY = 0x53684e74_01;

/**
 * The database holds tables of another program, or a newer Shaftnet's schema:
 * the server will not change it. The message says what to do.
 */
export class SchemaRefusedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SchemaRefusedError';
  }
}

/** What `migrate` did: the version before and after, and the migrations applied. */
export interface MigrationResult {
  readonly from: number;
  readonly to: number;
  readonly applied: readonly number[];
}

/**
 * Brings the database to the newest schema this program knows, once, under the
 * advisory lock; refuses a database with a newer schema or with a `models` table
 * that no migration of ours made.
 */
export async function migrate(client: pg.ClientBase, migrations: readonly Migration[] = MIGRATIONS): Promise<MigrationResult> {
  const newest = migrations.reduce((v, m) => Math.max(v, m.version), 0);
  await client.query('BEGIN');
  try {
    await client.query('SELECT pg_advisory_xact_lock($1)', [MIGRATION_LOCK_KEY]);
    const tables = await client.query<{ name: string }>(
      "SELECT table_name AS name FROM information_schema.tables WHERE table_schema = current_schema() AND table_name IN ('schema_migrations', 'models')",
    );
    const names = new Set(tables.rows.map((r) => r.name));
    if (names.has('models') && !names.has('schema_migrations')) {
      throw new SchemaRefusedError(
        'this database holds a table "models" that Shaftnet did not make (no schema_migrations table beside it): it belongs to another program, and Shaftnet will not change it. Give Shaftnet a database of its own.',
      );
    }
    await client.query(
      'CREATE TABLE IF NOT EXISTS schema_migrations (version integer PRIMARY KEY, name text NOT NULL, applied timestamptz NOT NULL DEFAULT now())',
    );
    const done = await client.query<{ version: number }>('SELECT version FROM schema_migrations ORDER BY version');
    const have = new Set(done.rows.map((r) => r.version));
    const from = done.rows.reduce((v, r) => Math.max(v, r.version), 0);
    if (from > newest) {
      throw new SchemaRefusedError(
        `this database was migrated by a newer Shaftnet (schema ${from}; this one knows up to ${newest}): run that version, or restore the backup taken before the upgrade.`,
      );
    }
    const applied: number[] = [];
    for (const m of [...migrations].sort((a, b) => a.version - b.version)) {
      if (have.has(m.version)) continue;
      await client.query(m.sql);
      await client.query('INSERT INTO schema_migrations (version, name) VALUES ($1, $2)', [m.version, m.name]);
      applied.push(m.version);
    }
    await client.query('COMMIT');
    return { from, to: Math.max(from, newest), applied };
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw err;
  }
}
