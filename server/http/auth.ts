/**
 * Token mode, deny by default: the team token, or a personal key (keys.ts) when
 * the library holds any (then a key is needed even without a team token). Whether a request needs the token is
 * decided by the route the router matched, never by looking at the URL: a
 * route is open only when it was registered with `config: { public: true }`
 * (the client's files, `GET /api/health`, the sign-in routes). Every other
 * route, and a request that matches no route, needs `Authorization: Bearer
 * <token>` or the cookie of a live session (see sessions.ts).
 *
 * Sign-in attempts are limited per address: every `POST /api/session` and
 * every wrong bearer token counts; over the limit, any token check from that
 * address answers 429 until the minute is over. Comparisons are constant time.
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import type { FastifyReply, FastifyRequest } from 'fastify';
import type { KeyRole, ReviewTarget } from '../../shared-types/library.js';
import { parseKey, secretMatches } from '../store/keys.js';
import { ROLE_FOR, roleMay } from '../store/review-rules.js';
import type { AsyncModelStore } from '../store/async-store.js';

/** What auth reads of the library: a key's row, and whether any key exists. */
export type AuthKeys = Pick<AsyncModelStore, 'keyRecord' | 'hasKeys'>;
import { HttpError } from './errors.js';
import { AttemptLimiter, type SessionStore } from './sessions.js';

declare module 'fastify' {
  interface FastifyContextConfig {
    /** Served without the team token. Set only at registration, on the short public list. */
    public?: boolean;
  }
  interface FastifyRequest {
    /** The personal key the request came with (bearer or its session); null: team token or open mode. Set by authHook. */
    shaftnetIdentity?: KeyIdentity | null;
  }
}

/** Who a personal key says the client is. */
export interface KeyIdentity {
  readonly keyId: string;
  readonly name: string;
  readonly role: KeyRole;
}

/** How long a checked key's scrypt result is trusted (ms); its revocation is read from the library at every use. */
export const KEY_CACHE_MS = 5_000;

/** Name of the session cookie. */
export const SESSION_COOKIE = 'shaftnet_session';

/** Constant-time equality of two strings of any lengths (compares their SHA-256 digests). */
export function sameSecret(a: string, b: string): boolean {
  const da = createHash('sha256').update(a, 'utf8').digest();
  const db = createHash('sha256').update(b, 'utf8').digest();
  return timingSafeEqual(da, db);
}

/** The 401 every protected route answers without the token. */
export function unauthorised(): HttpError {
  const message = 'this server needs the team token or a personal key: send "Authorization: Bearer <key>" or sign in with POST /api/session';
  return new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '', message }]);
}

function rateLimited(seconds: number, max: number): HttpError {
  const message = `too many sign-in attempts from this address (at most ${max} a minute); retry in ${seconds} s`;
  return new HttpError('SN_RATE_LIMITED', message, [{ code: 'SN_RATE_LIMITED', pointer: '', message }], {});
}

/** What the app's auth is made of. */
export interface AuthOptions {
  /** The team token; undefined = none (then only personal keys, if any, are needed). */
  readonly token: string | undefined;
  /** The personal keys (the library); undefined = none. */
  readonly keys: AuthKeys | undefined;
  readonly sessions: SessionStore;
  readonly signInPerMinute: number;
  /** The clock (ms since the epoch); tests pass their own. */
  readonly now?: () => number;
}

/**
 * The team token, the personal keys, the sessions and the sign-in limiter of
 * one app. Token mode holds when a team token is set or the library holds any
 * personal key (revoked ones count: revoking keys never opens a server); it is
 * read from the library at each request, so a key added while the server runs
 * closes it at once.
 */
export class TeamAuth {
  readonly limiter: AttemptLimiter;
  readonly sessions: SessionStore;
  readonly now: () => number;
  private readonly token: string | undefined;
  private readonly keys: AuthKeys | undefined;
  /** keyId → the digest of the key text last verified, until when, and the hash it was verified against. */
  private readonly verified = new Map<string, { digest: Buffer; until: number; hash: string }>();

  constructor(opts: AuthOptions) {
    this.token = opts.token;
    this.keys = opts.keys;
    this.sessions = opts.sessions;
    this.now = opts.now ?? Date.now;
    this.limiter = new AttemptLimiter(opts.signInPerMinute, 60_000);
  }

  /** True when requests need the team token or a personal key. */
  async required(): Promise<boolean> {
    return this.token !== undefined || ((await this.keys?.hasKeys()) ?? false);
  }

  /** Throws 429 SN_RATE_LIMITED (with Retry-After) when the address has used up its sign-in attempts. */
  private guard(req: FastifyRequest, reply: FastifyReply | undefined): void {
    const wait = this.limiter.blockedFor(req.ip, this.now());
    if (wait > 0) {
      reply?.header('retry-after', String(wait));
      throw rateLimited(wait, this.limiter.max);
    }
  }

  /** The identity of a live, unrevoked personal key with this id, or null. */
  private async liveKey(keyId: string): Promise<KeyIdentity | null> {
    const row = await this.keys?.keyRecord(keyId);
    if (!row || row.revoked !== null) {
      this.verified.delete(keyId);
      return null;
    }
    return { keyId: row.id, name: row.name, role: row.role };
  }

