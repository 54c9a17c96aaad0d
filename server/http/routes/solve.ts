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
 */
import { Readable } from 'node:stream';
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyReply } from 'fastify';
import rateLimit from '@fastify/rate-limit';
import Type from 'typebox';
import { Model } from '../../../shared-types/model.js';
import { Solution, type Solution as SolutionT } from '../../../shared-types/solution.js';
import { loadLpSolver, solveModelJson, Workspace } from '../../engine/index.js';
import { HttpError } from '../errors.js';
import { errorResponses } from '../schemas.js';
import { checkSize, type SizeLimits } from '../solve-core.js';
import type { SolverPool } from '../solver-pool.js';
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
          'Answers the solution (SI units). 400 names the field by JSON pointer; 422 names the shafts of a mechanism or the connections of a loop that cannot close; 413 for a model over the size limits.',
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
      if (body instanceof DeferredBody) {
        // Too large to parse here without stalling other requests: the worker parses, checks and solves.
        const chunks = await opts.pool.run({ kind: 'bytes', bytes: body.bytes, limits: opts.limits, combination });
        return sendChunks(reply, chunks ?? []);
      }
      const size = checkSize(body, opts.limits);
      if (size.stations > opts.workerThreshold) {
        const chunks = await opts.pool.run({ kind: 'model', model: body, combination });
        return sendChunks(reply, chunks ?? []);
      }
      // The engine writes the JSON text itself (the text JSON.stringify would give the solution object);
      // Fastify sends a string as it is, so the type provider is told it is the Solution it encodes.
      let text = '';
      solveModelJson(body, (piece) => (text += piece), { workspace, combination, lp }, Infinity);
      return reply.type('application/json; charset=utf-8').send(text as unknown as SolutionT);
    },
  );
};

export default solveRoutes;
