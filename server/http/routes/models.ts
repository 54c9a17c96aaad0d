/**
 * The shared model library: create, list, read, save revisions, archive,
 * restore, export and import. Every save is a new immutable revision; a save on
 * a stale base revision is a 409 naming the current one; nothing is deleted.
 *
 * A saved model must pass the engine's validation (a 400 names the field, the
 * pointer into the request body, so "/model/..." for create and update), but it
 * need not be solvable: a mechanism or an unclosed loop is work in progress and
 * may be saved; solving it answers the 422.
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyRequest } from 'fastify';
import Type from 'typebox';
import { ModelError } from '../../../shared-types/errors.js';
import { Model, type Model as ModelT } from '../../../shared-types/model.js';
import { ArchiveState, ModelList, RevisionList, Saved, StoredModel } from '../../../shared-types/library.js';
import { slug } from '../../../shared-types/present.js';
import { normaliseModel } from '../../engine/normalise.js';
import type { AsyncModelStore } from '../../store/async-store.js';
import type { SaveResult, StoredRevision } from '../../store/store.js';
import { ModelNotFoundError, StaleRevisionError } from '../../store/store.js';
import { identityOf } from '../auth.js';
import type { Broadcaster } from '../broadcaster.js';
import { HttpError, prefixIssues } from '../errors.js';
import { Author, CreateBody, errorResponses, IdParams, ListQuery, Message, RevisionNumber, RevisionParams, UpdateBody } from '../schemas.js';
import { checkSize, type SizeLimits } from '../solve-core.js';
import type { SolverPool } from '../solver-pool.js';

export interface ModelsOptions {
  readonly store: AsyncModelStore;
  readonly pool: SolverPool;
  readonly limits: SizeLimits;
  /** stations above which validation runs in a worker */
  readonly workerThreshold: number;
  /** The live notice: every save is told to the model's listeners (routes/events.ts). */
  readonly notices?: Broadcaster;
}

function notFound(id: string, revision?: number): HttpError {
  const message = revision === undefined ? `no model "${id}"` : `model "${id}" has no revision ${revision}`;
  return new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: revision === undefined ? '/id' : '/rev', message }]);
}

/** A file name for an export: the model's name made safe (the presentation module's slug), and the revision. */
export function exportFileName(name: string, revision: number): string {
  return `${slug(name)}-r${revision}.shaftnet.json`;
}

