/**
 * The review's wire types on the client side (identity, review states and
 * history, the live events), typed here from the review API's spec until the
 * library's shared types carry them, and read tolerantly: an older server
 * answers without these fields, and every reader then gives null (never
 * throws), so the screen simply shows no review.
 */

/** The review states of one revision, in the order a revision moves through them. */
export const REVIEW_STATES = ['prepared', 'checked', 'approved', 'returned'] as const;
export type ReviewState = (typeof REVIEW_STATES)[number];

/** The roles of a personal key: an editor saves; a checker also checks and returns; an approver also approves. */
export const ROLES = ['editor', 'checker', 'approver'] as const;
export type Role = (typeof ROLES)[number];

/** Who is signed in with a personal key (null for the team token, an open server, or signed out). */
export interface Identity {
  readonly name: string;
  readonly role: Role;
}

/** One step of a revision's review: the save itself (prepared), or a state change. */
export interface ReviewEntry {
  readonly state: ReviewState;
  readonly by: string;
  /** ISO 8601 time (UTC). */
  readonly at: string;
  readonly note: string | null;
}

/** A revision's review: its state and every step so far, oldest first. */
export interface Review {
  readonly state: ReviewState;
  readonly history: readonly ReviewEntry[];
}

/** `event: revision`: someone saved a revision of the model. */
export interface RevisionEvent {
  readonly id: string;
  readonly revision: number;
  readonly author: string;
  readonly at: string;
}

/** `event: review`: a revision's review state changed. */
export interface ReviewEvent {
  readonly id: string;
  readonly revision: number;
  readonly state: ReviewState;
  readonly by: string;
  readonly at: string;
  readonly note: string | null;
}

const isRecord = (x: unknown): x is Record<string, unknown> => typeof x === 'object' && x !== null && !Array.isArray(x);
const isRevision = (x: unknown): x is number => typeof x === 'number' && Number.isInteger(x) && x > 0;

/**
 * Whether the server records reviews: its `GET /api/session` answer carries `identity` (null included).
 * An older server's has no such field, and then the client opens no live stream (its route would be a 404).
 */
export function hasReviews(session: unknown): boolean {
  return isRecord(session) && 'identity' in session;
}

/** A review state, or null for anything else (absent, misspelt). */
export function readState(x: unknown): ReviewState | null {
  return typeof x === 'string' && (REVIEW_STATES as readonly string[]).includes(x) ? (x as ReviewState) : null;
}

/** A role, or null. */
export function readRole(x: unknown): Role | null {
  return typeof x === 'string' && (ROLES as readonly string[]).includes(x) ? (x as Role) : null;
}

/** The identity of `GET /api/session`'s answer, or null (absent on an older server, or not a personal key). */
export function readIdentity(session: unknown): Identity | null {
  const id = isRecord(session) ? session.identity : null;
  if (!isRecord(id) || typeof id.name !== 'string' || id.name === '') return null;
  const role = readRole(id.role);
  return role ? { name: id.name, role } : null;
}

function readEntry(x: unknown): ReviewEntry | null {
  if (!isRecord(x)) return null;
  const state = readState(x.state);
  if (!state || typeof x.by !== 'string' || typeof x.at !== 'string') return null;
  return { state, by: x.by, at: x.at, note: typeof x.note === 'string' && x.note !== '' ? x.note : null };
}

/**
 * The review of a stored revision (`GET …/revisions/{rev}` carries `review`), or of the
 * answer of `POST …/review` (which carries `state` and `history` at the top). Null when absent.
 */
export function readReview(x: unknown): Review | null {
  if (!isRecord(x)) return null;
  const r = isRecord(x.review) ? x.review : x;
  const state = readState(r.state);
  if (!state) return null;
  const history = Array.isArray(r.history) ? r.history.map(readEntry).filter((e): e is ReviewEntry => e !== null) : [];
  return { state, history };
}

/** The `reviewState` of a library list item or a revision list item, or null. */
export function readReviewState(item: unknown): ReviewState | null {
  return isRecord(item) ? readState(item.reviewState) : null;
}

/** The data of an `event: revision`, or null when it is not one. */
export function readRevisionEvent(data: string): RevisionEvent | null {
  const x = parse(data);
  if (!x || typeof x.id !== 'string' || !isRevision(x.revision) || typeof x.author !== 'string') return null;
  return { id: x.id, revision: x.revision, author: x.author, at: typeof x.at === 'string' ? x.at : '' };
}

/** The data of an `event: review`, or null when it is not one. */
export function readReviewEvent(data: string): ReviewEvent | null {
  const x = parse(data);
  const state = x ? readState(x.state) : null;
  if (!x || !state || typeof x.id !== 'string' || !isRevision(x.revision) || typeof x.by !== 'string') return null;
  return { id: x.id, revision: x.revision, state, by: x.by, at: typeof x.at === 'string' ? x.at : '', note: typeof x.note === 'string' && x.note !== '' ? x.note : null };
}

function parse(data: string): Record<string, unknown> | null {
  try {
    const x: unknown = JSON.parse(data);
    return isRecord(x) ? x : null;
  } catch {
    return null;
  }
}
