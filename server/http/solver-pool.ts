/**
 * A small pool of worker threads for large solves, so that one engineer's
 * million-station model never stalls the event loop that answers everyone else.
 *
 * Each worker runs one job at a time. Jobs wait in a bounded queue (full: 503
 * SN_BUSY). A job that runs past the time limit is answered 504 SN_TIMEOUT and
 * its worker is terminated (the only way to stop a synchronous solve) and
 * replaced on demand. Workers start lazily, on the first large job.
 *
 * Progress and cancel: a job run with `onProgress` gets the worker's progress
 * reports (at most one per PROGRESS_INTERVAL_MS). A job whose `signal` aborts is
 * answered SN_CANCELLED at once; if it waits, it leaves the queue; if it runs,
 * the pool raises the worker's abort flag (a SharedArrayBuffer the worker's
 * engine reads at each checkpoint: a worker busy in a synchronous solve reads
 * no messages), the engine throws SolveAborted at its next checkpoint, gives
 * its memory back, and the worker answers `aborted`: the slot is free and takes
 * the next job, on the same warm worker. Measured (see API.md, Progress): the
 * flag frees a worker in a few ms; terminate + respawn takes far longer before
 * the next job can start (a new thread loads the engine and the LP solver
 * again). A worker that has not answered CANCEL_GRACE_MS after the flag is
 * terminated and replaced, as on a time-out.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { EventEmitter } from 'node:events';
import { Worker } from 'node:worker_threads';
import type { ProgressPhase } from '../engine/progress.js';
import type { ErrorCode, ModelIssue } from '../../shared-types/errors.js';
import { HttpError } from './errors.js';
import { packageRoot } from './paths.js';
import type { SizeLimits } from './solve-core.js';

/** What the pool sends a worker. */
export type WorkerJob = (
  | { id: number; kind: 'model'; model: unknown; combination?: string }
  | { id: number; kind: 'validate'; model: unknown }
  | { id: number; kind: 'bytes'; bytes: Uint8Array; limits: SizeLimits; combination?: string }
) & { progress?: boolean };

/** ms between two progress reports of a worker, at least. */
export const PROGRESS_INTERVAL_MS = 100;
/** ms a worker may take to answer after its abort flag is raised before it is terminated and replaced. */
export const CANCEL_GRACE_MS = 2000;

/** What the pool hands a worker when it starts it: its abort flag (slot 0: the id of the job to stop). */
export interface WorkerInit {
  readonly abort: SharedArrayBuffer;
}

/** A progress report of a running job. */
export interface JobProgress {
  readonly phase: ProgressPhase;
  /** fraction of the phase done, 0 … 1 */
  readonly fraction: number;
}

/** How the caller runs a job: where its progress goes, and the signal that cancels it. */
export interface RunOptions {
  readonly onProgress?: (p: JobProgress) => void;
  readonly signal?: AbortSignal;
}

/**
 * What the pool tells listeners of `events` (for tests and logs):
 * 'started' when a job is posted to a worker; 'freed' when a slot is free again,
 * `how`: 'done' (answered), 'aborted' (the worker's engine stopped at the abort
 * flag), 'terminated' (time limit, fault, or no answer to the flag).
 */
export interface PoolEvents {
  started: [{ id: number; threadId: number }];
  freed: [{ id: number; threadId: number; how: 'done' | 'aborted' | 'terminated' }];
}

/** What a worker answers. */
export type WorkerReply =
  | { id: number; ok: true; chunks: Uint8Array[] | null }
  | { id: number; ok: false; error: { code: ErrorCode; message: string; issues: readonly ModelIssue[] } }
  | { id: number; ok: false; internal: string }
  /** The engine stopped at the abort flag (SolveAborted). */
  | { id: number; ok: false; aborted: true }
  /** A progress report; not an answer. */
  | { id: number; progress: JobProgress };

/** A job as the caller gives it (the pool numbers it). */
export type PoolJob =
  | { kind: 'model'; model: unknown; combination?: string }
  | { kind: 'validate'; model: unknown }
  /** The raw body: its ArrayBuffer is transferred to the worker (the caller must not use it afterwards). */
  | { kind: 'bytes'; bytes: Uint8Array; limits: SizeLimits; combination?: string };

