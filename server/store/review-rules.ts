/**
 * The review rules of a revision, pure: which state may follow which, and the
 * four-eyes rule (common practice, no source). The store applies them inside
 * its write transaction; the routes check the role (who may ask at all) first.
 *
 *   prepared → checked → approved;  prepared | checked → returned (with a note).
 *   approved and returned are final: a change after them is a new save, a new
 *   revision, which starts prepared again.
 *
 * Four eyes: nobody checks, approves or returns a revision they authored, and
 * whoever approves it is not whoever checked it. Names are compared without
 * regard to case or surrounding spaces (one person, one name).
 */
import type { KeyRole, ReviewEntry, ReviewState, ReviewTarget } from '../../shared-types/library.js';

/** The states that may follow each state. */
export const NEXT_STATES: Readonly<Record<ReviewState, readonly ReviewTarget[]>> = {
  prepared: ['checked', 'returned'],
  checked: ['approved', 'returned'],
  approved: [],
  returned: [],
};

/** The least role that may set each state. */
export const ROLE_FOR: Readonly<Record<ReviewTarget, KeyRole>> = {
  checked: 'checker',
  returned: 'checker',
  approved: 'approver',
};

const RANK: Readonly<Record<KeyRole, number>> = { editor: 0, checker: 1, approver: 2 };

/** True when `role` may set `target` (checker = editor + check and return; approver = checker + approve). */
export function roleMay(role: KeyRole, target: ReviewTarget): boolean {
  return RANK[role] >= RANK[ROLE_FOR[target]];
}

/** Same person: names equal without regard to case or surrounding spaces. */
export function samePerson(a: string, b: string): boolean {
  return a.trim().toLowerCase() === b.trim().toLowerCase();
}

/** The current state of a history (oldest first; the first entry is `prepared`). */
export function currentState(history: readonly ReviewEntry[]): ReviewState {
  return history.length === 0 ? 'prepared' : history[history.length - 1].state;
}

/**
 * Why `by` may not set `target` on a revision with this history, or null when
 * the change is allowed. `history[0]` is the save (its `by` is the author).
 */
export function reviewRefusal(
  history: readonly ReviewEntry[],
  target: ReviewTarget,
  by: string,
): { kind: 'state' | 'four-eyes'; message: string } | null {
  const state = currentState(history);
  if (!NEXT_STATES[state].includes(target)) {
    const allowed = NEXT_STATES[state];
    return {
      kind: 'state',
      message:
        allowed.length === 0
          ? `the revision is ${state}, which is final: a change needs a new save (a new revision)`
          : `the revision is ${state}: it can become ${allowed.join(' or ')}, not ${target}`,
    };
  }
  const author = history[0]?.by ?? '';
  if (samePerson(author, by)) {
    const verb = target === 'checked' ? 'check' : target === 'approved' ? 'approve' : 'return';
    return { kind: 'four-eyes', message: `${by} authored this revision and may not ${verb} it (four eyes: someone else must)` };
  }
  return null;
}
