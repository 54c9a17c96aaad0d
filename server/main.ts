/**
 * Starts the team server: reads the options, opens the library, listens and
 * prints the URL. `shaftnet serve [flags]` (server/cli.ts) calls
 * serveFromArgs; `node dist/server/main.js [flags]` runs it directly.
 * Importing this module starts nothing.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FastifyInstance } from 'fastify';
import { buildApp } from './http/app.js';
import type { PgBroadcaster } from './http/pg-broadcaster.js';
import { SESSION_DEFAULTS, type SessionStore } from './http/sessions.js';
import type { PgStore } from './store/pg-store.js';
import { ConfigError, isLoopback, parseConfig, usage, type ServerConfig } from './http/config.js';
import { describeTarget } from './store/pg-target.js';
import { openLibrary, type AsyncModelStore } from './store/async-store.js';
import { SchemaRefusedError } from './store/pg-migrations.js';
import { LibraryOpenError } from './store/sqlite-store.js';
import { StoreConnectError } from './store/store-errors.js';

/** A running server and how to stop it. */
export interface RunningServer {
  readonly app: FastifyInstance;
  readonly url: string;
  readonly config: ServerConfig;
  /** Personal keys in the library at start (revoked ones too): any makes the server need a key. */
  readonly personalKeys: number;
  /** The library it serves. */
  readonly store: AsyncModelStore;
  close(): Promise<void>;
}

/** Starts a server with a checked configuration; resolves once it listens. */
export async function startServer(config: ServerConfig): Promise<RunningServer> {
  // PostgreSQL when --database is given, else SQLite in --data; rejects when it cannot be opened.
  const store = await openLibrary({ database: config.database, dataDir: config.dataDir });
  let app: FastifyInstance | undefined;
  let personalKeys: number;
  let notices: PgBroadcaster | undefined;
  let sessions: SessionStore | undefined;
  try {
    // Several instances on one PostgreSQL library tell each other of saves and review changes.
    if (store.kind === 'postgres' && config.database !== undefined) {
      const { PgBroadcaster } = await import('./http/pg-broadcaster.js'); // the driver only when it is used
      notices = await PgBroadcaster.start(config.database, (message) => app?.log.warn(message));
      // Sessions in the database: a sign-in on one instance holds on all, a sign-out ends it on all.
      const { PgSessionStore } = await import('./store/pg-sessions.js');
      sessions = new PgSessionStore(store as PgStore, SESSION_DEFAULTS);
    }
    app = await buildApp({
      store,
      notices,
      sessions,
      token: config.token,
      listenHost: config.host,
      allowedHosts: config.allowedHosts,
      trustProxy: config.trustProxy.length > 0 ? config.trustProxy : false,
      maxBodyBytes: config.maxBodyBytes,
      limits: { maxStations: config.maxStations, maxShafts: config.maxShafts },
      solveTimeoutMs: config.solveTimeoutMs,
      workerThreshold: config.workerThreshold,
      workers: config.workers,
      queueLimit: config.queueLimit,
      rateLimitPerMinute: config.rateLimitPerMinute,
      warmWorkers: true,
      logger: config.logLevel === 'silent' ? false : { level: config.logLevel },
    });
    personalKeys = (await store.keys()).length;
    await app.listen({ port: config.port, host: config.host });
  } catch (err) {
    await app?.close().catch(() => undefined);
    await notices?.close();
    await store.close().catch(() => undefined);
    throw err;
  }
  const running = app;
  const address = running.server.address();
  const port = typeof address === 'object' && address ? address.port : config.port;
  const host = config.host.includes(':') ? `[${config.host}]` : config.host;
  const url = `http://${host === '0.0.0.0' || host === '[::]' ? 'localhost' : host}:${port}/`;
  return {
    app: running,
    url,
    config,
    personalKeys,
    store,
    async close() {
      await running.close();
      await notices?.close();
      await store.close();
    },
  };
}

/** `shaftnet serve [flags]`: starts the server and stops it cleanly on SIGINT/SIGTERM. */
export async function serveFromArgs(argv: string[]): Promise<void> {
  if (argv.includes('--help') || argv.includes('-h')) {
    process.stdout.write(usage() + '\n');
    return;
  }
  let config: ServerConfig;
  try {
    config = parseConfig(argv, process.env);
  } catch (err) {
    if (err instanceof ConfigError) {
      process.stderr.write(`shaftnet serve: ${err.message}\n`);
      process.exitCode = 2;
      return;
    }
    throw err;
  }
  if (!isLoopback(config.host) && config.token === undefined) {
    process.stderr.write(
      `WARNING: listening on ${config.host} without a team token: anyone who can reach this machine can read and change the model library. Set --token or SHAFTNET_TOKEN.\n`,
    );
  }
  if (argv.some((a) => a === '--token' || a.startsWith('--token='))) {
    process.stderr.write('NOTE: a token given with --token is visible to every user of this machine (ps); prefer --token-file or SHAFTNET_TOKEN.\n');
  }
  let server: RunningServer;
  try {
    // The store makes the data directory (not its parents) and checks the library.
    server = await startServer(config);
  } catch (err) {
    const e = err as NodeJS.ErrnoException;
    const reason =
      err instanceof LibraryOpenError || err instanceof StoreConnectError || err instanceof SchemaRefusedError
        ? err.message // names the directory, file or database server, and what to do
        : e.code === 'EADDRINUSE'
          ? `port ${config.port} on ${config.host} is in use (choose another with --port)`
          : e.code === 'EACCES' && e.syscall === 'listen'
            ? `no permission for port ${config.port}`
            : e.message;
    process.stderr.write(`shaftnet serve: cannot start: ${reason}\n`);
    process.exitCode = 1;
    return;
  }
  process.stdout.write(
    `Shaftnet is listening on ${server.url}  (library: ${server.store.kind === 'postgres' ? `PostgreSQL at ${describeTarget(config.database ?? '')}` : path.join(config.dataDir, 'shaftnet.sqlite')}${config.token ? ', team token required' : ''})\n`,
  );
  if (server.personalKeys > 0) {
    process.stdout.write(
      `Shaftnet: the library holds ${server.personalKeys} personal key(s), so every request needs a personal key${config.token ? ' or the team token' : ' (no team token is set)'}\n`,
    );
  }
  let stopping = false;
  const stop = (signal: string) => {
    if (stopping) return;
    stopping = true;
    process.stdout.write(`Shaftnet: ${signal}, stopping\n`);
    server.close().then(
      () => process.exit(0),
      () => process.exit(1),
    );
  };
  process.once('SIGINT', () => stop('SIGINT'));
  process.once('SIGTERM', () => stop('SIGTERM'));
}

/** True when this file is the program node was started with (not imported by the CLI or a test). */
function invokedDirectly(): boolean {
  if (process.argv[1] === undefined) return false;
  try {
    return fs.realpathSync(process.argv[1]) === fs.realpathSync(fileURLToPath(import.meta.url));
  } catch {
    return false;
  }
}

if (invokedDirectly()) {
  serveFromArgs(process.argv.slice(2)).catch((err: unknown) => {
    process.stderr.write(`shaftnet serve: ${err instanceof Error ? err.message : String(err)}\n`);
    process.exit(1);
  });
}
