/**
 * The calculation sheet: `GET /api/models/{id}/revisions/{rev}/sheet` (a stored revision) and
 * `POST /api/sheet` (the unsaved model in the body) answer one self-contained HTML page
 * (server/sheet/sheet.ts) under a CSP that allows no script and no fetch: `default-src 'none';
 * style-src 'unsafe-inline'; img-src data:`.
 *
 * Solving goes the way of POST /api/solve (`solveForRoute`, also used by the compare routes): the
 * size check, a worker above the station threshold, else the request thread's own workspace; the
 * solution is the JSON text the solve route would send, parsed. A bad model answers the same 400 /
 * 422 JSON errors as /api/solve.
 */
import rateLimit from '@fastify/rate-limit';
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyInstance } from 'fastify';
import Type from 'typebox';
import { ModelError } from '../../../shared-types/errors.js';
import { Model, type Model as ModelT } from '../../../shared-types/model.js';
import type { Solution } from '../../../shared-types/solution.js';
import { loadLpSolver, solveModelJson, Workspace, type LpSolver } from '../../engine/index.js';
import { renderSheet, type SheetRevision } from '../../sheet/sheet.js';
import type { AsyncModelStore } from '../../store/async-store.js';
import { HttpError } from '../errors.js';
import { errorResponses, RevisionParams } from '../schemas.js';
import { checkSize, type SizeLimits } from '../solve-core.js';
import type { SolverPool } from '../solver-pool.js';

/** The sheet's Content-Security-Policy: styles inline, images as data: URLs, nothing else. */
export const SHEET_CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:";

/** What a route needs to solve the way POST /api/solve does. */
export interface SolvePath {
  readonly pool: SolverPool;
  readonly limits: SizeLimits;
  /** stations above which a solve runs in a worker */
  readonly workerThreshold: number;
  /** solves per minute per address, as POST /api/solve counts them; 0 = no limit */
  readonly rateLimitPerMinute: number;
}

/** The solve route's rate limit on a plugin's routes (each of them solves): 429 SN_RATE_LIMITED past it. */
export async function limitSolves(app: FastifyInstance, perMinute: number): Promise<void> {
  if (perMinute <= 0) return;
  await app.register(rateLimit, {
    global: true, // within the registering plugin only
    max: perMinute,
    timeWindow: 60_000, // ms
    errorResponseBuilder: (_req, ctx) =>
      new HttpError('SN_RATE_LIMITED', `too many solves: at most ${ctx.max} a minute from one address; retry in ${ctx.after}`),
  });
}

/** A solver with its warm workspace and LP solver, for one plugin's routes. */
export interface RouteSolver {
  (model: unknown): Promise<Solution>;
}

/** Makes the solve of POST /api/solve as a function answering the solution object. */
export async function routeSolver(path: SolvePath): Promise<RouteSolver> {
  const workspace = new Workspace();
  const lp: LpSolver = await loadLpSolver();
  return async (model: unknown) => {
    const size = checkSize(model, path.limits);
    if (size.stations > path.workerThreshold) {
      const chunks = await path.pool.run({ kind: 'model', model });
      return JSON.parse(Buffer.concat(chunks ?? []).toString('utf8')) as Solution;
    }
    let text = '';
    solveModelJson(model, (piece) => (text += piece), { workspace, lp }, Infinity);
    return JSON.parse(text) as Solution;
  };
}

/** True for an error that says the model is valid but cannot be solved (a mechanism, a loop that does not close). */
export function isUnsolvable(err: unknown): err is ModelError | HttpError {
  return (err instanceof ModelError || err instanceof HttpError) && err.status === 422;
}

export interface SheetOptions extends SolvePath {
  readonly store: AsyncModelStore;
  /** Software version printed on the sheet. */
  readonly version: string;
}

function notFound(id: string, revision?: number): HttpError {
  const message = revision === undefined ? `no model "${id}"` : `model "${id}" has no revision ${revision}`;
  return new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: revision === undefined ? '/id' : '/rev', message }]);
}

const HtmlPage = Type.String({ description: 'The calculation sheet: one HTML page, no script.' });

const sheetRoutes: FastifyPluginAsyncTypebox<SheetOptions> = async (app, opts) => {
  const solve = await routeSolver(opts);
  await limitSolves(app as unknown as FastifyInstance, opts.rateLimitPerMinute);

  const send = (reply: import('fastify').FastifyReply, html: string) =>
    reply.header('content-security-policy', SHEET_CSP).header('x-content-type-options', 'nosniff').type('text/html; charset=utf-8').send(html);

  app.get(
    '/api/models/:id/revisions/:rev/sheet',
    {
      schema: {
        tags: ['review'],
        summary: 'The calculation sheet of a stored revision (HTML, print-ready, no script)',
        params: RevisionParams,
        response: { 200: HtmlPage, ...errorResponses(400, 401, 404, 413, 422, 503, 504) },
      },
    },
    async (req, reply) => {
      const { id, rev } = req.params;
      if ((await opts.store.latestRevision(id)) === undefined) throw notFound(id);
      const found = await opts.store.get(id, rev);
      if (!found) throw notFound(id, rev);
      const solution = await solve(found.model);
      const stored = found as typeof found & { review?: SheetRevision['review'] };
      const revision: SheetRevision = {
        id: found.id,
        revision: found.revision,
        author: found.author,
        message: found.message,
        created: found.created,
        ...(stored.review ? { review: stored.review } : {}),
      };
      return send(reply, renderSheet({ model: found.model as ModelT, solution, revision, version: opts.version, generated: new Date().toISOString() }));
    },
  );

  app.post(
    '/api/sheet',
    {
      schema: {
        tags: ['review'],
        summary: 'The calculation sheet of an unsaved model (HTML, print-ready, no script)',
        description: 'The body is the model. A bad model answers the same 400 / 422 errors as POST /api/solve.',
        body: Model,
        response: { 200: HtmlPage, ...errorResponses(400, 401, 413, 422, 503, 504) },
      },
    },
    async (req, reply) => {
      const model = req.body;
      const solution = await solve(model);
      return send(reply, renderSheet({ model, solution, revision: null, version: opts.version, generated: new Date().toISOString() }));
    },
  );
};

export default sheetRoutes;
