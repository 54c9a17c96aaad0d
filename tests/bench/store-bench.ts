/**
 * Store benchmark (not a test): saves per second into the library, SQLite against
 * PostgreSQL, through the one asynchronous interface the server uses.
 *   1. SQLite (a file in a temporary directory, WAL, synchronous=FULL): one writer
 *      saving revision after revision of one model.
 *   2. PostgreSQL (a throwaway cluster on 127.0.0.1, fsync on, default commit
 *      settings): the same, one writer.
 *   3. PostgreSQL, WRITERS writers at once, each on its own model (the pool
 *      spreads them over connections; SQLite writes one at a time, so it has no
 *      such phase).
 * Every save is the demo model (server/demos/mixer-drive.json) with a counter.
 * Two server instances on one database: measured with the two-instance tests.
 *
 * Run: npm run bench:store   (env BENCH_SECONDS=5 the measuring time per phase, BENCH_WRITERS=8)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { asyncFromSync, type AsyncModelStore } from '../../server/store/async-store.js';
import { openPgStore } from '../../server/store/pg-store.js';
import { openSqliteStore } from '../../server/store/sqlite-store.js';
import { pgAvailability, startPgCluster } from '../helpers/pg-cluster.js';
import { calibrationLine } from './calibrate.js';
import { figuresLine, measureWriters, type WriterFigures } from './save-writers.js';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 5);
const WRITERS = Number(process.env.BENCH_WRITERS ?? 8);
const root = fileURLToPath(new URL('../../', import.meta.url));
const demo = JSON.parse(fs.readFileSync(path.join(root, 'server/demos/mixer-drive.json'), 'utf8')) as Record<string, unknown>;

/** One writer per entry of `writers` saving on its own model until the time is up: saves per second and p50/p99 ms. */
function measure(store: AsyncModelStore, writers: number): Promise<WriterFigures> {
  return measureWriters(
    writers,
    SECONDS,
    (w) => store.create({ model: demo, name: `bench ${w}`, author: 'bench', message: 'start' }),
    (w, k, { id, revision }) => store.save(id, revision, { model: { ...demo, benchCounter: k }, name: `bench ${w}`, author: 'bench', message: `save ${k}` }),
  );
}

const line = (label: string, r: WriterFigures) => figuresLine(label, r, 44, 6);

console.log(calibrationLine());
console.log(`model: ${JSON.stringify(demo).length} characters of JSON per save; ${SECONDS} s per phase`);

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-store-bench-'));
try {
  const sqlite = asyncFromSync(openSqliteStore(dir));
  console.log(line('SQLite, 1 writer', await measure(sqlite, 1)));
  await sqlite.close();
} finally {
  fs.rmSync(dir, { recursive: true, force: true });
}

const pg = pgAvailability();
if (!pg.available) {
  console.log(`PostgreSQL: not measured (${pg.reason})`);
} else {
  const cluster = await startPgCluster(pg.bin, { durable: true });
  try {
    const store = await openPgStore(await cluster.createDatabase('bench'), { poolSize: Math.max(10, WRITERS) });
    console.log(line('PostgreSQL (fsync on), 1 writer', await measure(store, 1)));
    console.log(line(`PostgreSQL (fsync on), ${WRITERS} writers, own models`, await measure(store, WRITERS)));
    await store.close();
  } finally {
    cluster.destroy();
  }
}
