/**
 * What the review panel and the live notice say and allow, as pure functions
 * (tested in tests/client/review.test.ts): which of Check, Approve and Return
 * a signed-in key may press, and why not; the server's refusals in plain words;
 * the notice for a live event; the wait before the live stream reconnects.
 *
 * The server decides; these rules only mirror its spec so that a button the
 * server would refuse is not offered. Four-eyes (common practice, no source):
 * nobody checks, approves or returns a revision they saved (the checker may also
 * approve, with an approver's key).
 */
import type { Identity, Review, ReviewEvent, ReviewState, RevisionEvent } from './review-types.js';

/** The state changes a reviewer can ask for (the body's `state`). */
export type ReviewAction = 'checked' | 'approved' | 'returned';
export const REVIEW_ACTIONS: readonly ReviewAction[] = ['checked', 'approved', 'returned'];

/** The button of each action. */
export const ACTION_LABELS: Readonly<Record<ReviewAction, string>> = { checked: 'Check', approved: 'Approve', returned: 'Return' };

/** A state as the screen names it. */
export const STATE_LABELS: Readonly<Record<ReviewState, string>> = {
  prepared: 'Prepared',
  checked: 'Checked',
  approved: 'Approved',
  returned: 'Returned',
};

/** Whether an action's button is enabled, and if not, why (a sentence for its title and the panel). */
export interface ActionState {
  readonly enabled: boolean;
  readonly why: string;
}

/** What the enablement depends on. */
export interface ReviewContext {
  /** The signed-in personal key, or null (team token, open server). */
  readonly identity: Identity | null;
  /** The shown revision's review, or null when the server has none (an older server). */
  readonly review: Review | null;
  /** Who saved the shown revision (the stored model's author). */
  readonly author: string;
  /** The revision shown. */
  readonly revision: number;
  /** The model's latest revision as far as this client knows. */
  readonly latest: number;
}

/** The states each action may start from (the spec's transitions). */
const FROM: Readonly<Record<ReviewAction, readonly ReviewState[]>> = {
  checked: ['prepared'],
  approved: ['checked'],
  returned: ['prepared', 'checked'],
};

/** The roles that may take each action. */
const ROLES_FOR: Readonly<Record<ReviewAction, readonly string[]>> = {
  checked: ['checker', 'approver'],
  approved: ['approver'],
  returned: ['checker', 'approver'],
};

/** Who saved the revision: the `prepared` step of its history, else the stored author. */
export function preparedBy(review: Review | null, author: string): string {
  return review?.history.find((e) => e.state === 'prepared')?.by ?? author;
}

/** Each action's enablement for the signed-in key on the shown revision. */
export function reviewActions(ctx: ReviewContext): Record<ReviewAction, ActionState> {
  const out = {} as Record<ReviewAction, ActionState>;
  for (const a of REVIEW_ACTIONS) {
    const why = refusal(a, ctx);
    out[a] = { enabled: why === '', why };
  }
  return out;
}

function refusal(action: ReviewAction, ctx: ReviewContext): string {
  const { identity, review, revision, latest } = ctx;
  if (!review) return 'This server does not record reviews.';
  if (revision < latest) return `Only the latest revision (${latest}) can be reviewed.`;
  if (review.state === 'approved' || review.state === 'returned') return `Revision ${revision} is ${review.state}: that is final.`;
  if (!identity) return 'A review needs a personal key with role checker or approver; the team token cannot review.';
  if (!ROLES_FOR[action].includes(identity.role)) {
    const needed = action === 'approved' ? 'an approver' : 'a checker or an approver';
    return `${ACTION_LABELS[action]} needs ${needed}; your key's role is ${identity.role}.`;
  }
  if (preparedBy(review, ctx.author) === identity.name) return `You saved revision ${revision}: someone else reviews it (four eyes).`;
  if (!FROM[action].includes(review.state)) {
    return action === 'approved' ? `Revision ${revision} must be checked before it is approved.` : `Revision ${revision} is already ${review.state}.`;
  }
  return '';
}