  /**
   * The identity of a personal key's text, or null when it is not a live key.
   * The row (and its revocation) is read at every call; only the slow hash is
   * skipped for the same text within KEY_CACHE_MS of its last check.
   */
  private async keyIdentity(text: string): Promise<KeyIdentity | null> {
    const parsed = parseKey(text);
    if (parsed === null || this.keys === undefined) return null;
    const row = await this.keys.keyRecord(parsed.id);
    if (!row || row.revoked !== null) {
      this.verified.delete(parsed.id);
      return null;
    }
    const digest = createHash('sha256').update(text, 'utf8').digest();
    const now = this.now();
    const seen = this.verified.get(row.id);
    const cached = seen !== undefined && seen.until > now && seen.hash === row.hash && timingSafeEqual(seen.digest, digest);
    if (!cached) {
      if (!(await secretMatches(parsed.secret, row))) return null;
      // A revocation made during the slow hash counts too.
      if ((await this.liveKey(row.id)) === null) return null;
      this.verified.set(row.id, { digest, until: now + KEY_CACHE_MS, hash: row.hash });
    }
    return { keyId: row.id, name: row.name, role: row.role };
  }

  /**
   * Who the request is: `{ identity }` (null for the team token or open mode),
   * or undefined when it is not signed in while a key is required. `touch`
   * (default true) counts the look as a use of the session (its idle timer).
   */
  async principal(req: FastifyRequest, reply?: FastifyReply, touch = true): Promise<{ identity: KeyIdentity | null } | undefined> {
    const header = req.headers.authorization;
    if (typeof header === 'string' && header.length > 0 && (await this.required())) {
      this.guard(req, reply);
      const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
      if (m) {
        if (this.token !== undefined && sameSecret(m[1], this.token)) return { identity: null };
        const identity = await this.keyIdentity(m[1]);
        if (identity !== null) return { identity };
      }
      this.limiter.count(req.ip, this.now());
      return undefined;
    }
    const cookie = req.cookies?.[SESSION_COOKIE];
    if (typeof cookie === 'string') {
      const session = await this.sessions.lookup(cookie, this.now(), touch);
      if (session !== undefined) {
        if (session.keyId === null) return { identity: null };
        const identity = await this.liveKey(session.keyId);
        if (identity !== null) return { identity };
        await this.sessions.revoke(cookie); // its key was revoked: the session ends with it
      }
    }
    return (await this.required()) ? undefined : { identity: null };
  }

  /** True when the request carries the team token or a live key (bearer), or the cookie of a live session; always in open mode. */
  async isSignedIn(req: FastifyRequest, reply?: FastifyReply): Promise<boolean> {
    return (await this.principal(req, reply)) !== undefined;
  }

  /**
   * Sign-in: counts the attempt, then a new session id (carrying the key's
   * identity when `given` is a personal key) for the team token or a live key,
   * else 401 (pointer /token).
   */
  async signIn(req: FastifyRequest, reply: FastifyReply, given: string): Promise<{ sessionId: string; identity: KeyIdentity | null }> {
    this.guard(req, reply);
    this.limiter.count(req.ip, this.now());
    if (this.token !== undefined && sameSecret(given, this.token)) return { sessionId: await this.sessions.create(this.now(), null), identity: null };
    const identity = await this.keyIdentity(given);
    if (identity !== null) return { sessionId: await this.sessions.create(this.now(), identity.keyId), identity };
    const message = this.token !== undefined ? 'that is neither the team token nor a live personal key' : 'that is not a live personal key';
    throw new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '/token', message }]);
  }

  /** Sign-out: ends the session of the request's cookie, if any. */
  async signOut(req: FastifyRequest): Promise<void> {
    const cookie = req.cookies?.[SESSION_COOKIE];
    if (typeof cookie === 'string') await this.sessions.revoke(cookie);
  }
}

/** The personal key of a request (set by authHook), or null: the team token or open mode. */
export function identityOf(req: FastifyRequest): KeyIdentity | null {
  return req.shaftnetIdentity ?? null;
}

/** 403 SN_ROLE unless the request's personal key may set `target` (the team token and open mode may not). */
export function requireRole(req: FastifyRequest, target: ReviewTarget): KeyIdentity {
  const identity = identityOf(req);
  const needed = ROLE_FOR[target] === 'approver' ? 'approver' : 'checker or approver';
  const what = target === 'approved' ? 'approving a revision' : target === 'checked' ? 'checking a revision' : 'returning a revision';
  if (identity === null) {
    const message = `a review needs a personal key with role ${needed}: ${what} is not done with the team token or on an open server`;
    throw new HttpError('SN_ROLE', message, [{ code: 'SN_ROLE', pointer: '/state', message }]);
  }
  if (!roleMay(identity.role, target)) {
    const message = `${what} needs a personal key with role ${needed}; the key of ${identity.name} has role ${identity.role}`;
    throw new HttpError('SN_ROLE', message, [{ code: 'SN_ROLE', pointer: '/state', message }]);
  }
  return identity;
}

/**
 * onRequest hook: 401 SN_UNAUTHORISED unless the matched route is public or the
 * request is signed in; records the request's identity for the routes. A
 * request that matched no route is left to the not-found handler, which
 * answers 401 too unless it serves the client's page.
 */
export function authHook(auth: TeamAuth | undefined) {
  return async (req: FastifyRequest, reply: FastifyReply): Promise<void> => {
    if (auth === undefined) return;
    if (req.is404) return;
    if (req.routeOptions.config.public === true) return;
    const principal = await auth.principal(req, reply);
    if (principal === undefined) throw unauthorised();
    req.shaftnetIdentity = principal.identity;
  };
}