export interface SolverPoolOptions {
  /** worker threads */
  readonly size: number;
  /** jobs that may wait for a worker */
  readonly queueLimit: number;
  /** ms a job may run on a worker */
  readonly timeoutMs: number;
  /** Called with the details of a worker fault (the client only sees SN_INTERNAL). */
  readonly onInternalError?: (message: string) => void;
}

interface Pending {
  job: WorkerJob;
  resolve: (json: Buffer[] | null) => void;
  reject: (err: Error) => void;
  onProgress?: (p: JobProgress) => void;
  /** Answered SN_CANCELLED; still on its worker until the worker answers. */
  cancelled?: boolean;
}

interface Slot {
  worker: Worker | undefined;
  /** The worker's abort flag: Int32Array over the SharedArrayBuffer it was started with. */
  abort: Int32Array | undefined;
  current: Pending | undefined;
  timer: NodeJS.Timeout | undefined;
}

function cancelledError(): HttpError {
  return new HttpError('SN_CANCELLED', 'the solve was cancelled');
}

/**
 * The worker's script. From dist/ it is the compiled solve-worker.js beside this
 * file. From the TypeScript sources (tests, `tsx server/main.ts`) Node 20 cannot
 * load .ts in a worker (`--import tsx` in a worker's execArgv is not honoured),
 * so the worker source is bundled once per process with esbuild (tsx's own
 * compiler, present wherever tsx is) into node_modules/.cache, where its
 * package imports resolve.
 */
let sourceWorker: Promise<string> | undefined;
function workerScript(): Promise<string> {
  const js = fileURLToPath(new URL('./solve-worker.js', import.meta.url));
  if (fs.existsSync(js)) return Promise.resolve(js);
  sourceWorker ??= (async () => {
    const ts = fileURLToPath(new URL('./solve-worker.ts', import.meta.url));
    const esbuild = (await import('esbuild' as string)) as {
      build(o: Record<string, unknown>): Promise<{ outputFiles: Array<{ contents: Uint8Array }> }>;
    };
    const built = await esbuild.build({ entryPoints: [ts], bundle: true, platform: 'node', format: 'esm', packages: 'external', write: false, logLevel: 'silent' });
    const code = built.outputFiles[0].contents;
    // Named by content: processes share one file per version of the sources, and none is left per process.
    const dir = path.join(packageRoot(), 'node_modules', '.cache', 'shaftnet');
    const file = path.join(dir, `solve-worker-${createHash('sha256').update(code).digest('hex').slice(0, 16)}.mjs`);
    if (!fs.existsSync(file)) {
      fs.mkdirSync(dir, { recursive: true });
      const tmp = `${file}.${process.pid}.tmp`;
      fs.writeFileSync(tmp, code);
      fs.renameSync(tmp, file); // atomic: a concurrent reader never sees half a file
    }
    return file;
  })();
  return sourceWorker;
}

export class SolverPool {
  private readonly slots: Slot[];
  private readonly queue: Pending[] = [];
  private nextId = 1;
  private closed = false;
  /** 'started' and 'freed' (see PoolEvents). */
  readonly events = new EventEmitter<PoolEvents>();

  constructor(private readonly opts: SolverPoolOptions) {
    if (!Number.isInteger(opts.size) || opts.size < 1) throw new Error('SolverPool: size must be a whole number >= 1');
    if (!Number.isInteger(opts.queueLimit) || opts.queueLimit < 0) throw new Error('SolverPool: queueLimit must be >= 0');
    if (!(opts.timeoutMs > 0)) throw new Error('SolverPool: timeoutMs must be > 0');
    this.slots = Array.from({ length: opts.size }, () => ({ worker: undefined, abort: undefined, current: undefined, timer: undefined }));
  }

  /** Workers running a job, and the pool size. */
  stats(): { busy: number; total: number } {
    let busy = 0;
    for (const s of this.slots) if (s.current) busy++;
    return { busy, total: this.slots.length };
  }

  /** Starts every worker now rather than on the first job (a server warms up; tests stay lazy). */
  async warm(): Promise<void> {
    const script = await workerScript();
    for (const s of this.slots) if (!s.worker && !s.current && !this.closed) this.spawn(s, script);
  }

