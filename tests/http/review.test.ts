/**
 * Personal keys and sign-off over the API: identities on the bearer and the
 * session, roles, the review states and their history, four eyes, stale and
 * final revisions, revocation at once, and keys kept out of the logs.
 *
 * The expected statuses, codes and states are this server's contract
 * (server/http/API.md "Review", README's error table); the four-eyes rule is
 * common practice, no source.
 */
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { KEY_PATTERN } from '../../server/store/keys.js';
import { cantilever, errorOf, makeApp, type TestApp } from './helpers.js';
import { addKey, json } from './review-helpers.js';

const TEAM = 'team-token-0123456789';
const team = { authorization: `Bearer ${TEAM}` };
type Key = Awaited<ReturnType<typeof addKey>>;

let t: TestApp;
let ann: Key; // editor
let bob: Key; // checker
let cat: Key; // checker
let dan: Key; // approver
let eve: Key; // approver

beforeAll(async () => {
  t = await makeApp({ token: TEAM, signInPerMinute: 1000 });
  ann = await addKey(t.store, 'Ann', 'editor');
  bob = await addKey(t.store, 'Bob', 'checker');
  cat = await addKey(t.store, 'Cat', 'checker');
  dan = await addKey(t.store, 'Dan', 'approver');
  eve = await addKey(t.store, 'Eve', 'approver');
});
afterAll(async () => {
  await t.close();
});

async function create(auth: Record<string, string>, author?: string): Promise<string> {
  const r = await t.app.inject({ method: 'POST', url: '/api/models', headers: { ...json, ...auth }, payload: JSON.stringify({ model: cantilever(1), author, message: 'first' }) });
  expect(r.statusCode, r.body).toBe(201);
  return r.json().id as string;
}

function review(auth: Record<string, string>, id: string, rev: number, state: string, note?: string | null) {
  return t.app.inject({
    method: 'POST',
    url: `/api/models/${id}/revisions/${rev}/review`,
    headers: { ...json, ...auth },
    payload: JSON.stringify(note === undefined ? { state } : { state, note }),
  });
}

const ISO_UTC = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/;

describe('identities', () => {
  it('a key has the documented form', () => {
    expect(bob.key).toMatch(KEY_PATTERN);
    expect(bob.key.startsWith(`snk_${bob.id}_`)).toBe(true);
  });

  it('GET /api/session names the key (bearer), and nobody for the team token or without a key', async () => {
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: bob.auth })).json()).toEqual({
      tokenRequired: true,
      signedIn: true,
      identity: { name: 'Bob', role: 'checker' },
    });
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: team })).json()).toEqual({ tokenRequired: true, signedIn: true, identity: null });
    expect((await t.app.inject({ method: 'GET', url: '/api/session' })).json()).toEqual({ tokenRequired: true, signedIn: false, identity: null });
  });

  it('signing in with a key makes a session that carries its identity', async () => {
    const r = await t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: dan.key }) });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toEqual({ tokenRequired: true, signedIn: true, identity: { name: 'Dan', role: 'approver' } });
    const cookie = { cookie: String(r.headers['set-cookie']).split(';')[0] };
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: cookie })).json().identity).toEqual({ name: 'Dan', role: 'approver' });
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode).toBe(200);
    const wrong = await t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: dan.key.slice(0, -2) + 'xx' }) });
    expect(wrong.statusCode).toBe(401);
    expect(errorOf(wrong.body).error.issues[0].pointer).toBe('/token');
  });

  it('a save made with a key has the key\'s name as author (a typed author is ignored); without a key the author is required', async () => {
    const id = await create(ann.auth, 'Somebody Else');
    const got = (await t.app.inject({ method: 'GET', url: `/api/models/${id}`, headers: ann.auth })).json();
    expect(got.author).toBe('Ann');
    const put = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, headers: { ...json, ...bob.auth }, payload: JSON.stringify({ model: cantilever(2), baseRevision: 1 }) });
    expect(put.statusCode).toBe(200);
    const revs = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions`, headers: team })).json().revisions;
    expect(revs.map((r: { author: string }) => r.author)).toEqual(['Bob', 'Ann']);
    const noAuthor = await t.app.inject({ method: 'POST', url: '/api/models', headers: { ...json, ...team }, payload: JSON.stringify({ model: cantilever(1) }) });
    expect(noAuthor.statusCode).toBe(400);
    expect(errorOf(noAuthor.body).error.issues[0]).toMatchObject({ code: 'SN_SCHEMA', pointer: '/author' });
    const imported = await t.app.inject({ method: 'POST', url: '/api/models/import', headers: { ...json, ...cat.auth }, payload: JSON.stringify(cantilever(1)) });
    expect(imported.statusCode).toBe(201);
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${imported.json().id}`, headers: team })).json().author).toBe('Cat');
  });
});

