/**
 * Server-instance benchmark (not a test): saves per second through HTTP, into a
 * library in PostgreSQL (a throwaway cluster on 127.0.0.1, fsync on), on one
 * server instance and on two instances sharing the database.
 *   Each phase: WRITERS HTTP clients, each saving revision after revision of its
 *   own model (PUT /api/models/{id} on the latest base), spread evenly over the
 *   instances, for BENCH_SECONDS. Every save is the demo model
 *   (server/demos/mixer-drive.json) with a counter. Saves are validated by the
 *   server as usual (the validation is part of what a save costs).
 * The instances are real processes (node dist/server/main.js --database …):
 * build first (npm run build). On a machine with few cores the client, the
 * instances and PostgreSQL share them: read the two figures together, with the
 * calibration line.
 *
 * Run: npm run bench:instances   (env BENCH_SECONDS=5, BENCH_WRITERS=8)
 */
import type { ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { pgAvailability, startPgCluster } from '../helpers/pg-cluster.js';
import { spawnServer, type ServerProcess } from '../helpers/server-process.js';
import { calibrationLine } from './calibrate.js';
import { figuresLine, measureWriters, type WriterFigures } from './save-writers.js';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 5);
const WRITERS = Number(process.env.BENCH_WRITERS ?? 8);
const root = fileURLToPath(new URL('../../', import.meta.url));
const mainJs = path.join(root, 'dist', 'server', 'main.js');
const demo = JSON.parse(fs.readFileSync(path.join(root, 'server/demos/mixer-drive.json'), 'utf8')) as Record<string, unknown>;

async function send(url: string, method: string, body: unknown): Promise<{ id: string; revision: number }> {
  const r = await fetch(url, { method, headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  if (r.status !== 200 && r.status !== 201) throw new Error(`${method} ${url}: ${r.status} ${await r.text()}`);
  return (await r.json()) as { id: string; revision: number };
}

function measure(instances: readonly ServerProcess[]): Promise<WriterFigures> {
  const base = (w: number) => instances[w % instances.length].url;
  return measureWriters(
    WRITERS,
    SECONDS,
    (w) => send(`${base(w)}/api/models`, 'POST', { model: demo, author: 'bench', message: 'start' }),
    (w, k, { id, revision }) => send(`${base(w)}/api/models/${id}`, 'PUT', { model: { ...demo, notes: `bench ${w} save ${k}` }, author: 'bench', baseRevision: revision }),
  );
}

const line = (label: string, r: WriterFigures) => figuresLine(label, r, 52, 7);

if (!fs.existsSync(mainJs)) throw new Error('dist/server/main.js is missing: npm run build first');
const pg = pgAvailability();
if (!pg.available) {
  console.log(`not measured: ${pg.reason}`);
} else {
  console.log(calibrationLine());
  console.log(`model: ${JSON.stringify(demo).length} characters of JSON per save; ${WRITERS} HTTP writers; ${SECONDS} s per phase`);
  const children = new Set<ChildProcess>();
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-instances-bench-'));
  const cluster = await startPgCluster(pg.bin, { durable: true });
  try {
    const url = await cluster.createDatabase('bench');
    const start = () =>
      spawnServer(mainJs, ['--port', '0', '--data', dataDir, '--database', url, '--log-level', 'warn', '--rate-limit', '0', '--workers', '1'], { cwd: root, children, timeoutMs: 30_000 });
    const one = await start();
    console.log(line('1 instance, PostgreSQL (fsync on)', await measure([one])));
    const two = await start();
    console.log(line('2 instances on one database, PostgreSQL (fsync on)', await measure([one, two])));
  } finally {
    for (const c of children) c.kill('SIGTERM');
    cluster.destroy();
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
  console.log(calibrationLine());
}
