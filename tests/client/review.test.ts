/**
 * The review in the client, without a browser: which of Check, Approve and Return a key
 * may press (client/src/review-rules.ts), the refusals in plain words, the live notice's
 * text, the reconnection wait, and the tolerant readers of the review's wire fields
 * (client/src/review-types.ts). The rules are the review API's spec (roles; four-eyes,
 * common practice, no source); names and times are invented.
 */
import { describe, expect, it } from 'vitest';
import {
  type ReviewContext,
  RECONNECT_FIRST,
  RECONNECT_MAX,
  preparedBy,
  reconnectDelay,
  reviewActions,
  reviewErrorView,
  reviewLine,
  reviewNotice,
  revisionNotice,
  utcMinute,
} from '../../client/src/review-rules.js';
import {
  type Identity,
  type Review,
  type ReviewState,
  type Role,
  hasReviews,
  readIdentity,
  readReview,
  readReviewEvent,
  readReviewState,
  readRevisionEvent,
} from '../../client/src/review-types.js';

const T0 = '2026-12-01T08:00:00.000Z';
const T1 = '2026-12-01T09:30:00.000Z';
const T2 = '2026-12-01T11:15:00.000Z';

/** A review of a revision saved by Dana, at `state`; checked by `checker` when past prepared. */
function review(state: ReviewState, checker = 'Lee'): Review {
  const history: Review['history'][number][] = [{ state: 'prepared', by: 'Dana', at: T0, note: null }];
  if (state === 'checked' || state === 'approved') history.push({ state: 'checked', by: checker, at: T1, note: null });
  if (state === 'approved') history.push({ state: 'approved', by: 'Kim', at: T2, note: null });
  if (state === 'returned') history.push({ state: 'returned', by: checker, at: T1, note: 'key seat missing' });
  return { state, history };
}

const me = (name: string, role: Role): Identity => ({ name, role });

function ctx(over: Partial<ReviewContext>): ReviewContext {
  return { identity: me('Lee', 'checker'), review: review('prepared'), author: 'Dana', revision: 6, latest: 6, ...over };
}

/** The enabled actions, in the panel's order. */
function enabled(c: ReviewContext): string[] {
  const a = reviewActions(c);
  return (['checked', 'approved', 'returned'] as const).filter((k) => a[k].enabled);
}

describe('which review buttons a key may press', () => {
  it('follows the roles on a prepared revision of someone else', () => {
    expect(enabled(ctx({ identity: me('Lee', 'editor') }))).toEqual([]);
    expect(enabled(ctx({ identity: me('Lee', 'checker') }))).toEqual(['checked', 'returned']);
    // An approver is a checker too; approving needs a check first.
    expect(enabled(ctx({ identity: me('Kim', 'approver') }))).toEqual(['checked', 'returned']);
  });

  it('follows the roles on a checked revision', () => {
    const checked = review('checked');
    expect(enabled(ctx({ review: checked, identity: me('Ola', 'checker') }))).toEqual(['returned']);
    expect(enabled(ctx({ review: checked, identity: me('Kim', 'approver') }))).toEqual(['approved', 'returned']);
  });

  it('says why an editor and a checker may not approve', () => {
    const editor = reviewActions(ctx({ identity: me('Ola', 'editor') }));
    expect(editor.checked.why).toBe("Check needs a checker or an approver; your key's role is editor.");
    const checker = reviewActions(ctx({ review: review('checked'), identity: me('Ola', 'checker') }));
    expect(checker.approved.why).toBe("Approve needs an approver; your key's role is checker.");
    expect(checker.checked.why).toBe('Revision 6 is already checked.');
  });

  it('keeps four eyes: nobody reviews their own revision; the checker, with an approver\'s key, may also approve', () => {
    const own = reviewActions(ctx({ identity: me('Dana', 'approver') }));
    expect(Object.values(own).map((a) => a.enabled)).toEqual([false, false, false]);
    expect(own.checked.why).toBe('You saved revision 6: someone else reviews it (four eyes).');
    // The same with the review's prepared step naming the author while the stored author differs.
    expect(enabled(ctx({ identity: me('Dana', 'checker'), author: 'someone typed' }))).toEqual([]);
    // Kim checked with an approver's key: Kim may approve it too, or return it.
    const selfChecked = reviewActions(ctx({ review: review('checked', 'Kim'), identity: me('Kim', 'approver') }));
    expect(selfChecked.approved.enabled).toBe(true);
    expect(selfChecked.returned.enabled).toBe(true);
  });

  it('offers nothing on a final state, an older revision, the team token or an older server', () => {
    expect(enabled(ctx({ review: review('approved'), identity: me('Ola', 'approver') }))).toEqual([]);
    expect(reviewActions(ctx({ review: review('approved') })).checked.why).toBe('Revision 6 is approved: that is final.');
    expect(enabled(ctx({ review: review('returned'), identity: me('Ola', 'approver') }))).toEqual([]);
    const older = reviewActions(ctx({ revision: 5, latest: 7 }));
    expect(older.checked).toEqual({ enabled: false, why: 'Only the latest revision (7) can be reviewed.' });
    const team = reviewActions(ctx({ identity: null }));
    expect(team.returned.why).toBe('A review needs a personal key with role checker or approver; the team token cannot review.');
    expect(reviewActions(ctx({ review: null })).checked.why).toBe('This server does not record reviews.');
  });

  it('names who prepared the revision', () => {
    expect(preparedBy(review('approved'), 'x')).toBe('Dana');
    expect(preparedBy(null, 'Stored Author')).toBe('Stored Author');
  });
});

