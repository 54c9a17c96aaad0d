/**
 * Sign-in sessions in PostgreSQL (server/store/pg-sessions.ts) keep the rules of
 * the in-memory store (server/http/sessions.ts): idle and absolute lifetimes, a
 * look without touch that does not refresh, sign-out, and the most kept. The
 * clock is the test's own; the limits are this test's (small, to see them act).
 * Skipped (loudly) where PostgreSQL is missing, unless SHAFTNET_REQUIRE_POSTGRES=1.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openPgStore, type PgStore } from '../../server/store/pg-store.js';
import { PgSessionStore } from '../../server/store/pg-sessions.js';
import { pgSuiteGate, startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';

const gate = pgSuiteGate('sessions in PostgreSQL');

describe.skipIf(gate.skip)('sessions in PostgreSQL', () => {
  let cluster: PgCluster;
  let store: PgStore;
  let other: PgStore;
  beforeAll(async () => {
    cluster = await startPgCluster(gate.bin);
    const url = await cluster.createDatabase('sessions');
    store = await openPgStore(url);
    other = await openPgStore(url);
  }, 120_000);
  afterAll(async () => {
    await store?.close();
    await other?.close();
    cluster?.destroy();
  });

  it('idle and absolute lifetimes, touch, sign-out, and the most kept; seen alike by a second store', async () => {
    const limits = { idleMs: 1_000, absoluteMs: 5_000, maxSessions: 3 };
    const s = new PgSessionStore(store, limits);
    const t = new PgSessionStore(other, limits);
    const t0 = 1_000_000;
    const a = await s.create(t0, 'key1');
    expect(await t.lookup(a, t0 + 500)).toEqual({ keyId: 'key1' }); // touched at +500 by the other store
    expect(await s.lookup(a, t0 + 1_400)).toEqual({ keyId: 'key1' }); // live: last used 900 ms ago
    expect(await s.lookup(a, t0 + 2_300, false)).toEqual({ keyId: 'key1' }); // a look without touch...
    expect(await s.lookup(a, t0 + 2_450)).toBeUndefined(); // ...did not refresh it: idle 1050 ms
    // Absolute: used every 900 ms, it still ends 5 s after its sign-in.
    const b = await s.create(t0, null);
    for (let at = t0 + 900; at < t0 + 5_000; at += 900) expect(await t.lookup(b, at)).toEqual({ keyId: null });
    expect(await s.lookup(b, t0 + 5_000)).toBeUndefined();
    // Sign-out on one store ends it for the other.
    const c = await s.create(t0 + 10_000);
    expect(await t.check(c, t0 + 10_100)).toBe(true);
    await t.revoke(c);
    expect(await s.check(c, t0 + 10_200)).toBe(false);
    // The most kept: the oldest sign-ins go.
    const made = [];
    for (let k = 0; k < 4; k++) made.push(await s.create(t0 + 20_000 + k));
    expect(await s.size(t0 + 20_010)).toBe(3);
    expect(await s.check(made[0], t0 + 20_010)).toBe(false);
    for (const id of made.slice(1)) expect(await s.check(id, t0 + 20_010)).toBe(true);
    expect(await s.lookup('', t0)).toBeUndefined();
    expect(await s.lookup('x'.repeat(101), t0)).toBeUndefined();
  });
});