describe('review states', () => {
  it('prepared → checked → approved, with the history in the revision, the model and the lists', async () => {
    const id = await create(ann.auth);
    const fresh = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json();
    expect(fresh.review.state).toBe('prepared');
    expect(fresh.review.history).toEqual([{ state: 'prepared', by: 'Ann', at: fresh.created, note: null }]);

    const checked = await review(bob.auth, id, 1, 'checked', 'loads and supports checked against the drawing');
    expect(checked.statusCode, checked.body).toBe(200);
    expect(checked.json()).toMatchObject({ id, revision: 1, state: 'checked' });
    expect(checked.json().history.map((h: { state: string; by: string }) => [h.state, h.by])).toEqual([
      ['prepared', 'Ann'],
      ['checked', 'Bob'],
    ]);
    expect(checked.json().history[1].note).toBe('loads and supports checked against the drawing');
    expect(checked.json().history[1].at).toMatch(ISO_UTC);

    const approved = await review(dan.auth, id, 1, 'approved');
    expect(approved.statusCode, approved.body).toBe(200);
    expect(approved.json().state).toBe('approved');
    expect(approved.json().history[2]).toMatchObject({ state: 'approved', by: 'Dan', note: null });

    const rev = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json();
    expect(rev.review).toEqual({ state: 'approved', history: approved.json().history });
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}`, headers: team })).json().review.state).toBe('approved');
    const list = (await t.app.inject({ method: 'GET', url: '/api/models', headers: team })).json().models as Array<{ id: string; reviewState: string }>;
    expect(list.find((m) => m.id === id)?.reviewState).toBe('approved');

    // An approved revision stays approved: a new save is a new revision, prepared.
    const put = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, headers: { ...json, ...ann.auth }, payload: JSON.stringify({ model: cantilever(3), baseRevision: 1 }) });
    expect(put.statusCode).toBe(200);
    const revs = (await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions`, headers: team })).json().revisions;
    expect(revs.map((r: { revision: number; reviewState: string }) => [r.revision, r.reviewState])).toEqual([
      [2, 'prepared'],
      [1, 'approved'],
    ]);
    const list2 = (await t.app.inject({ method: 'GET', url: '/api/models', headers: team })).json().models as Array<{ id: string; reviewState: string }>;
    expect(list2.find((m) => m.id === id)?.reviewState).toBe('prepared');
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json().review.state).toBe('approved');
  });

  it('returned needs a note (400 at /note) and is final; approved is final; approving a prepared revision is 409 SN_REVIEW_STATE', async () => {
    const id = await create(ann.auth);
    const early = await review(dan.auth, id, 1, 'approved');
    expect(early.statusCode).toBe(409);
    expect(errorOf(early.body).error.code).toBe('SN_REVIEW_STATE');
    for (const note of [undefined, null, '', '   ']) {
      const r = await review(bob.auth, id, 1, 'returned', note);
      expect(r.statusCode, String(note)).toBe(400);
      expect(errorOf(r.body).error.issues[0]).toMatchObject({ code: 'SN_SCHEMA', pointer: '/note' });
    }
    const returned = await review(bob.auth, id, 1, 'returned', 'the bore of segment 2 is missing');
    expect(returned.statusCode).toBe(200);
    expect(returned.json().history[1]).toMatchObject({ state: 'returned', by: 'Bob', note: 'the bore of segment 2 is missing' });
    for (const [key, state] of [
      [cat, 'checked'],
      [dan, 'approved'],
      [cat, 'returned'],
    ] as const) {
      const r = await review(key.auth, id, 1, state, 'again');
      expect(r.statusCode, state).toBe(409);
      expect(errorOf(r.body).error.code).toBe('SN_REVIEW_STATE');
      expect(errorOf(r.body).error.message).toContain('final');
    }
    // A checked revision may be returned (by an approver too), and approved ones accept nothing more.
    const id2 = await create(ann.auth);
    expect((await review(bob.auth, id2, 1, 'checked')).statusCode).toBe(200);
    expect((await review(dan.auth, id2, 1, 'returned', 'torque units wrong')).json().state).toBe('returned');
    const id3 = await create(ann.auth);
    expect((await review(bob.auth, id3, 1, 'checked')).statusCode).toBe(200);
    expect((await review(cat.auth, id3, 1, 'checked')).statusCode).toBe(409);
    expect((await review(dan.auth, id3, 1, 'approved')).statusCode).toBe(200);
    const after = await review(eve.auth, id3, 1, 'returned', 'too late');
    expect(after.statusCode).toBe(409);
    expect(errorOf(after.body).error.code).toBe('SN_REVIEW_STATE');
  });

  it('a revision that is not the latest is 409 SN_REVIEW_STALE naming the current one; unknown ones are 404', async () => {
    const id = await create(ann.auth);
    const put = await t.app.inject({ method: 'PUT', url: `/api/models/${id}`, headers: { ...json, ...ann.auth }, payload: JSON.stringify({ model: cantilever(2), baseRevision: 1 }) });
    expect(put.json().revision).toBe(2);
    const stale = await review(bob.auth, id, 1, 'checked');
    expect(stale.statusCode).toBe(409);
    const e = errorOf(stale.body);
    expect(e.error.code).toBe('SN_REVIEW_STALE');
    expect(e.currentRevision).toBe(2);
    expect(e.error.issues[0].pointer).toBe('/rev');
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json().review.state).toBe('prepared');
    expect((await review(bob.auth, id, 2, 'checked')).statusCode).toBe(200);
    const noRev = await review(bob.auth, id, 3, 'checked');
    expect(noRev.statusCode).toBe(404);
    expect(errorOf(noRev.body).error.issues[0].pointer).toBe('/rev');
    const noModel = await review(bob.auth, 'nosuchmodel', 1, 'checked');
    expect(noModel.statusCode).toBe(404);
    const badState = await review(bob.auth, id, 2, 'prepared');
    expect(badState.statusCode).toBe(400);
    expect(errorOf(badState.body).error.issues[0].pointer).toBe('/state');
  });
});

