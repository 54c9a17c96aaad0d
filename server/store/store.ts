/**
 * The model library: one interface, implemented once in `sqlite-store.ts`.
 *
 * Every save is a new immutable revision (1, 2, 3, ...) with its author, message
 * and time. Nothing is ever deleted: archiving only hides a model from the
 * default listing. The interface is synchronous because its one implementation
 * (better-sqlite3) is, and a save is acknowledged only after it is durable.
 */
import type {
  ModelSummary as WireModelSummary,
  RevisionInfo as WireRevisionInfo,
  Saved,
  StoredModel,
} from '../../shared-types/library.js';

/** One line of the library listing (the wire type of shared-types/library.ts). */
export type ModelSummary = Readonly<WireModelSummary>;

/** One revision without its model (shared-types/library.ts). */
export type RevisionInfo = Readonly<WireRevisionInfo>;

/**
 * One revision with its model, as stored (units as the user typed them): the
 * wire's StoredModel, with the model as an unchecked JSON value.
 */
export type StoredRevision = Readonly<Omit<StoredModel, 'model'> & { model: unknown }>;

/** What a save answers (shared-types/library.ts). */
export type SaveResult = Readonly<Saved>;

/** What a save needs. */
export interface SaveInput {
  readonly model: unknown;
  /** The model's display name, kept beside it for listing and search. */
  readonly name: string;
  readonly author: string;
  readonly message: string;
}

/** Filter of the listing. */
export interface ListFilter {
  /** Case-insensitive substring of the name; empty or absent lists all. */
  readonly q?: string;
  /** true: archived models only; false: active models only. */
  readonly archived: boolean;
}

/** Thrown by `save` when the base revision is not the latest. */
export class StaleRevisionError extends Error {
  constructor(
    readonly id: string,
    readonly baseRevision: number,
    readonly currentRevision: number,
  ) {
    super(`model ${id} is at revision ${currentRevision}, not ${baseRevision}`);
    this.name = 'StaleRevisionError';
  }
}

/** Thrown by `save` for an id that does not exist. */
export class ModelNotFoundError extends Error {
  constructor(readonly id: string) {
    super(`no model ${id}`);
    this.name = 'ModelNotFoundError';
  }
}

/**
 * Thrown by every write when the library's disk (or its file system's quota) is
 * full. The transaction was rolled back: nothing of that write was saved, and the
 * library is as it was. The same write succeeds once space is freed; the store
 * needs no restart.
 */
export class StoreFullError extends Error {
  constructor(
    /** The library file that could not grow. */
    readonly file: string,
  ) {
    super(`nothing was saved: the disk that holds the library ${file} is full`);
    this.name = 'StoreFullError';
  }
}

export interface ModelStore {
  /** Creates a model at revision 1. */
  create(input: SaveInput): SaveResult;
  /** Saves revision baseRevision + 1; throws StaleRevisionError if baseRevision is not the latest. */
  save(id: string, baseRevision: number, input: SaveInput): SaveResult;
  /** Lists models, most recently updated first. */
  list(filter: ListFilter): ModelSummary[];
  /** The latest revision, or the given one; undefined if either does not exist. */
  get(id: string, revision?: number): StoredRevision | undefined;
  /** Every revision of a model, newest first; undefined for an unknown id. */
  revisions(id: string): RevisionInfo[] | undefined;
  /** Archives or restores; undefined for an unknown id. */
  setArchived(id: string, archived: boolean): { id: string; archived: boolean } | undefined;
  /** How many models (archived or not) the library holds. */
  count(): number;
  /** A flag that survives restarts (e.g. "demos seeded"). */
  getMeta(key: string): string | undefined;
  setMeta(key: string, value: string): void;
  /**
   * Creates `inputs` as new models, all or none, in one transaction that holds the
   * write lock throughout, unless the flag `marker` is already set; then sets it.
   * Only into an empty library: a library that holds models but not the flag gets
   * the flag and nothing else. Returns how many models were created (0 when the
   * flag was set, by this process or another one).
   */
  seedOnce(marker: string, inputs: readonly SaveInput[]): number;
  close(): void;
}
