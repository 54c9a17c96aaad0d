/**
 * The built browser client (vite's output in dist/client) at `/`, with the
 * single-page fallback: an unknown GET outside /api answers index.html, so
 * links such as /m/<id> open in the client. Without a built client, `/`
 * answers a short page saying how to build it.
 */
import fs from 'node:fs';
import path from 'node:path';
import fastifyStatic from '@fastify/static';
import type { FastifyPluginAsync } from 'fastify';
import { unauthorised, type TeamAuth } from '../auth.js';
import { errorReply, HttpError } from '../errors.js';
import type { RouteTable } from '../route-table.js';

export interface ClientOptions {
  /** Directory of the built client; null or missing = placeholder page. */
  readonly clientDir: string | null;
  /** Token mode: a request that matches no route is answered 401 without the token. */
  readonly auth?: TeamAuth;
  /** The registered routes, to answer 405 with the methods a path has. */
  readonly routes?: RouteTable;
}

/** The path of a request target, percent-escapes decoded where they decode ("/%61pi/x" → "/api/x"). */
function decodedPath(url: string): string {
  const raw = url.split('?')[0];
  try {
    return decodeURIComponent(raw);
  } catch {
    return raw;
  }
}

const PLACEHOLDER = `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Shaftnet</title></head>
<body><h1>Shaftnet</h1><p>The server is running, but the browser client is not built. Run <code>npm run build</code>
and restart. The API is at <a href="/api/docs">/api/docs</a>.</p></body></html>`;

const clientRoutes: FastifyPluginAsync<ClientOptions> = async (app, opts) => {
  const dir = opts.clientDir;
  const built = dir !== null && fs.existsSync(path.join(dir, 'index.html'));
  if (built) {
    // In a plugin of its own, whose every route (the client's files) is marked public at registration.
    await app.register(async (files) => {
      files.addHook('onRoute', (route) => {
        route.config = { ...route.config, public: true };
      });
      await files.register(fastifyStatic, {
        root: dir,
        prefix: '/',
        wildcard: true,
        index: ['index.html'],
        setHeaders(res, file) {
          // vite puts content-hashed files under assets/: they never change. Everything else is revalidated.
          const hashed = file.includes(`${path.sep}assets${path.sep}`);
          res.header('cache-control', hashed ? 'public, max-age=31536000, immutable' : 'no-cache');
        },
      });
    });
  } else {
    app.get('/', { schema: { hide: true }, config: { public: true } }, async (_req, reply) =>
      reply.type('text/html; charset=utf-8').send(PLACEHOLDER),
    );
  }

  app.setNotFoundHandler(async (req, reply) => {
    const url = decodedPath(req.url);
    const isApi = url === '/api' || url.startsWith('/api/');
    // A path with a dot in its last part is a file the client asked for: a real 404, not the page.
    const looksLikeFile = /\.[a-z0-9]+$/i.test(url);
    if (!isApi && !looksLikeFile && (req.method === 'GET' || req.method === 'HEAD')) {
      reply.header('cache-control', 'no-cache');
      if (built) return reply.type('text/html; charset=utf-8').send(await fs.promises.readFile(path.join(dir, 'index.html')));
      return reply.type('text/html; charset=utf-8').send(PLACEHOLDER);
    }
    // Past the client's page, deny by default: nothing about the routes is told without the token.
    if (opts.auth !== undefined && !(await opts.auth.isSignedIn(req, reply))) throw unauthorised();
    const methods = opts.routes?.methodsFor(url) ?? [];
    if (methods.length > 0) {
      const message = `${url} does not take ${req.method}; it takes ${methods.join(', ')}`;
      reply.header('allow', methods.join(', '));
      throw new HttpError('SN_METHOD', message, [{ code: 'SN_METHOD', pointer: '', message }]);
    }
    const message = `no route ${req.method} ${url.slice(0, 200)}`;
    const { status, body } = errorReply('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '', message }]);
    return reply.code(status).send(body);
  });
};

// Not encapsulated: the not-found handler must serve the whole server.
(clientRoutes as unknown as Record<symbol, boolean>)[Symbol.for('skip-override')] = true;

export default clientRoutes;