describe('who may review', () => {
  it('401 without a key; 403 SN_ROLE for the team token, an editor, and a checker approving, naming the role needed', async () => {
    const id = await create(ann.auth);
    const anon = await review({}, id, 1, 'checked');
    expect(anon.statusCode).toBe(401);
    expect(errorOf(anon.body).error.code).toBe('SN_UNAUTHORISED');
    const cases: Array<[Record<string, string>, string, string]> = [
      [team, 'checked', 'checker or approver'],
      [ann.auth, 'checked', 'checker or approver'],
      [ann.auth, 'returned', 'checker or approver'],
      [team, 'approved', 'role approver'],
      [bob.auth, 'approved', 'role approver'],
    ];
    expect((await review(cat.auth, id, 1, 'checked')).statusCode).toBe(200); // so that approving is next
    for (const [auth, state, needed] of cases) {
      const r = await review(auth, id, 1, state, 'n');
      expect(r.statusCode, `${state} ${needed}`).toBe(403);
      expect(errorOf(r.body).error.code).toBe('SN_ROLE');
      expect(errorOf(r.body).error.message).toContain(needed);
    }
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json().review.state).toBe('checked');
  });

  it('four eyes: nobody checks, approves or returns their own revision (403 SN_FOUR_EYES); the checker may also approve', async () => {
    const byBob = await create(bob.auth);
    for (const state of ['checked', 'returned'] as const) {
      const r = await review(bob.auth, byBob, 1, state, 'mine');
      expect(r.statusCode, state).toBe(403);
      expect(errorOf(r.body).error.code).toBe('SN_FOUR_EYES');
    }
    // Names match without regard to case: a typed author "dan" is Dan.
    const byDanTyped = await create(team, ' dan ');
    const own = await review(dan.auth, byDanTyped, 1, 'checked');
    expect(own.statusCode).toBe(403);
    expect(errorOf(own.body).error.code).toBe('SN_FOUR_EYES');
    // A second key checks and approves (an approver's key).
    const byAnn = await create(ann.auth);
    expect((await review(dan.auth, byAnn, 1, 'checked')).statusCode).toBe(200);
    expect((await review(dan.auth, byAnn, 1, 'approved')).statusCode).toBe(200);
    // An approver's own revision: approving after another's check is refused too.
    const byEve = await create(eve.auth);
    expect((await review(bob.auth, byEve, 1, 'checked')).statusCode).toBe(200);
    const ownApprove = await review(eve.auth, byEve, 1, 'approved');
    expect(ownApprove.statusCode).toBe(403);
    expect(errorOf(ownApprove.body).error.code).toBe('SN_FOUR_EYES');
  });
});

