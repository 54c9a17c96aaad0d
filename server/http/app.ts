/**
 * buildApp(opts): the whole HTTP server as a Fastify instance, ready for
 * `inject()` in tests or `listen()` in main.ts. It never listens itself.
 */
import cookie from '@fastify/cookie';
import helmet from '@fastify/helmet';
import swagger from '@fastify/swagger';
import swaggerUi from '@fastify/swagger-ui';
import type { TypeBoxTypeProvider } from '@fastify/type-provider-typebox';
import Fastify, { type FastifyInstance, type FastifyReply, type FastifyServerOptions } from 'fastify';
import { asyncFromSync, isAsyncStore, type AsyncModelStore } from '../store/async-store.js';
import type { ModelStore } from '../store/store.js';
import { StoreUnavailableError } from '../store/store-errors.js';
import { authHook, TeamAuth } from './auth.js';
import { loadDemos, seedDemos } from './demos.js';
import { clientErrorResponse, toErrorReply } from './errors.js';
import { crossSiteHook, hostHook, hostPolicy } from './guard.js';
import { defaultClientDir, defaultDemosDir, packageVersion } from './paths.js';
import clientRoutes from './routes/client.js';
import demosRoutes from './routes/demos.js';
import healthRoutes, { STORE_RETRY_AFTER_S } from './routes/health.js';
import eventsRoutes from './routes/events.js';
import modelsRoutes from './routes/models.js';
import reviewRoutes from './routes/review.js';
import sessionRoutes from './routes/session.js';
import sheetRoutes from './routes/sheet.js';
import compareRoutes from './routes/compare.js';
import solveRoutes from './routes/solve.js';
import type { SizeLimits } from './solve-core.js';
import { RouteTable, type RegisteredRoute } from './route-table.js';
import { MemoryBroadcaster, type Broadcaster } from './broadcaster.js';
import { MemorySessionStore, SESSION_DEFAULTS, type SessionLimits, type SessionStore } from './sessions.js';
import { SolverPool } from './solver-pool.js';
import { readJsonBody } from './body.js';
import { validatorCompiler } from './validation.js';

export interface AppOptions {
  /**
   * The model library (SQLite's synchronous store is wrapped by asyncFromSync).
   * The app does not close it: whoever opened it does.
   */
  readonly store: ModelStore | AsyncModelStore;
  /** Team token; undefined = open server. */
  readonly token?: string;
  /** Sign-in attempts per minute per address (default 10). */
  readonly signInPerMinute?: number;
  /** Where sign-in sessions are kept (default: in memory, with `sessionLimits`). */
  readonly sessions?: SessionStore;
  /** Idle and absolute lifetimes of a session (default 12 h / 7 days). */
  readonly sessionLimits?: Partial<SessionLimits>;
  /** The clock of sessions and sign-in limits, ms since the epoch (default Date.now; tests pass their own). */
  readonly now?: () => number;
  /** The address the server listens on (default 127.0.0.1): decides which Host names it answers. */
  readonly listenHost?: string;
  /** More names (or addresses) the server answers to in `Host` (--allowed-hosts). */
  readonly allowedHosts?: readonly string[];
  /** Fastify's trustProxy: the proxies whose X-Forwarded-* headers are believed (default none). */
  readonly trustProxy?: FastifyServerOptions['trustProxy'];
  /** Largest request body, bytes (default 64 MiB). */
  readonly maxBodyBytes?: number;
  /** Model size limits (default 2,000,000 stations, 10,000 shafts). */
  readonly limits?: SizeLimits;
  /** Time limit of a worker solve, ms (default 60,000). */
  readonly solveTimeoutMs?: number;
  /** Solves above this many stations run in a worker (default 20,000). */
  readonly workerThreshold?: number;
  /** Bodies of /api/solve above this many bytes are parsed in a worker (default 1 MiB). */
  readonly deferBytes?: number;
  /** Worker threads (default 1). */
  readonly workers?: number;
  /** Large solves that may wait for a worker (default 8). */
  readonly queueLimit?: number;
  /** Solves per minute per address; 0 = off (default 1200). */
  readonly rateLimitPerMinute?: number;
  /** Built client directory; null = none (placeholder page). Default dist/client. */
  readonly clientDir?: string | null;
  /** Demo models directory (default server/demos). */
  readonly demosDir?: string;
  /** Seed the demos into an empty library (default true). */
  readonly seedDemos?: boolean;
  /** Start the solver workers at once, not on the first large solve (default false). */
  readonly warmWorkers?: boolean;
  /** Fastify logger option (default off). */
  readonly logger?: FastifyServerOptions['logger'];
  /** The live notice's channel (default: in this process, made here). */
  readonly notices?: Broadcaster;
  /** Between the live notice's keep-alive comments, ms (default 25,000). */
  readonly eventsKeepAliveMs?: number;
  /** Reported by /api/health (default: package.json's). */
  readonly version?: string;
}