describe("the server's refusals in plain words", () => {
  it('offers the latest revision on a stale one and reloads on a state changed meanwhile', () => {
    const stale = reviewErrorView({ status: 409, code: 'SN_REVIEW_STALE', message: 'x' }, 6);
    expect(stale).toEqual({
      text: 'Revision 6 is no longer the latest: someone saved a newer revision. Only the latest can be reviewed.',
      offerLatest: true,
      reload: false,
    });
    const moved = reviewErrorView({ status: 409, code: 'SN_REVIEW_STATE', message: 'x' }, 6);
    expect([moved.offerLatest, moved.reload]).toEqual([false, true]);
  });

  it("keeps the server's naming of the role, and explains four eyes", () => {
    const role = reviewErrorView({ status: 403, code: 'SN_ROLE', message: 'A review needs a personal key with role checker or approver.' }, 3);
    expect(role.text).toBe('Your key may not do this. A review needs a personal key with role checker or approver.');
    expect(reviewErrorView({ status: 403, code: 'SN_FOUR_EYES', message: 'You saved revision 3.' }, 3).text).toMatch(/^Four eyes: .* You saved revision 3\.$/);
  });

  it('asks for the note of a return by its pointer, and says plainly what else went wrong', () => {
    const note = reviewErrorView({ status: 400, code: 'SN_BAD_REQUEST', message: 'bad', issues: [{ pointer: '/note', message: 'must not be empty' }] }, 2);
    expect(note.text).toBe('Returning needs a note saying what to change. (must not be empty)');
    expect(reviewErrorView({ status: 404, code: 'SN_NOT_FOUND', message: 'x' }, 2).text).toBe('Revision 2 of this model is not in the library.');
    expect(reviewErrorView({ status: 0, code: 'SN_NETWORK', message: 'x' }, 2).text).toBe('The server cannot be reached; nothing was recorded.');
    expect(reviewErrorView({ status: 500, code: 'SN_INTERNAL', message: 'Something broke.' }, 2).text).toBe('Something broke.');
  });
});

describe('the live notice', () => {
  const saved = { id: 'm1', revision: 7, author: 'Dana', at: T1 };

  it('says who saved a newer revision, and nothing for one this client has or is saving', () => {
    expect(revisionNotice(saved, { latest: 6, saving: false })).toBe('Revision 7 saved by Dana');
    expect(revisionNotice(saved, { latest: 7, saving: false })).toBeNull();
    expect(revisionNotice(saved, { latest: 8, saving: false })).toBeNull();
    expect(revisionNotice(saved, { latest: 6, saving: true })).toBeNull();
    expect(revisionNotice(null, { latest: 0, saving: false })).toBeNull();
  });

  it("says who reviewed, with the note of a return, and not the key's own review", () => {
    const approved = { id: 'm1', revision: 6, state: 'approved' as const, by: 'Lee', at: T2, note: null };
    expect(reviewNotice(approved, me('Dana', 'editor'))).toBe('Revision 6 approved by Lee');
    expect(reviewNotice(approved, null)).toBe('Revision 6 approved by Lee');
    expect(reviewNotice(approved, me('Lee', 'approver'))).toBeNull();
    expect(reviewNotice({ ...approved, state: 'returned', note: 'key seat missing' }, null)).toBe('Revision 6 returned by Lee: key seat missing');
  });

  it('waits twice as long after each failure, up to the ceiling (common practice, no source)', () => {
    expect([0, 1, 2, 3].map(reconnectDelay)).toEqual([RECONNECT_FIRST, 2 * RECONNECT_FIRST, 4 * RECONNECT_FIRST, 8 * RECONNECT_FIRST]);
    expect(reconnectDelay(6)).toBe(RECONNECT_MAX); // 64 s over the 60 s ceiling
    expect(reconnectDelay(1000)).toBe(RECONNECT_MAX);
    expect(reconnectDelay(-1)).toBe(RECONNECT_FIRST);
  });
});

