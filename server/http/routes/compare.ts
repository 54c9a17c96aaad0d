/**
 * Compare two revisions: `GET /api/models/{id}/compare?from={rev}&to={rev}` solves both (the way
 * POST /api/solve does) and answers `{ inputs, results }` from shared-types/compare.ts, the code the
 * client's conflict dialog runs too. `POST /api/compare` with `{ "from": model, "to": model }` does
 * the same for two models in the body (the conflict dialog: the library's latest against the user's
 * unsaved edit).
 *
 * A revision (or model) that is valid but cannot be solved (a mechanism, a loop that does not close:
 * saved as work in progress) has no results: its side of every result is null, and `unsolved` names
 * it with the engine's error. A model that is not valid (POST) is the usual 400 naming the field
 * under `/from` or `/to`.
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';
import { compareRevisions, type ComparableSolution } from '../../../shared-types/compare.js';
import type { AsyncModelStore } from '../../store/async-store.js';
import { ModelError } from '../../../shared-types/errors.js';
import { HttpError, prefixIssues } from '../errors.js';
import { EmbeddedModel, errorResponses, IdParams, RevisionNumber } from '../schemas.js';
import type { FastifyInstance } from 'fastify';
import { isUnsolvable, limitSolves, routeSolver, type SolvePath } from './sheet.js';

export interface CompareOptions extends SolvePath {
  readonly store: AsyncModelStore;
}

const Unsolved = Type.Object({ side: Type.Union([Type.Literal('from'), Type.Literal('to')]), code: Type.String(), message: Type.String() });

export const ComparisonAnswer = Type.Object({
  inputs: Type.Array(
    Type.Object({
      change: Type.Union([Type.Literal('changed'), Type.Literal('added'), Type.Literal('removed')]),
      list: Type.String(),
      item: Type.String(),
      field: Type.String(),
      from: Type.Unknown(),
      to: Type.Unknown(),
    }),
  ),
  results: Type.Array(
    Type.Object({
      quantity: Type.String(),
      item: Type.String(),
      unit: Type.String(),
      from: Type.Union([Type.Number(), Type.Null()]),
      to: Type.Union([Type.Number(), Type.Null()]),
      delta: Type.Union([Type.Number(), Type.Null()]),
      relative: Type.Union([Type.Number(), Type.Null()]),
    }),
  ),
  /** The sides that did not solve (valid models that are not solvable yet). */
  unsolved: Type.Array(Unsolved),
});

const compareRoutes: FastifyPluginAsyncTypebox<CompareOptions> = async (app, opts) => {
  const solve = await routeSolver(opts);
  await limitSolves(app as unknown as FastifyInstance, opts.rateLimitPerMinute);

  async function compare(from: unknown, to: unknown) {
    const unsolved: Array<{ side: 'from' | 'to'; code: string; message: string }> = [];
    const solveSide = async (side: 'from' | 'to', model: unknown): Promise<ComparableSolution | null> => {
      try {
        return await solve(model);
      } catch (err) {
        if (err instanceof ModelError && err.status !== 422) {
          // A model that is not valid (POST): its issues point into the body, under /from or /to.
          const issues = prefixIssues(err.issues, `/${side}`);
          throw new HttpError(err.code, `${issues[0]?.pointer ?? ''}: ${issues[0]?.message ?? err.message}`, issues);
        }
        if (!isUnsolvable(err)) throw err;
        unsolved.push({ side, code: err.code, message: err.message });
        return null;
      }
    };
    const a = await solveSide('from', from);
    const b = await solveSide('to', to);
    return { ...compareRevisions({ model: from, solution: a }, { model: to, solution: b }), unsolved };
  }

  app.get(
    '/api/models/:id/compare',
    {
      schema: {
        tags: ['review'],
        summary: 'Compare two revisions of a model: inputs changed by item and field, results changed with deltas',
        params: IdParams,
        querystring: Type.Object({ from: RevisionNumber, to: RevisionNumber }, { additionalProperties: false }),
        response: { 200: ComparisonAnswer, ...errorResponses(400, 401, 404, 413, 503, 504) },
      },
    },
    async (req) => {
      const { id } = req.params;
      const { from, to } = req.query;
      if ((await opts.store.latestRevision(id)) === undefined) {
        const message = `no model "${id}"`;
        throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '/id', message }]);
      }
      const sides = [
        ['from', from],
        ['to', to],
      ] as const;
      const found = [];
      for (const [name, rev] of sides) {
        const r = await opts.store.get(id, rev);
        if (!r) {
          const message = `model "${id}" has no revision ${rev}`;
          throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: `/${name}`, message }]);
        }
        found.push(r);
      }
      return compare(found[0].model, found[1].model);
    },
  );

  app.post(
    '/api/compare',
    {
      schema: {
        tags: ['review'],
        summary: 'Compare two models (the library\'s latest and an unsaved edit)',
        body: Type.Object({ from: EmbeddedModel, to: EmbeddedModel }, { additionalProperties: false }),
        response: { 200: ComparisonAnswer, ...errorResponses(400, 401, 413, 503, 504) },
      },
    },
    async (req) => compare(req.body.from, req.body.to),
  );
};

export default compareRoutes;
