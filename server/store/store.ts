/**
 * The model library: one interface, implemented once in `sqlite-store.ts`.
 *
 * Every save is a new immutable revision (1, 2, 3, ...) with its author, message
 * and time. Nothing is ever deleted: archiving only hides a model from the
 * default listing. The interface is synchronous because its one implementation
 * (better-sqlite3) is, and a save is acknowledged only after it is durable.
 */
import type {
  KeyInfo as WireKeyInfo,
  KeyRole,
  ModelSummary as WireModelSummary,
  ReviewResult as WireReviewResult,
  ReviewTarget,
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

/** A personal key as listed (shared-types/library.ts): never its secret or hash. */
export type KeyInfo = Readonly<WireKeyInfo>;

/** A personal key as stored: its info and the scrypt hash of its secret. */
export interface KeyRecord extends KeyInfo {
  /** The per-key salt, base64url. */
  readonly salt: string;
  /** scrypt(secret, salt) with `params`, base64url. */
  readonly hash: string;
  /** scrypt's cost parameters as "N,r,p" (kept per key, so the cost can change later). */
  readonly params: string;
}

/** What `addKey` stores. */
export interface NewKey {
  readonly id: string;
  readonly name: string;
  readonly role: KeyRole;
  readonly created: string;
  readonly salt: string;
  readonly hash: string;
  readonly params: string;
}

/**
 * The personal keys. Plain data in and out; the hashing is in keys.ts.
 * Revocation marks a key (it stays listed) and takes effect at the key's next use:
 * the server reads the row on every request made with the key or its session.
 */
export interface KeyStore {
  /** Stores a new key; throws KeyNameTakenError when a key not revoked has that name (any case). */
  addKey(key: NewKey): KeyInfo;
  /** Every key, revoked ones too, oldest first. */
  keys(): KeyInfo[];
  /** One key with its hash, revoked or not; undefined for an unknown id. */
  keyRecord(id: string): KeyRecord | undefined;
  /**
   * Revokes the key with this id, or else the key not revoked with this name (any case);
   * answers it (a key already revoked keeps its time), or undefined when none matches.
   */
  revokeKey(idOrName: string, at: string): KeyInfo | undefined;
  /** True when the library holds any personal key, revoked or not: the server then needs a key. */
  hasKeys(): boolean;
}

/** Thrown by `addKey` when a key not revoked already has the name. */
export class KeyNameTakenError extends Error {
  constructor(readonly keyName: string) {
    super(`a key named "${keyName}" exists and is not revoked; revoke it first, or choose another name`);
    this.name = 'KeyNameTakenError';
  }
}

/** What a review change stores. */
export interface ReviewInput {
  readonly id: string;
  readonly revision: number;
  readonly state: ReviewTarget;
  /** The personal key's name. */
  readonly by: string;
  /** Required (non-empty) for `returned`; null or empty otherwise means none. */
  readonly note: string | null;
}

/** What a review change answers (shared-types/library.ts). */
export type ReviewResult = Readonly<WireReviewResult>;

/** Thrown by `review` for a revision that does not exist (the model does). */
export class RevisionNotFoundError extends Error {
  constructor(
    readonly id: string,
    readonly revision: number,
  ) {
    super(`model ${id} has no revision ${revision}`);
    this.name = 'RevisionNotFoundError';
  }
}

/** Thrown by `review` when the revision is not the model's latest. */
export class ReviewStaleError extends Error {
  constructor(
    readonly id: string,
    readonly revision: number,
    readonly currentRevision: number,
  ) {
    super(`revision ${revision} of model ${id} is not the latest (${currentRevision}): only the latest revision is reviewed`);
    this.name = 'ReviewStaleError';
  }
}

/** Thrown by `review` for a state that cannot follow the current one, or a four-eyes breach. */
export class ReviewRefusedError extends Error {
  constructor(
    readonly kind: 'state' | 'four-eyes',
    message: string,
  ) {
    super(message);
    this.name = 'ReviewRefusedError';
  }
}

export interface ModelStore extends KeyStore {
  /** Creates a model at revision 1. */
  create(input: SaveInput): SaveResult;
  /** Saves revision baseRevision + 1; throws StaleRevisionError if baseRevision is not the latest. */
  save(id: string, baseRevision: number, input: SaveInput): SaveResult;
  /** Lists models, most recently updated first. */
  list(filter: ListFilter): ModelSummary[];
  /** The latest revision, or the given one; undefined if either does not exist. */
  get(id: string, revision?: number): StoredRevision | undefined;
  /** The number of a model's latest revision, without reading it; undefined for an unknown id. */
  latestRevision(id: string): number | undefined;
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
  /**
   * Records a review change of the model's latest revision, in one write transaction
   * that checks it against the rules (review-rules.ts). Throws ModelNotFoundError,
   * RevisionNotFoundError, ReviewStaleError (not the latest) or ReviewRefusedError.
   */
  review(input: ReviewInput): ReviewResult;
  close(): void;
}