/** The Content-Security-Policy the browser client runs under. */
export const CLIENT_CSP = {
  defaultSrc: ["'self'"],
  scriptSrc: ["'self'"],
  styleSrc: ["'self'", "'unsafe-inline'"],
  imgSrc: ["'self'", 'data:', 'blob:'],
  connectSrc: ["'self'"],
  objectSrc: ["'none'"],
  frameAncestors: ["'none'"],
};

function positiveInt(name: string, value: number, min = 1): number {
  if (!Number.isInteger(value) || value < min) throw new Error(`buildApp: ${name} must be a whole number >= ${min}, not ${value}`);
  return value;
}

declare module 'fastify' {
  interface FastifyInstance {
    /** Every registered route with its method and whether it is public (for the route walk of the tests). */
    shaftnetRoutes(): RegisteredRoute[];
  }
}

export async function buildApp(opts: AppOptions): Promise<FastifyInstance> {
  const maxBodyBytes = positiveInt('maxBodyBytes', opts.maxBodyBytes ?? 64 * 1024 * 1024);
  const limits: SizeLimits = opts.limits ?? { maxStations: 2_000_000, maxShafts: 10_000 };
  positiveInt('limits.maxStations', limits.maxStations);
  positiveInt('limits.maxShafts', limits.maxShafts);
  const workerThreshold = positiveInt('workerThreshold', opts.workerThreshold ?? 20_000, 0);
  const deferBytes = positiveInt('deferBytes', opts.deferBytes ?? 1024 * 1024);
  const rateLimitPerMinute = positiveInt('rateLimitPerMinute', opts.rateLimitPerMinute ?? 1200, 0);
  const token = opts.token;
  if (token !== undefined && token.length === 0) throw new Error('buildApp: token must not be empty');
  const sessionLimits: SessionLimits = { ...SESSION_DEFAULTS, ...opts.sessionLimits };
  const store: AsyncModelStore = isAsyncStore(opts.store) ? opts.store : asyncFromSync(opts.store);
  // Always made: personal keys in the library put the server in token mode even without a team token.
  const auth = new TeamAuth({
    token,
    keys: store,
    sessions: opts.sessions ?? new MemorySessionStore(sessionLimits),
    signInPerMinute: positiveInt('signInPerMinute', opts.signInPerMinute ?? 10),
    now: opts.now,
  });
  // Live notice of saves and review changes, per model, in this process (routes/events.ts).
  const notices = opts.notices ?? new MemoryBroadcaster();

  const app = Fastify({
    logger: opts.logger ?? false,
    bodyLimit: maxBodyBytes,
    trustProxy: opts.trustProxy ?? false,
    // Path parameters up to 1000 characters reach the routes' schemas, which name the parameter in a 400.
    routerOptions: { maxParamLength: 1000 },
    // The router's own refusals (a bad percent-escape, an over-long path part) in the project's error shape.
    frameworkErrors: (err, _req, reply) => {
      const { status, body } = toErrorReply(err);
      const r = reply as unknown as FastifyReply; // the type provider's reply type wants a route's schema
      void r.code(status).header('x-content-type-options', 'nosniff').send(body);
    },
    // A request Node's parser refuses (broken request line or header) gets the project's shape too.
    clientErrorHandler: (err, socket) => {
      const code = (err as NodeJS.ErrnoException).code;
      if (code === 'ECONNRESET' || code === 'ERR_HTTP_REQUEST_TIMEOUT' || socket.destroyed) {
        socket.destroy();
        return;
      }
      const message = code === 'HPE_HEADER_OVERFLOW' ? 'the request headers are larger than this server reads' : 'the HTTP request is malformed';
      if (socket.writable) socket.write(clientErrorResponse(message));
      socket.destroy();
    },
    // Fastify's request logs carry method, URL, status and time, never bodies: models stay out of the logs.
    return503OnClosing: true,
    forceCloseConnections: true,
  }).withTypeProvider<TypeBoxTypeProvider>();

  // Every route, as registered: the 405 answer and the route walk of the tests read it.
  const routes = new RouteTable();
  app.addHook('onRoute', (route) => routes.add(route));
  app.decorate('shaftnetRoutes', () => routes.list());

  app.setValidatorCompiler(validatorCompiler);
  // Plain JSON.stringify: the response schemas document the API but never filter what is sent.
  app.setSerializerCompiler(() => (data) => JSON.stringify(data));

  // Our own JSON parser: error messages with the position, and large solve bodies left for a worker.
  // JSON only: any other Content-Type is refused (400 SN_JSON), which also keeps plain HTML forms out.
  app.removeAllContentTypeParsers();
  app.addContentTypeParser('application/json', (req, payload, done) =>
    readJsonBody(payload, req.headers['content-length'], {
      limit: maxBodyBytes,
      deferBytes: req.routeOptions.url === '/api/solve' ? deferBytes : Infinity,
      // A route that takes no body (archive, restore, sign-out) accepts an empty one sent as JSON.
      emptyAllowed: req.routeOptions.schema?.body === undefined,
    }, done),
  );

  app.setErrorHandler((err, req, reply) => {
    const { status, body, internal } = toErrorReply(err);
    if (internal) req.log.error({ err }, 'internal error');
    else if (err instanceof StoreUnavailableError) {
      req.log.warn({ code: body.error.code, status, detail: err.message }, 'library unavailable');
      void reply.header('retry-after', String(STORE_RETRY_AFTER_S));
    } else req.log.info({ code: body.error.code, status }, 'request refused');
    return reply.code(status).send(body);
  });

  const pool = new SolverPool({
    size: positiveInt('workers', opts.workers ?? 1),
    queueLimit: positiveInt('queueLimit', opts.queueLimit ?? 8, 0),
    timeoutMs: positiveInt('solveTimeoutMs', opts.solveTimeoutMs ?? 60_000),
    onInternalError: (message) => app.log.error({ worker: message }, 'solver worker fault'),
  });
  app.addHook('onClose', async () => pool.close());
  if (opts.warmWorkers) await pool.warm();

  await app.register(helmet, {
    contentSecurityPolicy: { useDefaults: false, directives: CLIENT_CSP },
    // The server speaks plain HTTP on the team's network; TLS, if any, is a proxy's business.
    strictTransportSecurity: false,
    // Agrees with frame-ancestors 'none' for browsers that only read the older header.
    xFrameOptions: { action: 'deny' },
  });
  await app.register(cookie);
  await app.register(swagger, {
    openapi: {
      openapi: '3.0.3',
      info: {
        title: 'Shaftnet team server',
        description:
          'Solves statically indeterminate torsion of shaft systems and keeps the team\'s model library. Errors: `{ error: { code, message, issues } }`.',
        version: opts.version ?? packageVersion(),
      },
      components: {
        securitySchemes: {
          bearer: { type: 'http', scheme: 'bearer', description: 'The team token or a personal key (token mode only).' },
          session: { type: 'apiKey', in: 'cookie', name: 'shaftnet_session', description: 'Set by POST /api/session.' },
        },
      },
      security: token === undefined && !(await store.hasKeys()) ? [] : [{ bearer: [] }, { session: [] }],
    },
  });
  await app.register(swaggerUi, {
    routePrefix: '/api/docs',
    // The docs page has inline scripts and styles of its own: allow exactly those (hashes), nothing more.
    transformStaticCSP: () => {
      const csp = (app as unknown as { swaggerCSP: { script: string[]; style: string[] } }).swaggerCSP;
      return [
        "default-src 'self'",
        ["script-src 'self'", ...csp.script].join(' '),
        `style-src 'self' 'unsafe-inline'`,
        "img-src 'self' data:",
        "connect-src 'self'",
        "object-src 'none'",
        "frame-ancestors 'none'",
      ].join('; ');
    },
  });
  app.get('/api/openapi.json', { schema: { hide: true } }, async () => app.swagger());

  // In this order, on every request (404s too): the Host, then cross-site, then the token.
  app.addHook('onRequest', hostHook(hostPolicy(opts.listenHost ?? '127.0.0.1', opts.allowedHosts ?? [])));
  app.addHook('onRequest', crossSiteHook());
  app.addHook('onRequest', authHook(auth));

  const demos = loadDemos(opts.demosDir ?? defaultDemosDir());
  if (opts.seedDemos ?? true) {
    const n = await seedDemos(store, demos);
    if (n > 0) app.log.info(`seeded ${n} demo models into the empty library`);
  }

  await app.register(healthRoutes, { version: opts.version ?? packageVersion(), workers: () => pool.stats(), ready: () => store.ready() });
  await app.register(sessionRoutes, { auth, maxAgeMs: sessionLimits.absoluteMs });
  await app.register(solveRoutes, { pool, limits, workerThreshold, rateLimitPerMinute });
  await app.register(modelsRoutes, { store, pool, limits, workerThreshold, notices });
  await app.register(reviewRoutes, { store, notices });
  await app.register(eventsRoutes, { store, notices, auth, keepAliveMs: opts.eventsKeepAliveMs });
  await app.register(demosRoutes, { demos });
  await app.register(sheetRoutes, { store, pool, limits, workerThreshold, rateLimitPerMinute, version: opts.version ?? packageVersion() });
  await app.register(compareRoutes, { store, pool, limits, workerThreshold, rateLimitPerMinute });
  await app.register(clientRoutes, { clientDir: opts.clientDir === undefined ? defaultClientDir() : opts.clientDir, auth, routes });

  return app as unknown as FastifyInstance;
}
