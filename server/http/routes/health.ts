/**
 * GET /api/health: liveness, readiness, version, uptime and the solver pool's load.
 * Never needs the token. 200 `{ status: "ok", ready: true, … }` while the library
 * answers; 503 `{ status: "unavailable", ready: false, … }` with Retry-After while it
 * does not (a database server lost: a load balancer then sends requests elsewhere).
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';

export interface HealthOptions {
  readonly version: string;
  readonly workers: () => { busy: number; total: number };
  /** Whether the library answers now (AsyncModelStore.ready: bounded, never rejects). Default: always. */
  readonly ready?: () => Promise<boolean>;
}

/** Seconds a client is told to wait (Retry-After) while the library is away. */
export const STORE_RETRY_AFTER_S = 5;

const HealthReply = Type.Object({
  status: Type.Union([Type.Literal('ok'), Type.Literal('unavailable')]),
  ready: Type.Boolean({ description: 'Whether the model library answers now.' }),
  version: Type.String(),
  uptimeSeconds: Type.Number(),
  workers: Type.Object({ busy: Type.Integer(), total: Type.Integer() }),
});

const healthRoutes: FastifyPluginAsyncTypebox<HealthOptions> = async (app, opts) => {
  const started = performance.now();
  app.get(
    '/api/health',
    {
      config: { public: true },
      schema: { security: [], tags: ['server'], summary: 'Is the server up, and does its library answer?', response: { 200: HealthReply, 503: HealthReply } },
    },
    async (_req, reply) => {
      const ready = opts.ready === undefined ? true : await opts.ready();
      if (!ready) void reply.code(503).header('retry-after', String(STORE_RETRY_AFTER_S));
      return {
        status: ready ? ('ok' as const) : ('unavailable' as const),
        ready,
        version: opts.version,
        uptimeSeconds: Math.round((performance.now() - started) / 100) / 10,
        workers: opts.workers(),
      };
    },
  );
};

export default healthRoutes;