  /** Jobs waiting for a worker. */
  get queued(): number {
    return this.queue.length;
  }

  /**
   * Runs a job; resolves the solution's JSON as chunks of bytes (null for 'validate').
   * With `onProgress` the worker reports progress; an abort of `signal` cancels the job
   * (rejected SN_CANCELLED at once; its worker freed as the class comment says).
   */
  run(job: PoolJob, options: RunOptions = {}): Promise<Buffer[] | null> {
    if (this.closed) return Promise.reject(new HttpError('SN_BUSY', 'the server is shutting down'));
    const { signal, onProgress } = options;
    if (signal?.aborted) return Promise.reject(cancelledError());
    return new Promise((resolve, reject) => {
      const pending: Pending = { job: { ...job, id: this.nextId++, progress: onProgress !== undefined } as WorkerJob, resolve, reject, onProgress };
      if (signal) {
        const onAbort = () => this.cancel(pending);
        signal.addEventListener('abort', onAbort, { once: true });
        const settle = <A extends unknown[]>(f: (...a: A) => void) => (...a: A) => {
          signal.removeEventListener('abort', onAbort);
          f(...a);
        };
        pending.resolve = settle(resolve);
        pending.reject = settle(reject);
      }
      const idle = this.slots.find((s) => !s.current);
      if (idle) this.start(idle, pending);
      else if (this.queue.length < this.opts.queueLimit) this.queue.push(pending);
      else {
        reject(
          new HttpError('SN_BUSY', `all ${this.slots.length} solver workers are busy and ${this.queue.length} solves are waiting; retry shortly`),
        );
      }
    });
  }

  /** Cancels a job: out of the queue, or its worker's abort flag raised (see the class comment). */
  private cancel(pending: Pending): void {
    const q = this.queue.indexOf(pending);
    if (q >= 0) {
      this.queue.splice(q, 1);
      pending.reject(cancelledError());
      return;
    }
    const slot = this.slots.find((s) => s.current === pending);
    if (!slot || pending.cancelled) return;
    pending.cancelled = true;
    pending.reject(cancelledError());
    if (!slot.worker || !slot.abort) {
      // Not posted yet (the worker script is being prepared): nothing runs; free the slot.
      if (slot.timer) clearTimeout(slot.timer);
      slot.timer = undefined;
      slot.current = undefined;
      this.next(slot);
      return;
    }
    Atomics.store(slot.abort, 0, pending.job.id);
    // The time limit's timer becomes the grace period: no answer by then, and the worker is replaced.
    if (slot.timer) clearTimeout(slot.timer);
    slot.timer = setTimeout(() => {
      slot.timer = undefined;
      if (slot.current !== pending) return;
      this.replace(slot, pending);
    }, CANCEL_GRACE_MS);
  }

  /** Terminates the slot's worker (a new one starts on demand) and frees the slot. */
  private replace(slot: Slot, pending: Pending): void {
    slot.current = undefined;
    const worker = slot.worker;
    slot.worker = undefined;
    slot.abort = undefined;
    void worker?.terminate();
    this.events.emit('freed', { id: pending.job.id, threadId: worker?.threadId ?? -1, how: 'terminated' });
    this.next(slot);
  }

  /** Stops every worker; waiting and running jobs are answered SN_BUSY. */
  async close(): Promise<void> {
    this.closed = true;
    const gone = new HttpError('SN_BUSY', 'the server is shutting down');
    for (const p of this.queue.splice(0)) p.reject(gone);
    await Promise.all(
      this.slots.map(async (s) => {
        if (s.timer) clearTimeout(s.timer);
        s.current?.reject(gone);
        s.current = undefined;
        const w = s.worker;
        s.worker = undefined;
        if (w) await w.terminate();
      }),
    );
  }

