/**
 * What the SQLite and the PostgreSQL store share, so that both map rows to the
 * wire alike and apply one review rule set: a model's row and its listing line,
 * the stored key's row and its wire forms, a review change's row, the review state of a revision in SQL (the
 * same text in both dialects), and a review change checked against the rules.
 */
import type { KeyRole, ReviewEntry, ReviewState } from '../../shared-types/library.js';
import { reviewRefusal } from './review-rules.js';
import { ReviewRefusedError, type KeyInfo, type KeyRecord, type ModelSummary, type NewKey, type ReviewInput } from './store.js';

/** A row of the models table as both stores select it, but `archived` (each dialect has its own type for it). */
export interface ModelRowCommon {
  id: string;
  name: string;
  updated: string;
  author: string;
  revision: number;
  /** Selected by the listings; absent where only the row itself is read. */
  review_state?: ReviewState;
}

/** A model's line of the listing; a row read without its review state is prepared. */
export function modelSummary(row: ModelRowCommon, archived: boolean): ModelSummary {
  return {
    id: row.id,
    name: row.name,
    author: row.author,
    updated: row.updated,
    revision: row.revision,
    archived,
    reviewState: row.review_state ?? 'prepared',
  };
}

/** A row of the keys table, as both stores select it. */
export interface KeyRow {
  id: string;
  name: string;
  role: KeyRole;
  created: string;
  revoked: string | null;
  salt: string;
  hash: string;
  params: string;
}

/** The columns of a KeyRow, in the order both stores select them. */
export const KEY_COLUMNS = 'id, name, role, created, revoked, salt, hash, params';

/** A key row's info (everything but the hash material). */
export function keyInfo(row: KeyRow): KeyInfo {
  return { id: row.id, name: row.name, role: row.role, created: row.created, revoked: row.revoked };
}

/** A key row as stored: its info and its hash material. */
export function keyRecord(row: KeyRow): KeyRecord {
  return { ...keyInfo(row), salt: row.salt, hash: row.hash, params: row.params };
}

/** The info of a key just added (not revoked). */
export function newKeyInfo(key: NewKey): KeyInfo {
  return { id: key.id, name: key.name, role: key.role, created: key.created, revoked: null };
}

/** A review change as both stores read it (the reviews table's own columns). */
export interface ReviewRow {
  state: ReviewState;
  actor: string;
  at: string;
  note: string | null;
}

/** SQL for the review state of a revision: its last review change, else prepared. */
export const STATE_OF = (model: string, revision: string) =>
  `COALESCE((SELECT state FROM reviews r WHERE r.model_id = ${model} AND r.revision = ${revision} ORDER BY r.seq DESC LIMIT 1), 'prepared')`;

/** The first entry of every revision's review history: its save. */
export function preparedEntry(rev: { author: string; created: string }): ReviewEntry {
  return { state: 'prepared', by: rev.author, at: rev.created, note: null };
}

/**
 * The review change `input` asks of a revision with `history`, stamped now;
 * throws ReviewRefusedError where the rules refuse it. A blank note is none.
 */
export function reviewChange(history: readonly ReviewEntry[], input: ReviewInput): ReviewEntry {
  const refusal = reviewRefusal(history, input.state, input.by);
  if (refusal) throw new ReviewRefusedError(refusal.kind, refusal.message);
  const note = input.note === null || input.note.trim() === '' ? null : input.note;
  return { state: input.state, by: input.by, at: new Date().toISOString(), note };
}
