/**
 * Server options from command-line flags and environment variables, checked
 * at startup: a bad value stops the server with a message that names the flag,
 * never a silent fallback to a default. Flags win over the environment.
 */
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';

/** Everything `serve` can be told. */
export interface ServerConfig {
  port: number;
  host: string;
  /** Directory of the SQLite file (unused when `database` is set). */
  dataDir: string;
  /** A postgres:// URL: the library lives in that PostgreSQL database instead; undefined = SQLite in dataDir. */
  database: string | undefined;
  /** Team token; undefined = open server. */
  token: string | undefined;
  /** Names (or addresses) the server answers to besides its own address (Host header). */
  allowedHosts: string[];
  /** Proxies whose X-Forwarded-For/-Proto/-Host are believed: addresses, CIDR ranges or loopback/linklocal/uniquelocal. */
  trustProxy: string[];
  /** Largest request body, bytes. */
  maxBodyBytes: number;
  /** Largest model, stations (engine's upper bound). */
  maxStations: number;
  /** Largest model, shafts. */
  maxShafts: number;
  /** Time limit of one worker solve, ms. */
  solveTimeoutMs: number;
  /** Solves above this many stations run in the worker pool. */
  workerThreshold: number;
  /** Worker threads for large solves. */
  workers: number;
  /** Large solves that may wait for a worker before 503. */
  queueLimit: number;
  /** Solve requests per minute per client address; 0 turns the limit off. */
  rateLimitPerMinute: number;
  logLevel: 'fatal' | 'error' | 'warn' | 'info' | 'debug' | 'trace' | 'silent';
}

/** Defaults, with their units. */
export const DEFAULTS: ServerConfig = {
  port: 8080,
  host: '127.0.0.1',
  dataDir: './data',
  database: undefined,
  token: undefined,
  allowedHosts: [],
  trustProxy: [],
  maxBodyBytes: 64 * 1024 * 1024, // bytes: a 1e6-station model written compactly is ~30-50 MB
  maxStations: 2_000_000, // stations
  maxShafts: 10_000, // shafts
  solveTimeoutMs: 60_000, // ms
  workerThreshold: 20_000, // stations
  workers: Math.max(1, os.availableParallelism() - 1), // threads
  queueLimit: 8, // waiting solves
  rateLimitPerMinute: 1200, // requests per minute per address: 20/s, ample for live re-solving while editing
  logLevel: 'info',
};

/** One option: its flag, environment variable and how to read it. */
interface OptionSpec {
  key: keyof ServerConfig;
  flag: string;
  env: string;
  help: string;
  read: (text: string, name: string) => ServerConfig[keyof ServerConfig];
}

export class ConfigError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ConfigError';
  }
}

function integer(min: number, max: number) {
  return (text: string, name: string): number => {
    const t = text.trim().replace(/_/g, '');
    if (!/^\d+$/.test(t)) throw new ConfigError(`${name} must be a whole number, not "${text}"`);
    const n = Number(t);
    if (n < min || n > max) throw new ConfigError(`${name} must be between ${min} and ${max}, not ${n}`);
    return n;
  };
}

/** Reads "20mb", "512kb", "1gb" or a plain number of bytes. */
function bytes(text: string, name: string): number {
  const m = /^\s*(\d+(?:\.\d+)?)\s*(b|kb|mb|gb)?\s*$/i.exec(text);
  if (!m) throw new ConfigError(`${name} must be a size such as 20mb, 512kb or a number of bytes, not "${text}"`);
  const factor = { b: 1, kb: 1024, mb: 1024 ** 2, gb: 1024 ** 3 }[(m[2] ?? 'b').toLowerCase() as 'b'];
  const n = Math.floor(Number(m[1]) * factor);
  if (n < 1024 || n > 1024 ** 3) throw new ConfigError(`${name} must be between 1kb and 1gb, not "${text}"`);
  return n;
}

/** Reads "60s", "500ms", "2m" or a plain number of milliseconds. */
function duration(text: string, name: string): number {
  const m = /^\s*(\d+(?:\.\d+)?)\s*(ms|s|m)?\s*$/i.exec(text);
  if (!m) throw new ConfigError(`${name} must be a duration such as 60s, 500ms or a number of milliseconds, not "${text}"`);
  const factor = { ms: 1, s: 1000, m: 60_000 }[(m[2] ?? 'ms').toLowerCase() as 'ms'];
  const n = Math.round(Number(m[1]) * factor);
  if (n < 10 || n > 3_600_000) throw new ConfigError(`${name} must be between 10ms and 60m, not "${text}"`);
  return n;
}

