/**
 * Sign-in for token mode: `POST /api/session {token}` sets an HttpOnly,
 * SameSite=Strict cookie; `GET /api/session` says whether a token is needed and
 * whether this client has it; `DELETE /api/session` signs out.
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';
import { isSignedIn, sameSecret, SESSION_COOKIE, sessionValue } from '../auth.js';
import { HttpError } from '../errors.js';
import { errorResponses } from '../schemas.js';
import { SessionInfo } from '../../../shared-types/library.js';

export interface SessionOptions {
  readonly token: string | undefined;
}

const SessionState = SessionInfo;

const sessionRoutes: FastifyPluginAsyncTypebox<SessionOptions> = async (app, opts) => {
  const { token } = opts;
  const cookieOptions = (secure: boolean) => ({
    path: '/',
    httpOnly: true,
    sameSite: 'strict' as const,
    secure, // only when the request came over TLS: the team server usually speaks plain HTTP on the LAN
  });

  app.get(
    '/api/session',
    { schema: { tags: ['session'], summary: 'Does this server need the team token, and does this client have it?', response: { 200: SessionState } } },
    async (req) => ({ tokenRequired: token !== undefined, signedIn: isSignedIn(req, token) }),
  );

  app.post(
    '/api/session',
    {
      schema: {
        tags: ['session'],
        summary: 'Sign in with the team token (sets an HttpOnly cookie)',
        body: Type.Object({ token: Type.String({ minLength: 1, maxLength: 1000 }) }, { additionalProperties: false }),
        response: { 200: SessionState, ...errorResponses(400, 401) },
      },
    },
    async (req, reply) => {
      if (token === undefined) return { tokenRequired: false, signedIn: true };
      if (!sameSecret(req.body.token, token)) {
        const message = 'that is not the team token';
        throw new HttpError('SN_UNAUTHORISED', message, [{ code: 'SN_UNAUTHORISED', pointer: '/token', message }]);
      }
      reply.setCookie(SESSION_COOKIE, sessionValue(token), cookieOptions(req.protocol === 'https'));
      return { tokenRequired: true, signedIn: true };
    },
  );

  app.delete(
    '/api/session',
    { schema: { tags: ['session'], summary: 'Sign out (clears the cookie)', response: { 200: SessionState } } },
    async (req, reply) => {
      reply.clearCookie(SESSION_COOKIE, cookieOptions(req.protocol === 'https'));
      return { tokenRequired: token !== undefined, signedIn: token === undefined };
    },
  );
};

export default sessionRoutes;
