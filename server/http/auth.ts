/**
 * Team-token mode. With a token configured, every /api request except the
 * health check and the sign-in routes needs `Authorization: Bearer <token>` or
 * the session cookie that `POST /api/session` sets. Comparisons are constant
 * time. The cookie holds an HMAC of the token, not the token itself.
 */
import { createHash, createHmac, timingSafeEqual } from 'node:crypto';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { HttpError } from './errors.js';

/** Name of the session cookie. */
export const SESSION_COOKIE = 'shaftnet_session';

/** Routes that never need the token: method and route pattern. */
const OPEN_ROUTES = new Set(['GET /api/health', 'GET /api/session', 'POST /api/session', 'DELETE /api/session']);

/** Constant-time equality of two strings of any lengths (compares their SHA-256 digests). */
export function sameSecret(a: string, b: string): boolean {
  const da = createHash('sha256').update(a, 'utf8').digest();
  const db = createHash('sha256').update(b, 'utf8').digest();
  return timingSafeEqual(da, db);
}

/** The cookie value for a token: HMAC-SHA256, base64url. */
export function sessionValue(token: string): string {
  return createHmac('sha256', token).update('shaftnet-session/1').digest('base64url');
}

/** True when the request carries the token (bearer) or a valid session cookie. */
export function isSignedIn(req: FastifyRequest, token: string | undefined): boolean {
  if (token === undefined) return true;
  const header = req.headers.authorization;
  if (typeof header === 'string') {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
    if (m && sameSecret(m[1], token)) return true;
  }
  const cookie = req.cookies?.[SESSION_COOKIE];
  return typeof cookie === 'string' && sameSecret(cookie, sessionValue(token));
}

/** onRequest hook: 401 SN_UNAUTHORISED for a protected /api route without the token. */
export function authHook(token: string | undefined) {
  return async (req: FastifyRequest, _reply: FastifyReply): Promise<void> => {
    if (token === undefined) return;
    const url = req.url;
    if (url !== '/api' && !url.startsWith('/api/') && !url.startsWith('/api?')) return;
    if (OPEN_ROUTES.has(`${req.method} ${req.routeOptions.url ?? ''}`)) return;
    if (isSignedIn(req, token)) return;
    const message = 'this server needs the team token: send "Authorization: Bearer <token>" or sign in with POST /api/session';
    throw new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '', message }]);
  };
}
