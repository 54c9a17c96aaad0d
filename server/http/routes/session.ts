/**
 * Sign-in for token mode, all three routes public: `POST /api/session {token}`
 * (the team token or a personal key, whose identity the session then carries)
 * makes a new server-side session and sets its id in an HttpOnly,
 * SameSite=Strict cookie (Secure when the request came over TLS, directly or
 * through a proxy the server trusts); `GET /api/session` says whether a token
 * is needed and whether this client has it; `DELETE /api/session` ends the
 * session, so a copy of the cookie stops working too.
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';
import { SESSION_COOKIE, type KeyIdentity, type TeamAuth } from '../auth.js';
import { errorResponses } from '../schemas.js';
import { SESSION_DEFAULTS } from '../sessions.js';
import { SessionInfo } from '../../../shared-types/library.js';

export interface SessionOptions {
  /** Token mode; undefined = open server. */
  readonly auth: TeamAuth | undefined;
  /** The cookie's Max-Age, ms (the session's absolute lifetime). */
  readonly maxAgeMs?: number;
}

const SessionState = SessionInfo;

/** The wire form of an identity: name and role, never the key id. */
const wire = (identity: KeyIdentity | null) => (identity === null ? null : { name: identity.name, role: identity.role });

const sessionRoutes: FastifyPluginAsyncTypebox<SessionOptions> = async (app, opts) => {
  const { auth } = opts;
  const maxAge = Math.floor((opts.maxAgeMs ?? SESSION_DEFAULTS.absoluteMs) / 1000); // s
  const cookieOptions = (secure: boolean) => ({
    path: '/',
    httpOnly: true,
    sameSite: 'strict' as const,
    secure, // only when the request came over TLS: the team server usually speaks plain HTTP on the LAN
  });
  const open = { public: true };

  app.get(
    '/api/session',
    {
      config: open,
      schema: { security: [], tags: ['session'], summary: 'Does this server need the team token, and does this client have it?', response: { 200: SessionState, ...errorResponses(429) } },
    },
    async (req, reply) => {
      if (auth === undefined) return { tokenRequired: false, signedIn: true, identity: null };
      const principal = await auth.principal(req, reply);
      return { tokenRequired: await auth.required(), signedIn: principal !== undefined, identity: wire(principal?.identity ?? null) };
    },
  );

  app.post(
    '/api/session',
    {
      config: open,
      schema: {
        security: [],
        tags: ['session'],
        summary: 'Sign in with the team token or a personal key (sets an HttpOnly cookie holding a new session id)',
        description: 'At most 10 attempts a minute from one address (wrong bearer tokens count too); then 429 with Retry-After.',
        body: Type.Object({ token: Type.String({ minLength: 1, maxLength: 1000 }) }, { additionalProperties: false }),
        response: { 200: SessionState, ...errorResponses(400, 401, 403, 429) },
      },
    },
    async (req, reply) => {
      if (auth === undefined || !(await auth.required())) return { tokenRequired: false, signedIn: true, identity: null };
      const { sessionId, identity } = await auth.signIn(req, reply, req.body.token);
      reply.setCookie(SESSION_COOKIE, sessionId, { ...cookieOptions(req.protocol === 'https'), maxAge });
      return { tokenRequired: true, signedIn: true, identity: wire(identity) };
    },
  );

  app.delete(
    '/api/session',
    {
      config: open,
      schema: { security: [], tags: ['session'], summary: 'Sign out (ends the session on the server and clears the cookie)', response: { 200: SessionState, ...errorResponses(403) } },
    },
    async (req, reply) => {
      await auth?.signOut(req);
      reply.clearCookie(SESSION_COOKIE, cookieOptions(req.protocol === 'https'));
      const required = (await auth?.required()) ?? false;
      return { tokenRequired: required, signedIn: !required, identity: null };
    },
  );
};

export default sessionRoutes;
