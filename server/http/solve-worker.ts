/**
 * A solver worker thread. It takes one job at a time from the pool and answers
 * with the solution already written as JSON bytes, in chunks transferred (not
 * copied) to the request thread, so that a large solution never costs the
 * request thread a serialisation or a copy. After each job it drops the
 * engine's kept work memory: an idle server should not hold the hundreds of
 * megabytes a million-station solve needed.
 *
 * A job asked with progress posts progress messages while it runs (at most one
 * per PROGRESS_INTERVAL_MS); every job reads its abort flag (a SharedArrayBuffer
 * from the pool, see solver-pool.ts) at the engine's checkpoints and after
 * parsing, and stops with SolveAborted when it holds the job's id.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { ModelError } from '../../shared-types/errors.js';
import { loadLpSolver, SolveAborted, solveModelJson, throttled, type SolveProgress } from '../engine/index.js';
import { Workspace } from '../engine/workspace.js';
import { normaliseModel } from '../engine/normalise.js';
import { HttpError } from './errors.js';
import { checkModelShape, checkSize, parseJsonText } from './solve-core.js';
import { PROGRESS_INTERVAL_MS, type WorkerInit, type WorkerJob, type WorkerReply } from './solver-pool.js';

const COPY_BELOW = 64 * 1024; // bytes: smaller chunks are copied (they may share a pooled ArrayBuffer)
/** This worker's work memory: its small chunks stay warm; its large slab is dropped after each job. */
const workspace = new Workspace();
/** The LP solver of the overload factors, loaded once per worker. */
const lp = await loadLpSolver();
/** The abort flag: holds the id of the job the pool wants stopped. */
const abortFlag = new Int32Array((workerData as WorkerInit).abort);

/** The engine's progress for one job: the flag read at each checkpoint; reports posted, throttled. */
function jobProgress(job: WorkerJob): SolveProgress {
  const post = job.progress
    ? throttled((phase, fraction) => parentPort?.postMessage({ id: job.id, progress: { phase, fraction } } satisfies WorkerReply), PROGRESS_INTERVAL_MS)
    : () => {};
  return {
    report: post,
    get aborted() {
      return Atomics.load(abortFlag, 0) === job.id;
    },
  };
}

function run(job: WorkerJob): { reply: WorkerReply; transfer: ArrayBuffer[] } {
  const progress = jobProgress(job);
  try {
    let model: unknown;
    if (job.kind === 'bytes') {
      // A large body that the request thread did not even decode: do every step here.
      model = parseJsonText(Buffer.from(job.bytes.buffer, job.bytes.byteOffset, job.bytes.byteLength).toString('utf8'));
      checkModelShape(model);
      checkSize(model, job.limits);
      if (progress.aborted) throw new SolveAborted(); // parsing a large body takes a while
    } else {
      model = job.model;
    }
    if (job.kind === 'validate') {
      normaliseModel(model);
      return { reply: { id: job.id, ok: true, chunks: null }, transfer: [] };
    }
    const chunks: Uint8Array[] = [];
    const transfer = new Set<ArrayBuffer>();
    solveModelJson(model, (text) => {
      const c = Buffer.from(text, 'utf8');
      if (c.byteLength < COPY_BELOW) chunks.push(new Uint8Array(c));
      else {
        chunks.push(new Uint8Array(c.buffer, c.byteOffset, c.byteLength));
        transfer.add(c.buffer as ArrayBuffer);
      }
    }, { workspace, combination: job.combination, lp, progress });
    return { reply: { id: job.id, ok: true, chunks }, transfer: [...transfer] };
  } catch (err) {
    if (err instanceof SolveAborted) return { reply: { id: job.id, ok: false, aborted: true }, transfer: [] };
    if (err instanceof HttpError || err instanceof ModelError) {
      return { reply: { id: job.id, ok: false, error: { code: err.code, message: err.message, issues: err.issues } }, transfer: [] };
    }
    const message = err instanceof Error ? `${err.name}: ${err.message}\n${err.stack ?? ''}` : String(err);
    return { reply: { id: job.id, ok: false, internal: message }, transfer: [] };
  }
}

parentPort?.on('message', (job: WorkerJob) => {
  const { reply, transfer } = run(job);
  parentPort?.postMessage(reply, transfer);
  workspace.dropKept();
});