describe('revocation', () => {
  it('a revoked key stops at once, on the bearer and in a live session made with it', async () => {
    const fay = await addKey(t.store, 'Fay', 'checker');
    const id = await create(ann.auth);
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: fay.auth })).statusCode).toBe(200);
    const signIn = await t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: fay.key }) });
    const cookie = { cookie: String(signIn.headers['set-cookie']).split(';')[0] };
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode).toBe(200);

    expect(t.store.revokeKey('Fay', new Date().toISOString())?.id).toBe(fay.id);
    // The very next requests, within the verification cache's window, are refused.
    const bearer = await t.app.inject({ method: 'GET', url: '/api/models', headers: fay.auth });
    expect(bearer.statusCode).toBe(401);
    expect((await review(fay.auth, id, 1, 'checked')).statusCode).toBe(401);
    expect((await t.app.inject({ method: 'GET', url: '/api/models', headers: cookie })).statusCode).toBe(401);
    expect((await t.app.inject({ method: 'GET', url: '/api/session', headers: cookie })).json()).toEqual({ tokenRequired: true, signedIn: false, identity: null });
    const again = await t.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: fay.key }) });
    expect(again.statusCode).toBe(401);
    expect((await t.app.inject({ method: 'GET', url: `/api/models/${id}/revisions/1`, headers: team })).json().review.state).toBe('prepared');
  });
});

describe('token mode from personal keys', () => {
  it('a server without a team token needs a key as soon as the library holds one', async () => {
    const open = await makeApp({ signInPerMinute: 1000 });
    try {
      expect((await open.app.inject({ method: 'GET', url: '/api/models' })).statusCode).toBe(200);
      expect((await open.app.inject({ method: 'GET', url: '/api/session' })).json()).toEqual({ tokenRequired: false, signedIn: true, identity: null });
      // Open mode reviews nothing.
      const created = await open.app.inject({ method: 'POST', url: '/api/models', headers: json, payload: JSON.stringify({ model: cantilever(1), author: 'x' }) });
      const openReview = await open.app.inject({ method: 'POST', url: `/api/models/${created.json().id}/revisions/1/review`, headers: json, payload: '{"state":"checked"}' });
      expect(openReview.statusCode).toBe(403);
      expect(errorOf(openReview.body).error.code).toBe('SN_ROLE');

      const gil = await addKey(open.store, 'Gil', 'approver');
      const refused = await open.app.inject({ method: 'GET', url: '/api/models' });
      expect(refused.statusCode).toBe(401);
      expect(errorOf(refused.body).error.code).toBe('SN_UNAUTHORISED');
      expect((await open.app.inject({ method: 'GET', url: '/api/session' })).json()).toEqual({ tokenRequired: true, signedIn: false, identity: null });
      expect((await open.app.inject({ method: 'GET', url: '/api/models', headers: gil.auth })).statusCode).toBe(200);
      // Revoking every key does not open the server again.
      open.store.revokeKey(gil.id, new Date().toISOString());
      expect((await open.app.inject({ method: 'GET', url: '/api/models' })).statusCode).toBe(401);
    } finally {
      await open.close();
    }
  });
});

describe('logs', () => {
  it('no key, secret or team token appears in the request log, whatever the request', async () => {
    let log = '';
    const sink = new Writable({
      write(chunk, _enc, done) {
        log += String(chunk);
        done();
      },
    });
    const logged = await makeApp({ token: TEAM, signInPerMinute: 1000, logger: { level: 'trace', stream: sink } });
    try {
      const hal = await addKey(logged.store, 'Hal', 'checker');
      const ivy = await addKey(logged.store, 'Ivy', 'editor');
      const c = await logged.app.inject({ method: 'POST', url: '/api/models', headers: { ...json, ...ivy.auth }, payload: JSON.stringify({ model: cantilever(1) }) });
      const id = c.json().id as string;
      await logged.app.inject({ method: 'GET', url: '/api/models', headers: hal.auth });
      await logged.app.inject({ method: 'GET', url: '/api/models', headers: { authorization: `Bearer ${hal.key}x` } });
      await logged.app.inject({ method: 'GET', url: '/api/models', headers: team });
      await logged.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: hal.key }) });
      await logged.app.inject({ method: 'POST', url: '/api/session', headers: json, payload: JSON.stringify({ token: `${hal.key}x` }) });
      await logged.app.inject({ method: 'POST', url: `/api/models/${id}/revisions/1/review`, headers: { ...json, ...ivy.auth }, payload: '{"state":"checked"}' });
      await logged.app.inject({ method: 'POST', url: `/api/models/${id}/revisions/1/review`, headers: { ...json, ...hal.auth }, payload: '{"state":"checked"}' });
      expect(log.length).toBeGreaterThan(1000); // the log did record these requests
      expect(log).toContain('request refused');
      for (const k of [hal, ivy]) {
        expect(log).not.toContain(k.key);
        const secret = k.key.slice(`snk_${k.id}_`.length);
        expect(secret.length).toBe(43);
        expect(log).not.toContain(secret.slice(0, 16));
      }
      expect(log).not.toContain(TEAM);
      expect(log.toLowerCase()).not.toContain('bearer');
    } finally {
      await logged.close();
    }
  });
});
