/**
 * The library seen asynchronously: the operations of ModelStore (store.ts), each
 * answering a Promise, so that one interface covers the embedded SQLite store
 * (synchronous, wrapped by `asyncFromSync`) and a store in a database server
 * (pg-store.ts), whose every call crosses the network.
 *
 * Semantics are ModelStore's, word for word (tests/store/contract.test.ts holds
 * both stores to them); errors arrive as rejections: StaleRevisionError,
 * ModelNotFoundError, StoreFullError (SQLite), StoreUnavailableError (a database
 * server lost while running, store-errors.ts).
 */
import type {
  KeyInfo,
  KeyRecord,
  ListFilter,
  ModelStore,
  ModelSummary,
  NewKey,
  ReviewInput,
  ReviewResult,
  RevisionInfo,
  SaveInput,
  SaveResult,
  StoredRevision,
} from './store.js';

export interface AsyncModelStore {
  /** Which store this is, for logs and health: 'sqlite' or 'postgres'. */
  readonly kind: 'sqlite' | 'postgres';
  /** Creates a model at revision 1. */
  create(input: SaveInput): Promise<SaveResult>;
  /** Saves revision baseRevision + 1; rejects with StaleRevisionError if baseRevision is not the latest. */
  save(id: string, baseRevision: number, input: SaveInput): Promise<SaveResult>;
  /** Lists models, most recently updated first. */
  list(filter: ListFilter): Promise<ModelSummary[]>;
  /** The latest revision, or the given one; undefined if either does not exist. */
  get(id: string, revision?: number): Promise<StoredRevision | undefined>;
  /** The number of a model's latest revision, without reading it; undefined for an unknown id. */
  latestRevision(id: string): Promise<number | undefined>;
  /** Every revision of a model, newest first; undefined for an unknown id. */
  revisions(id: string): Promise<RevisionInfo[] | undefined>;
  /** Archives or restores; undefined for an unknown id. */
  setArchived(id: string, archived: boolean): Promise<{ id: string; archived: boolean } | undefined>;
  /** How many models (archived or not) the library holds. */
  count(): Promise<number>;
  /** A flag that survives restarts (e.g. "demos seeded"). */
  getMeta(key: string): Promise<string | undefined>;
  setMeta(key: string, value: string): Promise<void>;
  /** ModelStore.seedOnce: all or none, once per library, even with several processes starting together. */
  seedOnce(marker: string, inputs: readonly SaveInput[]): Promise<number>;
  /** ModelStore.review: one transaction, the rules checked inside it. */
  review(input: ReviewInput): Promise<ReviewResult>;
  /** KeyStore.addKey: rejects with KeyNameTakenError when a key not revoked has the name. */
  addKey(key: NewKey): Promise<KeyInfo>;
  /** KeyStore.keys: every key, revoked ones too, oldest first. */
  keys(): Promise<KeyInfo[]>;
  /** KeyStore.keyRecord: one key with its hash; undefined for an unknown id. */
  keyRecord(id: string): Promise<KeyRecord | undefined>;
  /** KeyStore.revokeKey: by id, or else by the name of a key not revoked. */
  revokeKey(idOrName: string, at: string): Promise<KeyInfo | undefined>;
  /** KeyStore.hasKeys: any personal key, revoked or not. */
  hasKeys(): Promise<boolean>;
  /**
   * Whether the library answers now (for /api/health): true or false, never a
   * rejection, and bounded in time.
   */
  ready(): Promise<boolean>;
  /** Closes the store (the pool's connections); later calls reject. */
  close(): Promise<void>;
}

/** True for a store that is already asynchronous (it says which kind it is). */
export function isAsyncStore(store: ModelStore | AsyncModelStore): store is AsyncModelStore {
  return 'kind' in store && 'ready' in store;
}

/**
 * The asynchronous face of a synchronous store: each call runs at once (the
 * answer is ready when the Promise is made) and a throw becomes a rejection.
 */
export function asyncFromSync(store: ModelStore): AsyncModelStore {
  // `async` turns every throw into a rejection; nothing here awaits anything else.
  return {
    kind: 'sqlite',
    create: async (input) => store.create(input),
    save: async (id, baseRevision, input) => store.save(id, baseRevision, input),
    list: async (filter) => store.list(filter),
    get: async (id, revision) => store.get(id, revision),
    latestRevision: async (id) => store.latestRevision(id),
    revisions: async (id) => store.revisions(id),
    setArchived: async (id, archived) => store.setArchived(id, archived),
    count: async () => store.count(),
    getMeta: async (key) => store.getMeta(key),
    setMeta: async (key, value) => store.setMeta(key, value),
    seedOnce: async (marker, inputs) => store.seedOnce(marker, inputs),
    review: async (input) => store.review(input),
    addKey: async (key) => store.addKey(key),
    keys: async () => store.keys(),
    keyRecord: async (id) => store.keyRecord(id),
    revokeKey: async (idOrName, at) => store.revokeKey(idOrName, at),
    hasKeys: async () => store.hasKeys(),
    ready: async () => {
      try {
        store.count();
        return true;
      } catch {
        return false;
      }
    },
    close: async () => store.close(),
  };
}

/** Where the library is: a PostgreSQL database (`database`, a postgres:// URL) or else SQLite in `dataDir`. */
export interface LibraryLocation {
  readonly database?: string;
  readonly dataDir: string;
}

/**
 * Opens the library the server was told to use: PostgreSQL when a database URL is
 * given (`--database`, SHAFTNET_DATABASE), else the SQLite file in the data
 * directory. Rejects with what the opener throws (StoreConnectError,
 * SchemaRefusedError, LibraryOpenError): the caller prints it and exits.
 * PostgreSQL's driver is loaded only when it is used.
 */
export async function openLibrary(where: LibraryLocation): Promise<AsyncModelStore> {
  if (where.database !== undefined && where.database !== '') {
    const { openPgStore } = await import('./pg-store.js');
    return openPgStore(where.database);
  }
  const { openSqliteStore } = await import('./sqlite-store.js');
  return asyncFromSync(openSqliteStore(where.dataDir));
}
