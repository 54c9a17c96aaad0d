/**
 * A throwaway PostgreSQL cluster for tests and benches: made with the machine's
 * own PostgreSQL (Debian's packages put it in /usr/lib/postgresql/<version>/bin),
 * in a temporary directory, listening on a free port of 127.0.0.1 only, its socket
 * in that directory; stopped and removed by `destroy()`.
 *
 * Without PostgreSQL the suites that need it skip and say so loudly, unless
 * SHAFTNET_REQUIRE_POSTGRES=1 (CI), which makes a missing PostgreSQL a failure.
 * initdb refuses to run as root: as root, the cluster is made and run as the
 * system user `postgres` (which the package creates).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';

/** The newest PostgreSQL bin directory on this machine that has initdb and pg_ctl, or undefined. */
export function findPgBin(): string | undefined {
  const root = '/usr/lib/postgresql';
  let versions: string[];
  try {
    versions = fs.readdirSync(root);
  } catch {
    return undefined;
  }
  const bins = versions
    .filter((v) => /^\d+(\.\d+)?$/.test(v))
    .sort((a, b) => Number(b) - Number(a))
    .map((v) => path.join(root, v, 'bin'))
    .filter((bin) => fs.existsSync(path.join(bin, 'initdb')) && fs.existsSync(path.join(bin, 'pg_ctl')));
  return bins[0];
}

/** Whether the tests can make a cluster here, and if not, why. */
export function pgAvailability(): { available: true; bin: string } | { available: false; reason: string } {
  const bin = findPgBin();
  if (bin === undefined) return { available: false, reason: 'no PostgreSQL found in /usr/lib/postgresql/*/bin (apt-get install postgresql)' };
  if (process.getuid?.() === 0 && runAsUid('postgres') === undefined) {
    return { available: false, reason: 'running as root and there is no system user "postgres" to run initdb as' };
  }
  return { available: true, bin };
}

/**
 * The skip decision for a suite that needs PostgreSQL: `skip` is true when it is
 * missing (and a loud line says so); with SHAFTNET_REQUIRE_POSTGRES=1 a missing
 * PostgreSQL throws instead, failing the test file.
 */
export function pgSuiteGate(suite: string): { skip: boolean; bin: string } {
  const a = pgAvailability();
  if (a.available) return { skip: false, bin: a.bin };
  if (process.env.SHAFTNET_REQUIRE_POSTGRES === '1') {
    throw new Error(`SHAFTNET_REQUIRE_POSTGRES=1 but PostgreSQL cannot be used: ${a.reason}`);
  }
  console.warn(`\n*** SKIPPED: ${suite}: ${a.reason}. Set SHAFTNET_REQUIRE_POSTGRES=1 to make this a failure. ***\n`);
  return { skip: true, bin: '' };
}

function runAsUid(user: string): number | undefined {
  const r = spawnSync('id', ['-u', user], { encoding: 'utf8' });
  return r.status === 0 ? Number(r.stdout.trim()) : undefined;
}

/** A port that was free a moment ago on 127.0.0.1. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port;
      srv.close(() => resolve(port));
    });
  });
}

export interface PgClusterOptions {
  /**
   * true: fsync on, as a real server runs (benches). Default false: fsync off, for
   * speed. A test that kills PostgreSQL itself still loses nothing committed (the
   * operating system keeps the written pages); only a machine crash would.
   */
  readonly durable?: boolean;
}

export interface PgCluster {
  readonly dir: string;
  readonly port: number;
  /** A postgres:// URL of a database in this cluster (over TCP on 127.0.0.1). */
  url(database: string): string;
  /** Creates a new, empty database and answers its URL. */
  createDatabase(name: string): Promise<string>;
  /** Stops the server (`fast`: clients are told and disconnected; `immediate`: as if it crashed). */
  stop(mode?: 'fast' | 'immediate'): void;
  /** Starts it again on the same port. */
  start(): void;
  /** Stops the server and removes its directory. */
  destroy(): void;
}

/** Clusters of this process still running: stopped at its exit if a suite's teardown never ran. */
const running = new Set<() => void>();
let exitHook = false;

/** Makes, starts and answers a throwaway cluster. */
export async function startPgCluster(bin: string, options: PgClusterOptions = {}): Promise<PgCluster> {
  const asRoot = process.getuid?.() === 0;
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-pg-'));
  const data = path.join(dir, 'data');
  const pgUid = asRoot ? runAsUid('postgres') : undefined;
  if (pgUid !== undefined) fs.chownSync(dir, pgUid, pgUid);
  const exec = (tool: string, args: string[]) => {
    const cmd = asRoot ? 'runuser' : path.join(bin, tool);
    const argv = asRoot ? ['-u', 'postgres', '--', path.join(bin, tool), ...args] : args;
    try {
      execFileSync(cmd, argv, { stdio: ['ignore', 'pipe', 'pipe'], cwd: dir });
    } catch (err) {
      const e = err as { stderr?: Buffer; stdout?: Buffer };
      let log = '';
      try {
        log = fs.readFileSync(path.join(dir, 'log'), 'utf8').slice(-2000);
      } catch {
        // no log yet
      }
      throw new Error(`${tool} ${args.join(' ')} failed: ${String(e.stderr ?? '')}${String(e.stdout ?? '')}\n${log}`);
    }
  };
  exec('initdb', ['-D', data, '-A', 'trust', '-U', 'postgres', '--no-sync', '-E', 'UTF8', '--locale=C.UTF-8']);
  let port = 0;
  const start = () => {
    const settings = [
      `-p ${port}`,
      `-k ${dir}`,
      '-c listen_addresses=127.0.0.1',
      '-c max_connections=100',
      options.durable ? '-c fsync=on' : '-c fsync=off -c full_page_writes=off',
    ].join(' ');
    exec('pg_ctl', ['-D', data, '-o', settings, '-l', path.join(dir, 'log'), '-w', '-t', '60', 'start']);
  };
  // The free port may be taken between finding and binding it: try a few.
  for (let attempt = 1; ; attempt++) {
    port = await freePort();
    try {
      start();
      break;
    } catch (err) {
      if (attempt >= 3) {
        fs.rmSync(dir, { recursive: true, force: true });
        throw err;
      }
    }
  }
  const url = (database: string) => `postgres://postgres@127.0.0.1:${port}/${encodeURIComponent(database)}`;
  let up = true;
  const destroy = () => {
    running.delete(destroy);
    try {
      if (up) exec('pg_ctl', ['-D', data, '-m', 'immediate', '-w', 'stop']);
    } finally {
      up = false;
      fs.rmSync(dir, { recursive: true, force: true });
    }
  };
  running.add(destroy);
  if (!exitHook) {
    exitHook = true;
    process.once('exit', () => {
      for (const d of [...running]) {
        try {
          d();
        } catch {
          // best effort at exit
        }
      }
    });
  }
  return {
    dir,
    port,
    url,
    async createDatabase(name: string) {
      const client = new pg.Client({ connectionString: url('postgres') });
      await client.connect();
      try {
        await client.query(`CREATE DATABASE "${name.replace(/"/g, '""')}"`);
      } finally {
        await client.end();
      }
      return url(name);
    },
    stop(mode = 'fast') {
      exec('pg_ctl', ['-D', data, '-m', mode, '-w', 'stop']);
      up = false;
    },
    start() {
      start();
      up = true;
    },
    destroy,
  };
}
