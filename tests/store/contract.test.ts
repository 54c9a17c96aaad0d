/**
 * The store's contract, one suite run against every store, each opened as the
 * server opens it (openLibrary): SQLite through asyncFromSync, and PostgreSQL in a
 * throwaway cluster (skipped, loudly, where PostgreSQL is missing, unless
 * SHAFTNET_REQUIRE_POSTGRES=1). What a store must
 * do is ModelStore's documentation (server/store/store.ts); nothing here is
 * specific to one store. Expected values are what the test itself wrote.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { openLibrary, type AsyncModelStore } from '../../server/store/async-store.js';
import { openPgStore } from '../../server/store/pg-store.js';
import { makeKey, parseKey, secretMatches } from '../../server/store/keys.js';
import {
  KeyNameTakenError,
  ModelNotFoundError,
  ReviewRefusedError,
  ReviewStaleError,
  RevisionNotFoundError,
  StaleRevisionError,
  type SaveInput,
} from '../../server/store/store.js';
import { pgSuiteGate, startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';

interface Backend {
  readonly name: string;
  readonly kind: AsyncModelStore['kind'];
  readonly skip: boolean;
  setup(): Promise<void>;
  teardown(): Promise<void>;
  /** A store on a new, empty library. */
  fresh(): Promise<AsyncModelStore>;
  /** Another store (its own connections) on the library `fresh` made last. */
  another(): Promise<AsyncModelStore>;
}