  private spawn(slot: Slot, script: string): Worker {
    // A large young generation: a million-station solve allocates heavily, and the default one
    // makes the collector promote and re-mark the growing heap again and again.
    const abort = new SharedArrayBuffer(4);
    const init: WorkerInit = { abort };
    const worker = new Worker(script, { resourceLimits: { maxYoungGenerationSizeMb: 256 }, workerData: init });
    slot.abort = new Int32Array(abort);
    worker.on('message', (reply: WorkerReply) => this.finish(slot, worker, reply));
    worker.on('error', (err) => this.fault(slot, worker, `worker error: ${err.stack ?? err.message}`));
    worker.on('exit', (code) => {
      if (slot.worker === worker) this.fault(slot, worker, `worker exited with code ${code}`);
    });
    // An idle worker must not keep the process alive.
    worker.unref();
    slot.worker = worker;
    return worker;
  }

  private start(slot: Slot, pending: Pending): void {
    slot.current = pending;
    if (slot.worker) this.post(slot, slot.worker, pending);
    else {
      workerScript().then(
        (script) => {
          if (slot.current !== pending || this.closed) return; // timed out or closed meanwhile
          this.post(slot, this.spawn(slot, script), pending);
        },
        (err: Error) => {
          if (slot.current !== pending) return;
          if (slot.timer) clearTimeout(slot.timer);
          slot.timer = undefined;
          slot.current = undefined;
          this.opts.onInternalError?.(`cannot prepare the solver worker: ${err.stack ?? err.message}`);
          pending.reject(new HttpError('SN_INTERNAL', 'internal server error; the server log has the details'));
          this.next(slot);
        },
      );
    }
    this.arm(slot, pending);
  }

  /** Starts the time limit of the slot's job. */
  private arm(slot: Slot, pending: Pending): void {
    slot.timer = setTimeout(() => {
      slot.timer = undefined;
      if (slot.current !== pending) return;
      pending.reject(
        new HttpError('SN_TIMEOUT', `the solve took longer than the time limit of ${this.opts.timeoutMs} ms (see --solve-timeout)`),
      );
      this.replace(slot, pending);
    }, this.opts.timeoutMs);
  }

  private post(_slot: Slot, worker: Worker, pending: Pending): void {
    const job = pending.job;
    this.events.emit('started', { id: job.id, threadId: worker.threadId });
    if (job.kind === 'bytes') worker.postMessage(job, [job.bytes.buffer as ArrayBuffer]);
    else worker.postMessage(job);
  }

  private finish(slot: Slot, worker: Worker, reply: WorkerReply): void {
    if (slot.worker !== worker || !slot.current || slot.current.job.id !== reply.id) return;
    const p = slot.current;
    if ('progress' in reply) {
      if (!p.cancelled) p.onProgress?.(reply.progress);
      return;
    }
    if (slot.timer) clearTimeout(slot.timer);
    slot.timer = undefined;
    slot.current = undefined;
    this.events.emit('freed', { id: reply.id, threadId: worker.threadId, how: 'aborted' in reply ? 'aborted' : 'done' });
    if (p.cancelled) {
      // Already answered SN_CANCELLED; whatever the worker says now is for nobody.
    } else if ('aborted' in reply) p.reject(cancelledError());
    else if (reply.ok) p.resolve(reply.chunks ? reply.chunks.map((c) => Buffer.from(c.buffer, c.byteOffset, c.byteLength)) : null);
    else if ('error' in reply) p.reject(new HttpError(reply.error.code, reply.error.message, reply.error.issues));
    else {
      this.opts.onInternalError?.(reply.internal);
      p.reject(new HttpError('SN_INTERNAL', 'internal server error; the server log has the details'));
    }
    this.next(slot);
  }

  private fault(slot: Slot, worker: Worker, message: string): void {
    if (slot.worker !== worker) return;
    slot.worker = undefined;
    slot.abort = undefined;
    void worker.terminate();
    if (slot.timer) clearTimeout(slot.timer);
    slot.timer = undefined;
    const p = slot.current;
    slot.current = undefined;
    if (p) this.events.emit('freed', { id: p.job.id, threadId: worker.threadId, how: 'terminated' });
    this.opts.onInternalError?.(message);
    p?.reject(new HttpError('SN_INTERNAL', 'internal server error; the server log has the details'));
    this.next(slot);
  }

  private next(slot: Slot): void {
    if (this.closed) return;
    const pending = this.queue.shift();
    if (pending) this.start(slot, pending);
  }
}
