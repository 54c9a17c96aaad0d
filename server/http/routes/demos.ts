/** GET /api/demos and /api/demos/:id: the invented demo models, to open or copy. */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';
import type { Model } from '../../../shared-types/model.js';
import { DemoList } from '../../../shared-types/library.js';
import type { Demo } from '../demos.js';
import { HttpError } from '../errors.js';
import { EmbeddedModel, errorResponses } from '../schemas.js';

export interface DemosOptions {
  readonly demos: readonly Demo[];
}

const demosRoutes: FastifyPluginAsyncTypebox<DemosOptions> = async (app, opts) => {
  const byId = new Map(opts.demos.map((d) => [d.id, d]));
  const list = opts.demos.map(({ id, name, notes }) => ({ id, name, notes }));

  app.get(
    '/api/demos',
    {
      schema: {
        tags: ['demos'],
        summary: 'List the demo models',
        response: {
          200: DemoList,
          ...errorResponses(401),
        },
      },
    },
    async () => ({ demos: list }),
  );

  app.get(
    '/api/demos/:id',
    {
      schema: {
        tags: ['demos'],
        summary: 'Read one demo model',
        params: Type.Object({ id: Type.String({ maxLength: 100 }) }),
        response: { 200: EmbeddedModel, ...errorResponses(401, 404) },
      },
    },
    async (req) => {
      const demo = byId.get(req.params.id);
      if (!demo) {
        const message = `no demo "${req.params.id}"`;
        throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '/id', message }]);
      }
      return demo.model as Model;
    },
  );
};

export default demosRoutes;