const modelsRoutes: FastifyPluginAsyncTypebox<ModelsOptions> = async (app, opts) => {
  const { store, pool, limits } = opts;

  /** Checks a model for saving; issues' pointers get `prefix` (the model's place in the body). */
  async function validateForSave(model: unknown, prefix: string): Promise<void> {
    const size = checkSize(model, limits, prefix);
    try {
      if (size.stations > opts.workerThreshold) await pool.run({ kind: 'validate', model });
      else normaliseModel(model);
    } catch (err) {
      if (err instanceof ModelError || (err instanceof HttpError && err.code !== 'SN_BUSY' && err.code !== 'SN_TIMEOUT')) {
        if (err.status === 422) return; // not solvable yet, but a valid model: saving work in progress is allowed
        if (err.status === 500) throw err;
        const issues = prefixIssues(err.issues, prefix);
        throw new HttpError(err.code, issues[0] ? `${issues[0].pointer}: ${issues[0].message}` : err.message, issues);
      }
      throw err;
    }
  }

  const nameOf = (model: { name: string }) => model.name;

  /**
   * The author of a save: the personal key's name when the request has one (a
   * typed author is ignored), else the typed author, which is then required.
   */
  function authorOf(req: FastifyRequest, typed: string | undefined): string {
    const identity = identityOf(req);
    if (identity !== null) return identity.name;
    if (typed === undefined) {
      const message = 'who saves? "author" is required (a name or initials) unless you use a personal key';
      throw new HttpError('SN_SCHEMA', message, [{ code: 'SN_SCHEMA', pointer: '/author', message }]);
    }
    return typed;
  }

  /** Tells the model's live notice about a save. */
  async function told(saved: SaveResult, author: string): Promise<SaveResult> {
    if (opts.notices === undefined) return saved;
    const at = (await store.revisions(saved.id))?.find((r) => r.revision === saved.revision)?.created ?? new Date().toISOString(); // the save just made
    opts.notices.publish(saved.id, { event: 'revision', data: { id: saved.id, revision: saved.revision, author, at } });
    return saved;
  }

  app.post(
    '/api/models',
    {
      schema: {
        tags: ['library'],
        summary: 'Create a model (revision 1)',
        body: CreateBody,
        response: { 201: Saved, ...errorResponses(400, 401, 413) },
      },
    },
    async (req, reply) => {
      const { model, message } = req.body;
      const author = authorOf(req, req.body.author);
      await validateForSave(model, '/model');
      const saved = await store.create({ model, name: nameOf(model), author, message: message ?? '' });
      return reply.code(201).send(await told(saved, author));
    },
  );

  app.get(
    '/api/models',
    {
      schema: {
        tags: ['library'],
        summary: 'List models, most recently updated first',
        querystring: ListQuery,
        response: { 200: ModelList, ...errorResponses(400, 401) },
      },
    },
    async (req) => ({ models: await store.list({ q: req.query.q, archived: req.query.archived ?? false }) }),
  );

  app.get(
    '/api/models/:id',
    {
      schema: {
        tags: ['library'],
        summary: 'Read the latest revision of a model',
        params: IdParams,
        response: { 200: StoredModel, ...errorResponses(400, 401, 404) },
      },
    },
    async (req) => {
      const found = await store.get(req.params.id);
      if (!found) throw notFound(req.params.id);
      return found as StoredRevision & { model: ModelT };
    },
  );

  app.put(
    '/api/models/:id',
    {
      schema: {
        tags: ['library'],
        summary: 'Save a new revision on top of baseRevision',
        description: 'A stale baseRevision answers 409 SN_STALE_REVISION with currentRevision beside error: nothing is overwritten.',
        params: IdParams,
        body: UpdateBody,
        response: { 200: Saved, ...errorResponses(400, 401, 404, 409, 413) },
      },
    },
    async (req) => {
      const { id } = req.params;
      const { model, baseRevision, message } = req.body;
      const author = authorOf(req, req.body.author);
      if ((await store.latestRevision(id)) === undefined) throw notFound(id);
      await validateForSave(model, '/model');
      try {
        return await told(await store.save(id, baseRevision, { model, name: nameOf(model), author, message: message ?? '' }), author);
      } catch (err) {
        if (err instanceof StaleRevisionError) {
          const text = `model "${id}" was saved since revision ${baseRevision}: the current revision is ${err.currentRevision}; reload it, merge your changes and save on top of it`;
          throw new HttpError(
            'SN_STALE_REVISION',
            text,
            [{ code: 'SN_STALE_REVISION', pointer: '/baseRevision', message: text }],
            { currentRevision: err.currentRevision },
          );
        }
        if (err instanceof ModelNotFoundError) throw notFound(id);
        throw err;
      }
    },
  );

  app.get(
    '/api/models/:id/revisions',
    {
      schema: {
        tags: ['library'],
        summary: 'The revisions of a model, newest first',
        params: IdParams,
        response: { 200: RevisionList, ...errorResponses(400, 401, 404) },
      },
    },
    async (req) => {
      const revisions = await store.revisions(req.params.id);
      if (!revisions) throw notFound(req.params.id);
      return { revisions };
    },
  );

  app.get(
    '/api/models/:id/revisions/:rev',
    {
      schema: {
        tags: ['library'],
        summary: 'Read one revision of a model',
        params: RevisionParams,
        response: { 200: StoredModel, ...errorResponses(400, 401, 404) },
      },
    },
    async (req) => {
      const { id, rev } = req.params;
      if ((await store.latestRevision(id)) === undefined) throw notFound(id);
      const found = await store.get(id, rev);
      if (!found) throw notFound(id, rev);
      return found as StoredRevision & { model: ModelT };
    },
  );

  for (const [action, archived] of [
    ['archive', true],
    ['restore', false],
  ] as const) {
    app.post(
      `/api/models/:id/${action}`,
      {
        schema: {
          tags: ['library'],
          summary: archived ? 'Archive a model (hide it from the default list; nothing is deleted)' : 'Restore an archived model',
          params: IdParams,
          response: { 200: ArchiveState, ...errorResponses(400, 401, 404) },
        },
      },
      async (req) => {
        const result = await store.setArchived(req.params.id, archived);
        if (!result) throw notFound(req.params.id);
        return result;
      },
    );
  }

  app.get(
    '/api/models/:id/export',
    {
      schema: {
        tags: ['library'],
        summary: 'Download a model as a JSON file',
        params: IdParams,
        querystring: Type.Object({ revision: Type.Optional(RevisionNumber) }, { additionalProperties: false }),
        response: { 200: Model, ...errorResponses(400, 401, 404) },
      },
    },
    async (req, reply) => {
      const { id } = req.params;
      if ((await store.latestRevision(id)) === undefined) throw notFound(id);
      const found = await store.get(id, req.query.revision);
      if (!found) throw notFound(id, req.query.revision);
      const name = typeof (found.model as { name?: unknown }).name === 'string' ? (found.model as { name: string }).name : id;
      return reply
        .header('content-disposition', `attachment; filename="${exportFileName(name, found.revision)}"`)
        .type('application/json; charset=utf-8')
        .send((JSON.stringify(found.model, null, 2) + '\n') as unknown as ModelT);
    },
  );

  app.post(
    '/api/models/import',
    {
      schema: {
        tags: ['library'],
        summary: 'Import a model file as a new model',
        description: 'The body is the model file itself; pointers in a 400 are into it.',
        querystring: Type.Object({ author: Type.Optional(Author), message: Type.Optional(Message) }, { additionalProperties: false }),
        body: Model,
        response: { 201: Saved, ...errorResponses(400, 401, 413) },
      },
    },
    async (req, reply) => {
      const model = req.body;
      const author = authorOf(req, req.query.author);
      await validateForSave(model, '');
      const saved = await store.create({
        model,
        name: nameOf(model),
        author,
        message: req.query.message ?? 'Imported from a file',
      });
      return reply.code(201).send(await told(saved, author));
    },
  );
};

export default modelsRoutes;