function nonEmpty(text: string, name: string): string {
  if (text.trim() === '') throw new ConfigError(`${name} must not be empty`);
  return text;
}

function token(text: string, name: string): string {
  if (text.length < 8) throw new ConfigError(`${name} must be at least 8 characters (a team token that is easy to guess protects nothing)`);
  if (/[\s;,"]/.test(text)) throw new ConfigError(`${name} must not contain spaces, quotes, commas or semicolons`);
  return text;
}

/** Reads the token from a file (first line, trailing white space dropped): keeps it out of the process list. */
function tokenFile(text: string, name: string): string {
  let content: string;
  try {
    content = fs.readFileSync(path.resolve(text), 'utf8');
  } catch (err) {
    throw new ConfigError(`${name}: cannot read ${path.resolve(text)} (${(err as NodeJS.ErrnoException).code ?? String(err)})`);
  }
  return token(content.split(/\r?\n/)[0].trimEnd(), `${name} (${path.resolve(text)})`);
}

/** "a.example, b.example": host names or addresses, without scheme, path or port. */
function hostList(text: string, name: string): string[] {
  const items = text.split(',').map((t) => t.trim().toLowerCase()).filter((t) => t !== '');
  for (const h of items) {
    if (!/^[a-z0-9.-]+$/.test(h) && net.isIP(h.replace(/^\[|\]$/g, '')) === 0) {
      throw new ConfigError(`${name}: "${h}" is not a host name or address (give names such as shaftnet.example.com, without scheme or port)`);
    }
  }
  return items;
}

/** "127.0.0.1, 10.0.0.0/8, loopback": what Fastify's trustProxy takes as a list. */
function proxyList(text: string, name: string): string[] {
  const items = text.split(',').map((t) => t.trim()).filter((t) => t !== '');
  for (const p of items) {
    const [addr, bits, extra] = p.split('/');
    const named = ['loopback', 'linklocal', 'uniquelocal'].includes(p);
    const family = net.isIP(addr);
    const okBits = bits === undefined || (/^\d+$/.test(bits) && Number(bits) <= (family === 6 ? 128 : 32));
    if (!named && (family === 0 || !okBits || extra !== undefined)) {
      throw new ConfigError(`${name}: "${p}" is not an address, a CIDR range (10.0.0.0/8) or one of loopback, linklocal, uniquelocal`);
    }
  }
  return items;
}

const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'];

/** A postgres:// (or postgresql://) URL; the driver reads the rest (and PGPASSWORD, ~/.pgpass). */
function databaseUrl(text: string, name: string): string {
  if (!/^postgres(ql)?:\/\//.test(text)) throw new ConfigError(`${name} must be a postgres:// URL (postgres://user@host:5432/db), not "${text.replace(/:[^:@/]*@/, ':***@')}"`);
  return text;
}

export const OPTIONS: readonly OptionSpec[] = [
  { key: 'port', flag: '--port', env: 'SHAFTNET_PORT', help: 'TCP port (0 = any free port)', read: integer(0, 65535) },
  { key: 'host', flag: '--host', env: 'SHAFTNET_HOST', help: 'address to bind; 0.0.0.0 serves the network', read: nonEmpty },
  { key: 'dataDir', flag: '--data', env: 'SHAFTNET_DATA', help: 'directory of the model library database', read: nonEmpty },
  { key: 'database', flag: '--database', env: 'SHAFTNET_DATABASE', help: 'postgres:// URL: keep the library in PostgreSQL (shared by several servers) instead of --data', read: databaseUrl },
  { key: 'token', flag: '--token', env: 'SHAFTNET_TOKEN', help: 'team token; every API call then needs it (visible in ps: prefer the next two)', read: token },
  { key: 'token', flag: '--token-file', env: 'SHAFTNET_TOKEN_FILE', help: 'file whose first line is the team token', read: tokenFile },
  { key: 'allowedHosts', flag: '--allowed-hosts', env: 'SHAFTNET_ALLOWED_HOSTS', help: 'names the server answers to (a,b), besides its address', read: hostList },
  { key: 'trustProxy', flag: '--trust-proxy', env: 'SHAFTNET_TRUST_PROXY', help: 'proxies to believe X-Forwarded-* from (addresses, CIDR, loopback)', read: proxyList },
  { key: 'maxBodyBytes', flag: '--max-body', env: 'SHAFTNET_MAX_BODY', help: 'largest request body (e.g. 64mb)', read: bytes },
  { key: 'maxStations', flag: '--max-stations', env: 'SHAFTNET_MAX_STATIONS', help: 'largest model, stations', read: integer(1, 100_000_000) },
  { key: 'maxShafts', flag: '--max-shafts', env: 'SHAFTNET_MAX_SHAFTS', help: 'largest model, shafts', read: integer(1, 10_000_000) },
  { key: 'solveTimeoutMs', flag: '--solve-timeout', env: 'SHAFTNET_SOLVE_TIMEOUT', help: 'time limit of a large solve (e.g. 60s)', read: duration },
  { key: 'workerThreshold', flag: '--worker-threshold', env: 'SHAFTNET_WORKER_THRESHOLD', help: 'stations above which a solve runs in a worker', read: integer(0, 100_000_000) },
  { key: 'workers', flag: '--workers', env: 'SHAFTNET_WORKERS', help: 'solver worker threads', read: integer(1, 256) },
  { key: 'queueLimit', flag: '--queue', env: 'SHAFTNET_QUEUE', help: 'large solves that may wait for a worker', read: integer(0, 10_000) },
  { key: 'rateLimitPerMinute', flag: '--rate-limit', env: 'SHAFTNET_RATE_LIMIT', help: 'solves per minute per address (0 = off)', read: integer(0, 100_000_000) },
  {
    key: 'logLevel',
    flag: '--log-level',
    env: 'SHAFTNET_LOG_LEVEL',
    help: LOG_LEVELS.join('|'),
    read: (text, name) => {
      if (!LOG_LEVELS.includes(text)) throw new ConfigError(`${name} must be one of ${LOG_LEVELS.join(', ')}, not "${text}"`);
      return text;
    },
  },
];

/** Text of `serve --help`. */
export function usage(): string {
  const lines = OPTIONS.map((o) => {
    const def = DEFAULTS[o.key];
    const shown = def === undefined || Array.isArray(def) || o.flag === '--token-file' ? '' : ` (default ${o.key === 'maxBodyBytes' ? `${(def as number) / 1024 ** 2}mb` : o.key === 'solveTimeoutMs' ? `${(def as number) / 1000}s` : def})`;
    return `  ${(o.flag + ' <value>').padEnd(28)} ${o.env.padEnd(26)} ${o.help}${shown}`;
  });
  return ['Usage: shaftnet serve [options]', '', '  flag                         environment variable', ...lines, '  --help'].join('\n');
}

/** Reads the options; throws ConfigError naming the bad flag or variable. */
export function parseConfig(argv: readonly string[], env: NodeJS.ProcessEnv = process.env): ServerConfig {
  const config: ServerConfig = { ...DEFAULTS };
  const set = (spec: OptionSpec, text: string, name: string) => {
    (config as unknown as Record<string, unknown>)[spec.key] = spec.read(text, name);
  };
  const given = (specs: Array<[OptionSpec, string]>, where: string) => {
    const tokens = specs.filter(([s]) => s.key === 'token').map(([, n]) => n);
    if (tokens.length > 1) throw new ConfigError(`give the team token once ${where}, not with both ${tokens.join(' and ')}`);
  };
  const fromEnv: Array<[OptionSpec, string]> = [];
  for (const spec of OPTIONS) {
    const value = env[spec.env];
    if (value !== undefined && value !== '') fromEnv.push([spec, spec.env]);
  }
  given(fromEnv, 'in the environment');
  for (const [spec] of fromEnv) set(spec, env[spec.env] as string, spec.env);
  const fromFlags: Array<[OptionSpec, string]> = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    const eq = arg.indexOf('=');
    const flag = eq > 0 ? arg.slice(0, eq) : arg;
    const spec = OPTIONS.find((o) => o.flag === flag);
    if (!spec) throw new ConfigError(`unknown option "${arg}"\n\n${usage()}`);
    let value: string | undefined;
    if (eq > 0) value = arg.slice(eq + 1);
    else {
      value = argv[i + 1];
      i++;
    }
    if (value === undefined) throw new ConfigError(`${flag} needs a value`);
    fromFlags.push([spec, flag]);
    given(fromFlags, 'on the command line');
    set(spec, value, flag);
  }
  config.dataDir = path.resolve(config.dataDir);
  return config;
}

/** True for an address that only this machine can reach. */
export function isLoopback(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127\.\d+\.\d+\.\d+$/.test(host);
}
