/**
 * POST /api/solve: a model in, its solution out.
 *
 * Small models are solved on the request thread: a 50-station solve costs a
 * fraction of a millisecond, less than a round trip to a worker. (Letting an
 * idle worker share small solves was tried and measured: on this 2-core
 * machine it lowered throughput and raised p99.) Models above the station
 * threshold, and bodies too large to parse without stalling the event loop, go
 * to the worker pool with its time limit.
 * Rate limited per client address.
 *
 * With `Accept: text/event-stream` the answer is a stream of events: progress
 * (from the worker, at most one per 100 ms), then `result` (the same JSON) or
 * `error` (the same error body). An error before the first event is an
 * ordinary error answer with its status. A client that goes away (the
 * connection closes before the answer is sent, with or without events) cancels
 * its worker solve: the pool raises the worker's abort flag and the worker is
 * free for the next job (solver-pool.ts).
 */
import { Readable } from 'node:stream';
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyReply, FastifyRequest } from 'fastify';
import rateLimit from '@fastify/rate-limit';
import Type from 'typebox';
import { Model } from '../../../shared-types/model.js';
import { Solution, type Solution as SolutionT } from '../../../shared-types/solution.js';
import { loadLpSolver, overallFraction, solveModelJson, Workspace } from '../../engine/index.js';
import { HttpError, toErrorReply } from '../errors.js';
import { errorResponses } from '../schemas.js';
import { checkSize, type SizeLimits } from '../solve-core.js';
import type { JobProgress, PoolJob, SolverPool } from '../solver-pool.js';
import { DeferredBody } from '../validation.js';

export interface SolveOptions {
  readonly pool: SolverPool;
  readonly limits: SizeLimits;
  /** stations above which a solve runs in a worker */
  readonly workerThreshold: number;
  /** solves per minute per address; 0 = no limit */
  readonly rateLimitPerMinute: number;
}

/** Sends a worker's answer: one buffer as is, several as a stream (never joined into one block). */
function sendChunks(reply: FastifyReply, chunks: Buffer[]): FastifyReply {
  reply.type('application/json; charset=utf-8');
  if (chunks.length === 1) return reply.send(chunks[0]);
  let length = 0;
  for (const c of chunks) length += c.byteLength;
  // One chunk per turn of the event loop. On loopback the socket often takes each write at once, and
  // the write-drain-write chain then runs on process.nextTick without ever yielding: a 600 MB answer
  // would hold the loop for the whole send. setImmediate lets other requests in between chunks.
  let next = 0;
  const stream = new Readable({
    highWaterMark: 1 << 20, // bytes
    read() {
      const chunk = next < chunks.length ? chunks[next++] : null;
      setImmediate(() => this.push(chunk));
    },
  });
  return reply.header('content-length', length).send(stream);
}

/** Whether the client asked for the answer as a stream of events (progress, then the answer). */
function wantsEvents(req: FastifyRequest): boolean {
  const accept = req.headers.accept;
  return typeof accept === 'string' && /(^|,)\s*text\/event-stream\s*(;|,|$)/i.test(accept);
}

/** A signal that aborts when the client goes away before its answer is sent. */
function clientGone(reply: FastifyReply): AbortSignal {
  const ac = new AbortController();
  reply.raw.once('close', () => {
    if (!reply.raw.writableFinished) ac.abort();
  });
  return ac.signal;
}

/** One server-sent event: its name and its data on one line (JSON has no raw line breaks). */
function sseEvent(event: string, data: string): Buffer {
  return Buffer.from(`event: ${event}\ndata: ${data}\n\n`, 'utf8');
}

/** The progress event's data: the phase, the fraction of it done, and of the whole solve. */
export function progressData(p: JobProgress): string {
  return JSON.stringify({ phase: p.phase, fraction: round4(p.fraction), overall: round4(overallFraction(p.phase, p.fraction)) });
}

function round4(x: number): number {
  return Math.round(x * 1e4) / 1e4;
}

/**
 * The body of an event-stream answer: items are queued as they come and pushed one per turn of the
 * event loop (as `sendChunks` does: a large answer never holds the loop).
 */
class EventStream extends Readable {
  private readonly items: Array<Buffer | null> = [];
  private wanted = false;
  constructor() {
    super({ highWaterMark: 1 << 20 }); // bytes
  }
  add(item: Buffer): void {
    this.items.push(item);
    this.pump();
  }
  finish(): void {
    this.items.push(null);
    this.pump();
  }
  override _read(): void {
    this.wanted = true;
    this.pump();
  }
  private pump(): void {
    if (!this.wanted || this.items.length === 0) return;
    this.wanted = false;
    const item = this.items.shift() as Buffer | null;
    setImmediate(() => this.push(item));
  }
}

