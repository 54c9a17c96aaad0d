/**
 * The live notice: `GET /api/models/{id}/events` answers `text/event-stream`
 * and stays open. Every save of the model sends `event: revision`, every review
 * change `event: review` (data: one JSON object each, shared-types/library.ts),
 * and a comment line `: keep-alive` goes out every 25 s so proxies keep the
 * connection. It needs the key every route needs (the session cookie works for
 * a browser's EventSource); before each line the key is checked again, so a
 * revoked key or an ended session closes the stream. Closing the connection
 * unsubscribes. The channel is the app's Broadcaster (broadcaster.ts).
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { ServerResponse } from 'node:http';
import type { AsyncModelStore } from '../../store/async-store.js';
import type { TeamAuth } from '../auth.js';
import type { Broadcaster, Notice } from '../broadcaster.js';
import { HttpError } from '../errors.js';
import { errorResponses, IdParams } from '../schemas.js';

export interface EventsOptions {
  readonly store: AsyncModelStore;
  readonly notices: Broadcaster;
  readonly auth: TeamAuth | undefined;
  /** Between keep-alive comments, ms (default 25,000). */
  readonly keepAliveMs?: number;
}

/** One SSE message: the event's name and its data on one line. */
export function sseMessage(notice: Notice): string {
  return `event: ${notice.event}\ndata: ${JSON.stringify(notice.data)}\n\n`;
}

const eventsRoutes: FastifyPluginAsyncTypebox<EventsOptions> = async (app, opts) => {
  const { store, notices, auth } = opts;
  const keepAliveMs = opts.keepAliveMs ?? 25_000;
  const open = new Set<ServerResponse>();
  app.addHook('preClose', async () => {
    for (const res of open) res.end();
  });

  app.get(
    '/api/models/:id/events',
    {
      exposeHeadRoute: false, // a stream has no head to answer alone
      schema: {
        tags: ['library'],
        summary: 'Live notice of the model: saves and review changes, as server-sent events',
        description:
          'Answers `text/event-stream`: `event: revision` with `{"id","revision","author","at"}` on every save, `event: review` with ' +
          '`{"id","revision","state","by","at","note"}` on every review change, and `: keep-alive` every 25 s. A revoked key ends the stream.',
        params: IdParams,
        response: { ...errorResponses(400, 401, 404) },
      },
    },
    async (req, reply) => {
      const { id } = req.params;
      if ((await store.latestRevision(id)) === undefined) {
        const message = `no model "${id}"`;
        throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '/id', message }]);
      }
      const keyId = req.shaftnetIdentity?.keyId ?? null;
      /** The request is still signed in, as the same key (a revoked key or ended session is not). */
      const allowed = async (): Promise<boolean> => {
        if (auth === undefined) return true;
        try {
          const principal = await auth.principal(req, undefined, false); // an open stream does not keep a session from idling out
          return principal !== undefined && (principal.identity?.keyId ?? null) === keyId;
        } catch {
          return false; // over the sign-in limit
        }
      };
      reply.hijack();
      const res = reply.raw;
      res.writeHead(200, {
        ...(reply.getHeaders() as Record<string, string>),
        'content-type': 'text/event-stream; charset=utf-8',
        'cache-control': 'no-cache, no-transform',
        'x-accel-buffering': 'no',
        connection: 'keep-alive',
      });
      res.write(': open\n\n');
      open.add(res);
      // Lines go out in order, each after its check of the key.
      let queue: Promise<void> = Promise.resolve();
      let ended = false;
      const end = () => {
        if (ended) return;
        ended = true;
        clearInterval(timer);
        unsubscribe();
        open.delete(res);
        res.end();
      };
      const send = (text: string) => {
        queue = queue.then(async () => {
          if (ended) return;
          if (!(await allowed())) return end();
          if (!ended) res.write(text);
        });
      };
      const unsubscribe = notices.subscribe(id, (notice) => send(sseMessage(notice)));
      const timer = setInterval(() => send(': keep-alive\n\n'), keepAliveMs);
      timer.unref();
      req.raw.on('close', end);
      res.on('close', end);
      res.on('error', end);
    },
  );
};

export default eventsRoutes;