function sqliteBackend(): Backend {
  const dirs: string[] = [];
  return {
    name: 'SQLite (asyncFromSync)',
    kind: 'sqlite',
    skip: false,
    async setup() {},
    async teardown() {
      for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
    },
    async fresh() {
      dirs.push(fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-contract-')));
      return openLibrary({ dataDir: dirs[dirs.length - 1] }); // no database URL: SQLite in the data directory
    },
    async another() {
      return openLibrary({ dataDir: dirs[dirs.length - 1] });
    },
  };
}

function postgresBackend(): Backend {
  const gate = pgSuiteGate('store contract on PostgreSQL');
  let cluster: PgCluster | undefined;
  let url = '';
  return {
    name: 'PostgreSQL',
    kind: 'postgres',
    skip: gate.skip,
    async setup() {
      cluster = await startPgCluster(gate.bin);
      url = await cluster.createDatabase('contract');
      await (await openPgStore(url)).close(); // the schema, once
    },
    async teardown() {
      cluster?.destroy();
    },
    async fresh() {
      // One database per file; each test empties the library's tables (the schema stays).
      const client = new pg.Client({ connectionString: url });
      await client.connect();
      try {
        await client.query('TRUNCATE reviews, keys, revisions, models, meta');
      } finally {
        await client.end();
      }
      return openLibrary({ database: url, dataDir: '/nonexistent/never-used' }); // a database URL wins over --data
    },
    async another() {
      return openPgStore(url);
    },
  };
}

const model = (name: string, extra: Record<string, unknown> = {}) => ({ format: 'shaftnet/1', name, ...extra });
const input = (name: string, author = 'ann', message = 'm'): SaveInput => ({ model: model(name), name, author, message });
const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Settles every promise: the value, or the error it rejected with. */
const settle = <T>(ps: Promise<T>[]) => Promise.all(ps.map((p) => p.then((v) => v as T | Error, (e: unknown) => e as Error)));

for (const backend of [sqliteBackend(), postgresBackend()]) {
  describe.skipIf(backend.skip)(`store contract: ${backend.name}`, () => {
    const open: AsyncModelStore[] = [];
    const fresh = async () => {
      const s = await backend.fresh();
      open.push(s);
      return s;
    };
    const another = async () => {
      const s = await backend.another();
      open.push(s);
      return s;
    };
    beforeAll(() => backend.setup());
    afterEach(async () => {
      for (const s of open.splice(0)) await s.close();
    });
    afterAll(() => backend.teardown());

    it('is ready, and creates at revision 1 reading the model back exactly', async () => {
      const store = await fresh();
      expect(store.kind).toBe(backend.kind);
      expect(await store.ready()).toBe(true);
      const m = model('Shaft A', { notes: 'ü "quoted" \\ back', shafts: [{ id: 's', segments: [{ length: '40 mm' }] }] });
      const { id, revision } = await store.create({ model: m, name: 'Shaft A', author: 'ann', message: 'first' });
      expect(revision).toBe(1);
      expect(id).toMatch(/^[a-km-np-z2-9]{16}$/);
      const got = await store.get(id);
      expect(got).toMatchObject({ id, revision: 1, author: 'ann', message: 'first', archived: false });
      expect(got?.model).toEqual(m);
      expect(Date.parse(got!.created)).toBeGreaterThan(Date.parse('2020-01-01'));
      expect(await store.get('nope')).toBeUndefined();
      expect(await store.revisions('nope')).toBeUndefined();
    });

    it('saves revisions on the latest base and keeps every old one unchanged', async () => {
      const store = await fresh();
      const { id } = await store.create(input('v1'));
      expect(await store.save(id, 1, input('v2', 'bob', 'second'))).toEqual({ id, revision: 2 });
      expect(await store.save(id, 2, input('v3', 'cy', 'third'))).toEqual({ id, revision: 3 });
      expect(((await store.get(id, 1))?.model as { name: string }).name).toBe('v1');
      expect(((await store.get(id, 2))?.model as { name: string }).name).toBe('v2');
      expect((await store.get(id))?.revision).toBe(3);
      expect((await store.revisions(id))?.map((r) => [r.revision, r.author, r.message])).toEqual([
        [3, 'cy', 'third'],
        [2, 'bob', 'second'],
        [1, 'ann', 'm'],
      ]);
      expect(await store.get(id, 4)).toBeUndefined();
    });

    it('refuses a stale base revision and names the current one; an unknown id is not found', async () => {
      const store = await fresh();
      const { id } = await store.create(input('v1'));
      await store.save(id, 1, input('v2'));
      const caught = await store.save(id, 1, input('other')).catch((e: unknown) => e);
      expect(caught).toBeInstanceOf(StaleRevisionError);
      expect((caught as StaleRevisionError).currentRevision).toBe(2);
      expect(await store.revisions(id)).toHaveLength(2);
      await expect(store.save('nope', 1, input('x'))).rejects.toBeInstanceOf(ModelNotFoundError);
    });

    it('concurrent saves on one base from two stores: exactly one winner, every other one stale', async () => {
      const a = await fresh();
      const b = await another();
      const { id } = await a.create(input('v1'));
      for (const base of [1, 2]) {
        const results = await settle([a, b, a, b, a, b, a, b].map((s, k) => s.save(id, base, input(`try ${k}`))));
        const winners = results.filter((r) => !(r instanceof Error));
        expect(winners).toEqual([{ id, revision: base + 1 }]);
        const stale = results.filter((r) => r instanceof StaleRevisionError) as StaleRevisionError[];
        expect(stale).toHaveLength(7);
        for (const s of stale) expect(s.currentRevision).toBe(base + 1);
      }
      expect((await b.revisions(id))?.map((r) => r.revision)).toEqual([3, 2, 1]);
    });

    it('lists active or archived models, newest first, and searches names case-insensitively', async () => {
      const store = await fresh();
      const a = await store.create(input('Mixer drive'));
      await pause(5);
      const b = await store.create(input('Pump shaft 50%_off'));
      await pause(5);
      await store.save(a.id, 1, input('Mixer drive v2', 'dee'));
      expect((await store.list({ archived: false })).map((m) => m.id)).toEqual([a.id, b.id]);
      expect((await store.list({ archived: false }))[0]).toMatchObject({ name: 'Mixer drive v2', author: 'dee', revision: 2, archived: false });
      expect((await store.list({ q: 'MIXER', archived: false })).map((m) => m.id)).toEqual([a.id]);
      expect((await store.list({ q: '  mixer  ', archived: false })).map((m) => m.id)).toEqual([a.id]);
      // % and _ are searched literally, not as wildcards
      expect((await store.list({ q: '50%_', archived: false })).map((m) => m.id)).toEqual([b.id]);
      expect(await store.list({ q: '5%f', archived: false })).toEqual([]);
      expect(await store.setArchived(b.id, true)).toEqual({ id: b.id, archived: true });
      expect((await store.list({ archived: false })).map((m) => m.id)).toEqual([a.id]);
      expect((await store.list({ archived: true })).map((m) => m.id)).toEqual([b.id]);
      expect((await store.list({ q: 'pump', archived: true })).map((m) => m.id)).toEqual([b.id]);
      expect((await store.get(b.id))?.archived).toBe(true);
      expect((await store.get(b.id, 1))?.archived).toBe(true);
      expect(await store.setArchived(b.id, false)).toEqual({ id: b.id, archived: false });
      expect(await store.list({ archived: true })).toEqual([]);
      expect(await store.setArchived('nope', true)).toBeUndefined();
      expect(await store.count()).toBe(2);
    });

    it('keeps models, revisions and meta flags for the next store on the same library', async () => {
      const store = await fresh();
      const { id } = await store.create(input('persist'));
      await store.save(id, 1, input('persist 2'));
      expect(await store.getMeta('demosSeeded')).toBeUndefined();
      await store.setMeta('demosSeeded', 'yes');
      await store.setMeta('other', 'first');
      await store.setMeta('other', 'second');
      await store.close();
      const again = await another();
      expect((await again.get(id))?.revision).toBe(2);
      expect(await again.getMeta('demosSeeded')).toBe('yes');
      expect(await again.getMeta('other')).toBe('second');
      expect(await again.getMeta('never')).toBeUndefined();
    });

    it('seedOnce: creates into an empty library once, sets the flag, and never again', async () => {
      const store = await fresh();
      const demos = [input('demo a'), input('demo b'), input('demo c')];
      expect(await store.seedOnce('demosSeeded', demos)).toBe(3);
      expect(await store.getMeta('demosSeeded')).toMatch(/^\d{4}-\d\d-\d\dT/);
      expect((await store.list({ archived: false })).map((m) => m.name).sort()).toEqual(['demo a', 'demo b', 'demo c']);
      // archived demos are not seeded again, nor are they through a second store
      for (const m of await store.list({ archived: false })) await store.setArchived(m.id, true);
      expect(await store.seedOnce('demosSeeded', demos)).toBe(0);
      const other = await another();
      expect(await other.seedOnce('demosSeeded', demos)).toBe(0);
      expect(await store.count()).toBe(3);
    });

    it('seedOnce: two stores seeding a new library at once seed it once between them', async () => {
      const a = await fresh();
      const b = await another();
      const demos = [input('demo a'), input('demo b')];
      const counts = await Promise.all([a.seedOnce('demosSeeded', demos), b.seedOnce('demosSeeded', demos)]);
      expect(counts.sort()).toEqual([0, 2]);
      expect(await a.count()).toBe(2);
    });

    it('seedOnce: a library that already holds models gets the flag and no demo', async () => {
      const store = await fresh();
      await store.create(input('mine'));
      expect(await store.seedOnce('demosSeeded', [input('demo a')])).toBe(0);
      expect(await store.getMeta('demosSeeded')).toBeDefined();
      expect(await store.count()).toBe(1);
    });

    it('seedOnce: all or none; a failure half-way leaves no model and no flag', async () => {
      const store = await fresh();
      const bad = { model: { n: 1n }, name: 'cannot be written', author: 'x', message: '' }; // JSON.stringify throws on a BigInt
      await expect(store.seedOnce('demosSeeded', [input('demo a'), bad])).rejects.toThrow(TypeError);
      expect(await store.count()).toBe(0);
      expect(await store.getMeta('demosSeeded')).toBeUndefined();
      expect(await store.seedOnce('demosSeeded', [input('demo a')])).toBe(1);
    });

    it('round-trips Unicode byte for byte: in the model, the name, the author and the message', async () => {
      const store = await fresh();
      // Text the JSON of a model may hold: accents (composed and combining), CJK, right-to-left,
      // emoji with a joiner, a NUL, a lone surrogate, line and paragraph separators, quotes.
      const odd = 'Wellé e\u0301 軸のねじり שָׁלוֹם 👩‍🔧 \u0000 \ud800 \u2028\u2029 "q" \\ \t end';
      const m = { format: 'shaftnet/1', name: odd, z: 1, a: [odd, { '键 ü': odd }], n: 0.1 + 0.2, tiny: 5e-324, big: 1.7976931348623157e308 };
      // Names, authors and messages are plain text: no NUL and no lone surrogate (they are not JSON).
      const plain = 'Wellé e\u0301 軸のねじり שָׁלוֹם 👩‍🔧 "q"';
      const { id } = await store.create({ model: m, name: plain, author: plain, message: plain + ' 1' });
      await store.save(id, 1, { model: { ...m, rev: 2 }, name: plain, author: plain, message: plain + ' 2' });
      const got = await store.get(id, 1);
      expect(JSON.stringify(got?.model)).toBe(JSON.stringify(m)); // same keys in the same order, same text
      expect(got).toMatchObject({ author: plain, message: plain + ' 1' });
      expect((await store.list({ q: '軸のねじり', archived: false })).map((s) => [s.id, s.name, s.author])).toEqual([[id, plain, plain]]);
      expect((await store.revisions(id))?.map((r) => r.message)).toEqual([plain + ' 2', plain + ' 1']);
    });

    it('round-trips a large model (over 4 MB of JSON) byte for byte', async () => {
      const store = await fresh();
      const segments = Array.from({ length: 60_000 }, (_, k) => ({ length: `${(k % 97) + 0.5} mm`, section: `d${k % 13}`, material: 'steel', note: `seg ${k} ü` }));
      const m = { format: 'shaftnet/1', name: 'large', shafts: [{ id: 'long', segments }] };
      const text = JSON.stringify(m);
      expect(text.length).toBeGreaterThan(4_000_000);
      const { id } = await store.create({ model: m, name: 'large', author: 'ann', message: 'big' });
      const got = await store.get(id);
      expect(JSON.stringify(got?.model)).toBe(text);
    });

    it('review: records each change with who, when and the note, in the revision, its history and the lists', async () => {
      const store = await fresh();
      const { id } = await store.create(input('A'));
      const r = await store.review({ id, revision: 1, state: 'checked', by: 'Bob', note: 'ok' });
      expect(r.history.map((h) => [h.state, h.by, h.note])).toEqual([
        ['prepared', 'ann', null],
        ['checked', 'Bob', 'ok'],
      ]);
      await store.review({ id, revision: 1, state: 'approved', by: 'Dan', note: '  ' });
      const got = (await store.get(id, 1))!;
      expect(got.review.state).toBe('approved');
      expect(got.review.history.map((h) => h.state)).toEqual(['prepared', 'checked', 'approved']);
      expect(got.review.history[2]).toMatchObject({ state: 'approved', by: 'Dan', note: null });
      expect((await store.list({ archived: false }))[0].reviewState).toBe('approved');
      expect((await store.revisions(id))![0].reviewState).toBe('approved');
      // A new save starts prepared again; the old revision keeps its state.
      await store.save(id, 1, input('A2'));
      expect((await store.revisions(id))!.map((v) => [v.revision, v.reviewState])).toEqual([
        [2, 'prepared'],
        [1, 'approved'],
      ]);
      expect((await store.list({ archived: false }))[0].reviewState).toBe('prepared');
    });

    it('review: refuses an unknown model or revision, a stale revision, a state that cannot follow, four eyes; nothing is recorded', async () => {
      const store = await fresh();
      const { id } = await store.create(input('A'));
      await expect(store.review({ id: 'nope', revision: 1, state: 'checked', by: 'Bob', note: null })).rejects.toBeInstanceOf(ModelNotFoundError);
      await expect(store.review({ id, revision: 2, state: 'checked', by: 'Bob', note: null })).rejects.toBeInstanceOf(RevisionNotFoundError);
      await store.save(id, 1, input('A2'));
      const stale = await store.review({ id, revision: 1, state: 'checked', by: 'Bob', note: null }).catch((e: unknown) => e);
      expect(stale).toBeInstanceOf(ReviewStaleError);
      expect((stale as ReviewStaleError).currentRevision).toBe(2);
      await expect(store.review({ id, revision: 2, state: 'approved', by: 'Dan', note: null })).rejects.toBeInstanceOf(ReviewRefusedError);
      await expect(store.review({ id, revision: 2, state: 'checked', by: ' ANN ', note: null })).rejects.toThrow(/authored/);
      await store.review({ id, revision: 2, state: 'checked', by: 'Bob', note: null });
      await expect(store.review({ id, revision: 2, state: 'approved', by: 'ann', note: null })).rejects.toThrow(/authored/);
      await expect(store.review({ id, revision: 2, state: 'checked', by: 'Cy', note: null })).rejects.toBeInstanceOf(ReviewRefusedError); // checked already
      expect((await store.get(id, 1))!.review.history).toHaveLength(1);
      expect((await store.get(id, 2))!.review.history.map((h) => h.state)).toEqual(['prepared', 'checked']);
      // The checker may also approve (four eyes: only the author may not).
      await store.review({ id, revision: 2, state: 'approved', by: 'bob', note: null });
      expect((await store.get(id, 2))!.review.history.map((h) => [h.state, h.by])).toEqual([
        ['prepared', 'ann'],
        ['checked', 'Bob'],
        ['approved', 'bob'],
      ]);
    });

    it('review: concurrent changes of one revision from two stores: exactly one checks it, the other is refused', async () => {
      const a = await fresh();
      const b = await another();
      const { id } = await a.create(input('A'));
      const results = await settle([a, b, a, b].map((s, k) => s.review({ id, revision: 1, state: 'checked', by: `checker ${k}`, note: null })));
      expect(results.filter((r) => !(r instanceof Error))).toHaveLength(1);
      expect(results.filter((r) => r instanceof ReviewRefusedError)).toHaveLength(3);
      expect((await b.get(id))!.review.history.map((h) => h.state)).toEqual(['prepared', 'checked']);
    });

    it('keys: stores the hash only; lists, finds and revokes by id or name; a live name is unique', async () => {
      const store = await fresh();
      const { key, record } = await makeKey('Ann Lee', 'checker');
      expect(await store.hasKeys()).toBe(false);
      expect(await store.addKey(record)).toEqual({ id: record.id, name: 'Ann Lee', role: 'checker', created: record.created, revoked: null });
      expect(await store.hasKeys()).toBe(true);
      const parsed = parseKey(key)!;
      const stored = (await (await another()).keyRecord(record.id))!; // seen by another store on the library
      expect(stored).toMatchObject({ id: record.id, salt: record.salt, hash: record.hash, params: record.params });
      expect(JSON.stringify(stored)).not.toContain(parsed.secret);
      expect(await secretMatches(parsed.secret, stored)).toBe(true);
      const other = await makeKey('ann lee', 'editor');
      await expect(store.addKey(other.record)).rejects.toBeInstanceOf(KeyNameTakenError);
      expect(await store.revokeKey('ANN LEE', '2026-12-02T08:00:00.000Z')).toMatchObject({ id: record.id, revoked: '2026-12-02T08:00:00.000Z' });
      expect(await store.revokeKey('Ann Lee', '2026-12-02T09:00:00.000Z')).toBeUndefined(); // by name: live keys only
      expect((await store.revokeKey(record.id, '2026-12-02T09:00:00.000Z'))?.revoked).toBe('2026-12-02T08:00:00.000Z'); // keeps its time
      await store.addKey(other.record); // the name is free again
      expect((await store.keys()).map((k) => [k.name, k.revoked === null])).toEqual([
        ['Ann Lee', false],
        ['ann lee', true],
      ]);
      expect(await store.keyRecord('nope')).toBeUndefined();
    });

    it('keys: two stores adding one name at once: exactly one key is made', async () => {
      const a = await fresh();
      const b = await another();
      const made = await Promise.all([0, 1, 2, 3].map((k) => makeKey(k % 2 === 0 ? 'Cy Doe' : 'CY DOE', 'editor')));
      const results = await settle(made.map((m, k) => (k % 2 === 0 ? a : b).addKey(m.record)));
      expect(results.filter((r) => !(r instanceof Error))).toHaveLength(1);
      expect(results.filter((r) => r instanceof KeyNameTakenError)).toHaveLength(3);
      expect(await a.keys()).toHaveLength(1);
    });
  });
}