/**
 * Runs a worker job and answers it as events: the stream (and the 200) starts with the first
 * progress report or with the answer; an error before that is an ordinary error answer.
 */
function streamWorkerSolve(reply: FastifyReply, pool: SolverPool, job: PoolJob): FastifyReply {
  const signal = clientGone(reply);
  let stream: EventStream | undefined;
  const open = (): EventStream => {
    if (!stream) {
      stream = new EventStream();
      void reply.header('cache-control', 'no-store').type('text/event-stream; charset=utf-8').send(stream);
    }
    return stream;
  };
  pool.run(job, { signal, onProgress: (p) => open().add(sseEvent('progress', progressData(p))) }).then(
    (chunks) => {
      const s = open();
      s.add(Buffer.from('event: result\ndata: ', 'utf8'));
      for (const c of chunks ?? []) s.add(c);
      s.add(Buffer.from('\n\n', 'utf8'));
      s.finish();
    },
    (err: unknown) => {
      if (signal.aborted) return; // nobody to tell
      if (!stream) {
        void reply.send(err); // the error handler answers it, status and all
        return;
      }
      const { body, internal } = toErrorReply(err);
      if (internal) reply.log.error({ err }, 'internal error');
      stream.add(sseEvent('error', JSON.stringify(body)));
      stream.finish();
    },
  );
  return reply;
}

const solveRoutes: FastifyPluginAsyncTypebox<SolveOptions> = async (app, opts) => {
  /** The request thread's work memory, kept warm between its small solves. */
  const workspace = new Workspace();
  /** The LP solver of the overload factors, loaded once with the routes. */
  const lp = await loadLpSolver();
  if (opts.rateLimitPerMinute > 0) {
    await app.register(rateLimit, {
      global: true, // within this plugin only: the solve route
      max: opts.rateLimitPerMinute,
      timeWindow: 60_000, // ms
      errorResponseBuilder: (_req, ctx) =>
        new HttpError(
          'SN_RATE_LIMITED',
          `too many solves: at most ${ctx.max} a minute from one address; retry in ${ctx.after}`,
        ),
    });
  }

  app.post(
    '/api/solve',
    {
      schema: {
        tags: ['solve'],
        summary: 'Solve a model',
        description:
          'Answers the solution (SI units). 400 names the field by JSON pointer; 422 names the shafts of a mechanism or the connections of a loop that cannot close; 413 for a model over the size limits. ' +
          'With Accept: text/event-stream: progress events, then the event result (the same JSON) or error (the same error body); closing the connection cancels the solve (API.md, "Progress and cancel").',
        querystring: Type.Object(
          {
            combination: Type.Optional(
              Type.String({ minLength: 1, maxLength: 100, description: 'A model with load cases: the combination the top-level results show (default: the first).' }),
            ),
          },
        ),
        body: Model,
        response: { 200: Solution, ...errorResponses(400, 401, 413, 422, 429, 503, 504) },
      },
    },
    async (req, reply) => {
      const body: unknown = req.body;
      const combination = req.query.combination;
      const events = wantsEvents(req);
      let job: PoolJob | undefined;
      if (body instanceof DeferredBody) {
        // Too large to parse here without stalling other requests: the worker parses, checks and solves.
        job = { kind: 'bytes', bytes: body.bytes, limits: opts.limits, combination };
      } else if (checkSize(body, opts.limits).stations > opts.workerThreshold) {
        job = { kind: 'model', model: body, combination };
      }
      if (job !== undefined) {
        if (events) return streamWorkerSolve(reply, opts.pool, job);
        const chunks = await opts.pool.run(job, { signal: clientGone(reply) });
        return sendChunks(reply, chunks ?? []);
      }
      // The engine writes the JSON text itself (the text JSON.stringify would give the solution object);
      // Fastify sends a string as it is, so the type provider is told it is the Solution it encodes.
      let text = '';
      solveModelJson(body, (piece) => (text += piece), { workspace, combination, lp }, Infinity);
      if (events) {
        // Solved at once: no progress to tell, only the answer.
        reply.header('cache-control', 'no-store').type('text/event-stream; charset=utf-8');
        return reply.send(`event: result\ndata: ${text}\n\n` as unknown as SolutionT);
      }
      return reply.type('application/json; charset=utf-8').send(text as unknown as SolutionT);
    },
  );
};

export default solveRoutes;