describe('the review fields, read tolerantly of an older server', () => {
  it('reads the identity of a personal key, and null for the team token or an older server', () => {
    expect(readIdentity({ tokenRequired: true, signedIn: true, identity: { name: 'Lee', role: 'checker' } })).toEqual({ name: 'Lee', role: 'checker' });
    expect(readIdentity({ tokenRequired: true, signedIn: true, identity: null })).toBeNull();
    expect(readIdentity({ tokenRequired: false, signedIn: false })).toBeNull();
    expect(readIdentity({ identity: { name: 'Lee', role: 'owner' } })).toBeNull();
    expect(readIdentity(undefined)).toBeNull();
    // A server that records reviews says so by the field, null included; an older one has none (no live stream then).
    expect(hasReviews({ tokenRequired: false, signedIn: false, identity: null })).toBe(true);
    expect(hasReviews({ tokenRequired: false, signedIn: false })).toBe(false);
    expect(hasReviews(null)).toBe(false);
  });

  it("reads a stored revision's review and a review answer alike, dropping malformed steps", () => {
    const history = [
      { state: 'prepared', by: 'Dana', at: T0, note: null },
      { state: 'checked', by: 'Lee', at: T1, note: '' },
      { state: 'bogus', by: 'X', at: T1, note: null },
    ];
    const expected = { state: 'checked', history: [{ state: 'prepared', by: 'Dana', at: T0, note: null }, { state: 'checked', by: 'Lee', at: T1, note: null }] };
    expect(readReview({ id: 'm1', revision: 2, model: {}, review: { state: 'checked', history } })).toEqual(expected);
    expect(readReview({ id: 'm1', revision: 2, state: 'checked', history })).toEqual(expected);
    expect(readReview({ id: 'm1', revision: 2, model: {}, author: 'Dana' })).toBeNull();
    expect(readReviewState({ id: 'm1', reviewState: 'approved' })).toBe('approved');
    expect(readReviewState({ id: 'm1' })).toBeNull();
  });

  it('reads the events, refusing what is not one', () => {
    expect(readRevisionEvent('{"id":"m1","revision":7,"author":"Dana","at":"' + T1 + '"}')).toEqual({ id: 'm1', revision: 7, author: 'Dana', at: T1 });
    expect(readRevisionEvent('{"id":"m1","revision":0,"author":"Dana"}')).toBeNull();
    expect(readRevisionEvent('not json')).toBeNull();
    expect(readReviewEvent('{"id":"m1","revision":6,"state":"returned","by":"Lee","at":"' + T2 + '","note":"why"}')).toEqual({
      id: 'm1', revision: 6, state: 'returned', by: 'Lee', at: T2, note: 'why',
    });
    expect(readReviewEvent('{"id":"m1","revision":6,"state":"signed","by":"Lee"}')).toBeNull();
  });
});

describe("the report head's review line", () => {
  it('names the state and every step with who and when (UTC)', () => {
    expect(utcMinute(T1)).toBe('2026-12-01 09:30 UTC');
    expect(utcMinute('soon')).toBe('soon');
    expect(reviewLine(review('approved'), 6)).toBe(
      'Review of revision 6: APPROVED. prepared by Dana 2026-12-01 08:00 UTC; checked by Lee 2026-12-01 09:30 UTC; approved by Kim 2026-12-01 11:15 UTC.',
    );
    expect(reviewLine(review('returned'), 2)).toBe(
      'Review of revision 2: RETURNED. prepared by Dana 2026-12-01 08:00 UTC; returned by Lee 2026-12-01 09:30 UTC (“key seat missing”).',
    );
    expect(reviewLine(null, 2)).toBe('');
  });
});
