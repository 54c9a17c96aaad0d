/**
 * Team-token mode, deny by default. Whether a request needs the token is
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
import { HttpError } from './errors.js';
import { AttemptLimiter, type SessionStore } from './sessions.js';

declare module 'fastify' {
  interface FastifyContextConfig {
    /** Served without the team token. Set only at registration, on the short public list. */
    public?: boolean;
  }
}

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
  const message = 'this server needs the team token: send "Authorization: Bearer <token>" or sign in with POST /api/session';
  return new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '', message }]);
}

function rateLimited(seconds: number, max: number): HttpError {
  const message = `too many sign-in attempts from this address (at most ${max} a minute); retry in ${seconds} s`;
  return new HttpError('SN_RATE_LIMITED', message, [{ code: 'SN_RATE_LIMITED', pointer: '', message }], {});
}

/** The token, the sessions and the sign-in limiter of one app. */
export class TeamAuth {
  readonly limiter: AttemptLimiter;

  constructor(
    private readonly token: string,
    readonly sessions: SessionStore,
    signInPerMinute: number,
    /** The clock (ms since the epoch); tests pass their own. */
    readonly now: () => number = Date.now,
  ) {
    this.limiter = new AttemptLimiter(signInPerMinute, 60_000);
  }

  /** Throws 429 SN_RATE_LIMITED (with Retry-After) when the address has used up its sign-in attempts. */
  private guard(req: FastifyRequest, reply: FastifyReply | undefined): void {
    const wait = this.limiter.blockedFor(req.ip, this.now());
    if (wait > 0) {
      reply?.header('retry-after', String(wait));
      throw rateLimited(wait, this.limiter.max);
    }
  }

  /** True when the request carries the token (bearer) or the cookie of a live session. */
  isSignedIn(req: FastifyRequest, reply?: FastifyReply): boolean {
    const header = req.headers.authorization;
    if (typeof header === 'string' && header.length > 0) {
      this.guard(req, reply);
      const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
      if (m && sameSecret(m[1], this.token)) return true;
      this.limiter.count(req.ip, this.now());
      return false;
    }
    const cookie = req.cookies?.[SESSION_COOKIE];
    return typeof cookie === 'string' && this.sessions.check(cookie, this.now());
  }

  /** Sign-in: counts the attempt, then a new session id for the right token, else 401 (pointer /token). */
  signIn(req: FastifyRequest, reply: FastifyReply, given: string): string {
    this.guard(req, reply);
    this.limiter.count(req.ip, this.now());
    if (!sameSecret(given, this.token)) {
      const message = 'that is not the team token';
      throw new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '/token', message }]);
    }
    return this.sessions.create(this.now());
  }

  /** Sign-out: ends the session of the request's cookie, if any. */
  signOut(req: FastifyRequest): void {
    const cookie = req.cookies?.[SESSION_COOKIE];
    if (typeof cookie === 'string') this.sessions.revoke(cookie);
  }
}

/**
 * onRequest hook: 401 SN_UNAUTHORISED unless the matched route is public or the
 * request is signed in. A request that matched no route is left to the
 * not-found handler, which answers 401 too unless it serves the client's page.
 */
export function authHook(auth: TeamAuth | undefined) {
  return async (req: FastifyRequest, reply: FastifyReply): Promise<void> => {
    if (auth === undefined) return;
    if (req.is404) return;
    if (req.routeOptions.config.public === true) return;
    if (auth.isSignedIn(req, reply)) return;
    throw unauthorised();
  };
}