/** What the panel says when a review request was refused, and what it offers. */
export interface ReviewErrorView {
  readonly text: string;
  /** A newer revision exists (SN_REVIEW_STALE): offer to open the latest. */
  readonly offerLatest: boolean;
  /** The state changed meanwhile (SN_REVIEW_STATE): load the review again. */
  readonly reload: boolean;
}

/** An API error as the review panel needs it (status, code, message, issues' pointers). */
export interface ErrorLike {
  readonly status: number;
  readonly code: string;
  readonly message: string;
  readonly issues?: readonly { readonly pointer: string; readonly message: string }[];
}

/** The server's 4xx answers to a review, in plain words. */
export function reviewErrorView(err: ErrorLike, revision: number): ReviewErrorView {
  const plain = (text: string, offerLatest = false, reload = false): ReviewErrorView => ({ text, offerLatest, reload });
  switch (err.code) {
    case 'SN_ROLE':
      return plain(`Your key may not do this. ${err.message}`);
    case 'SN_FOUR_EYES':
      return plain(`Four eyes: nobody checks, approves or returns a revision they saved. ${err.message}`);
    case 'SN_REVIEW_STALE':
      return plain(`Revision ${revision} is no longer the latest: someone saved a newer revision. Only the latest can be reviewed.`, true);
    case 'SN_REVIEW_STATE':
      return plain(`Someone reviewed revision ${revision} meanwhile: that step is no longer possible. Its review is shown as it stands now.`, false, true);
  }
  if (err.status === 401) return plain('Your sign-in has ended: sign in again.');
  if (err.status === 404) return plain(`Revision ${revision} of this model is not in the library.`);
  const note = err.issues?.find((i) => i.pointer === '/note');
  if (note) return plain(`Returning needs a note saying what to change. (${note.message})`);
  if (err.status === 0) return plain('The server cannot be reached; nothing was recorded.');
  return plain(err.message);
}

/**
 * The notice for a saved revision, or null when this client already has it: the revision is
 * not newer than the latest it knows (its own save, once answered). While a save of this client
 * is under way no notice is given, as the event may be that save's own.
 */
export function revisionNotice(ev: RevisionEvent | null, known: { readonly latest: number; readonly saving: boolean }): string | null {
  if (!ev || known.saving || ev.revision <= known.latest) return null;
  return `Revision ${ev.revision} saved by ${ev.author}`;
}

/** The notice for a review change, or null when it is the signed-in key's own (the panel shows it already). */
export function reviewNotice(ev: ReviewEvent | null, me: Identity | null): string | null {
  if (!ev || (me && ev.by === me.name)) return null;
  return `Revision ${ev.revision} ${ev.state} by ${ev.by}${ev.note ? `: ${ev.note}` : ''}`;
}

/** First wait before reconnecting the live stream (ms), doubled per failure up to the ceiling (common practice, no source). */
export const RECONNECT_FIRST = 1000;
/** Longest wait between reconnection attempts (ms). */
export const RECONNECT_MAX = 60_000;

/** The wait before reconnection attempt `attempt` (0 = the first after a failure), in ms. */
export function reconnectDelay(attempt: number): number {
  return Math.min(RECONNECT_MAX, RECONNECT_FIRST * 2 ** Math.max(0, Math.min(attempt, 16)));
}

/** A time of the history as `YYYY-MM-DD HH:MM UTC` (the text itself when it is not a time). */
export function utcMinute(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

/** One line for the report head: the state and each step with who and when. */
export function reviewLine(review: Review | null, revision: number): string {
  if (!review) return '';
  const steps = review.history.map((e) => `${e.state} by ${e.by} ${utcMinute(e.at)}${e.note ? ` (“${e.note}”)` : ''}`);
  return `Review of revision ${revision}: ${review.state.toUpperCase()}.${steps.length ? ` ${steps.join('; ')}.` : ''}`;
}
