/** GET /api/health: liveness, version, uptime and the solver pool's load. Never needs the token. */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';

export interface HealthOptions {
  readonly version: string;
  readonly workers: () => { busy: number; total: number };
}

const HealthReply = Type.Object({
  status: Type.Literal('ok'),
  version: Type.String(),
  uptimeSeconds: Type.Number(),
  workers: Type.Object({ busy: Type.Integer(), total: Type.Integer() }),
});

const healthRoutes: FastifyPluginAsyncTypebox<HealthOptions> = async (app, opts) => {
  const started = performance.now();
  app.get(
    '/api/health',
    { config: { public: true }, schema: { security: [], tags: ['server'], summary: 'Is the server up?', response: { 200: HealthReply } } },
    async () => ({
      status: 'ok' as const,
      version: opts.version,
      uptimeSeconds: Math.round((performance.now() - started) / 100) / 10,
      workers: opts.workers(),
    }),
  );
};

export default healthRoutes;
