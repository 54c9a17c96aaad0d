/**
 * `shaftnet keys` on a PostgreSQL library (`--database`): add, list and revoke as on SQLite,
 * the key printed once and alone, the library keeping only its hash. The behaviour is this
 * project's contract (README "Review and sign-off", "Deployment"). Skipped, loudly, without
 * PostgreSQL unless SHAFTNET_REQUIRE_POSTGRES=1.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../server/cli.js';
import { KEY_PATTERN } from '../../server/store/keys.js';
import { openPgStore } from '../../server/store/pg-store.js';
import { pgSuiteGate, startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';

const gate = pgSuiteGate('shaftnet keys on PostgreSQL');

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, (s) => (out += s + '\n'), (s) => (err += s + '\n'));
  return { code, out, err };
}

describe.skipIf(gate.skip)('shaftnet keys --database postgres://…', () => {
  let cluster: PgCluster;
  let url: string;

  beforeAll(async () => {
    cluster = await startPgCluster(gate.bin);
    url = await cluster.createDatabase('keys');
  });
  afterAll(() => {
    cluster?.destroy();
  });

  it('adds, lists and revokes a key in the database; the key is printed once, only its hash is kept', async () => {
    const added = await run(['keys', 'add', 'Ann Lee', '--role', 'checker', '--database', url]);
    expect(added.code, added.err).toBe(0);
    const key = added.out.trim();
    expect(key).toMatch(KEY_PATTERN);
    const listed = await run(['keys', 'list', '--database', url, '--json']);
    expect(listed.code).toBe(0);
    const keys = JSON.parse(listed.out) as Array<{ id: string; name: string; role: string; revoked: string | null }>;
    expect(keys.map((k) => [k.name, k.role, k.revoked])).toEqual([['Ann Lee', 'checker', null]]);
    expect(listed.out).not.toContain(key.split('_')[2]);
    const store = await openPgStore(url);
    try {
      const record = await store.keyRecord(keys[0].id);
      expect(record?.hash).toBeDefined();
      expect(JSON.stringify(record)).not.toContain(key.split('_')[2]);
    } finally {
      await store.close();
    }
    expect((await run(['keys', 'add', 'ann lee', '--role', 'editor', '--database', url])).code).toBe(1); // a live key has the name
    const revoked = await run(['keys', 'revoke', 'Ann Lee', '--database', url]);
    expect(revoked.code, revoked.err).toBe(0);
    expect(revoked.out).toContain(`revoked key ${keys[0].id} of Ann Lee (checker)`);
    const after = JSON.parse((await run(['keys', 'list', '--database', url, '--json'])).out) as Array<{ revoked: string | null }>;
    expect(after[0].revoked).not.toBeNull();
  });

  it('an unreachable database is a clear refusal with status 1, naming where it looked', async () => {
    const r = await run(['keys', 'list', '--database', 'postgres://nobody@127.0.0.1:1/none']);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/127\.0\.0\.1/);
  });
});
