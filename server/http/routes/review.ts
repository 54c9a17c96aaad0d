/**
 * Sign-off: `POST /api/models/{id}/revisions/{rev}/review` with
 * `{ state: "checked" | "approved" | "returned", note }` moves the latest
 * revision of a model along prepared → checked → approved, or to returned
 * (a note required). Only personal keys review: checker or approver to check
 * or return, approver to approve (403 SN_ROLE names the role needed); nobody
 * reviews their own revision (403
 * SN_FOUR_EYES); a revision that is not the latest is 409 SN_REVIEW_STALE, a
 * state that cannot follow the current one 409 SN_REVIEW_STATE. Each change
 * is recorded (who, when, note) and told to the model's live notice.
 */
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import Type from 'typebox';
import { ReviewResult, ReviewTarget } from '../../../shared-types/library.js';
import {
  ModelNotFoundError,
  ReviewRefusedError,
  ReviewStaleError,
  RevisionNotFoundError,
} from '../../store/store.js';
import type { AsyncModelStore } from '../../store/async-store.js';
import { requireRole } from '../auth.js';
import type { Broadcaster } from '../broadcaster.js';
import { HttpError } from '../errors.js';
import { errorResponses, RevisionParams } from '../schemas.js';

export interface ReviewOptions {
  readonly store: AsyncModelStore;
  readonly notices: Broadcaster;
}

export const ReviewBody = Type.Object(
  {
    state: ReviewTarget,
    note: Type.Optional(Type.Union([Type.String({ maxLength: 2000, pattern: '^[^\\u0000]*$' }), Type.Null()], { description: 'Why; required when returning.' })),
  },
  { additionalProperties: false },
);

const reviewRoutes: FastifyPluginAsyncTypebox<ReviewOptions> = async (app, opts) => {
  const { store, notices } = opts;

  app.post(
    '/api/models/:id/revisions/:rev/review',
    {
      schema: {
        tags: ['library'],
        summary: 'Check, approve or return the latest revision (personal keys only)',
        description:
          'checked and returned need role checker or approver, approved needs approver (403 SN_ROLE); nobody reviews a revision they ' +
          'authored, nor approves one they checked (403 SN_FOUR_EYES); not the latest revision: 409 SN_REVIEW_STALE with currentRevision; ' +
          'a state that cannot follow the current one: 409 SN_REVIEW_STATE; returned without a note: 400 SN_SCHEMA at /note.',
        params: RevisionParams,
        body: ReviewBody,
        response: { 200: ReviewResult, ...errorResponses(400, 401, 403, 404, 409) },
      },
    },
    async (req) => {
      const { id, rev } = req.params;
      const { state } = req.body;
      const note = req.body.note ?? null;
      if (state === 'returned' && (note === null || note.trim() === '')) {
        const message = 'a returned revision needs a note saying what to change';
        throw new HttpError('SN_SCHEMA', message, [{ code: 'SN_SCHEMA', pointer: '/note', message }]);
      }
      const identity = requireRole(req, state);
      let result;
      try {
        result = await store.review({ id, revision: rev, state, by: identity.name, note });
      } catch (err) {
        if (err instanceof ModelNotFoundError) {
          const message = `no model "${id}"`;
          throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '/id', message }]);
        }
        if (err instanceof RevisionNotFoundError) {
          const message = `model "${id}" has no revision ${rev}`;
          throw new HttpError('SN_NOT_FOUND', message, [{ code: 'SN_NOT_FOUND', pointer: '/rev', message }]);
        }
        if (err instanceof ReviewStaleError) {
          const message = `revision ${rev} of model "${id}" is no longer the latest: revision ${err.currentRevision} was saved since; review that one`;
          throw new HttpError('SN_REVIEW_STALE', message, [{ code: 'SN_REVIEW_STALE', pointer: '/rev', message }], {
            currentRevision: err.currentRevision,
          });
        }
        if (err instanceof ReviewRefusedError) {
          const code = err.kind === 'state' ? 'SN_REVIEW_STATE' : 'SN_FOUR_EYES';
          throw new HttpError(code, err.message, [{ code, pointer: '/state', message: err.message }]);
        }
        throw err;
      }
      const last = result.history[result.history.length - 1];
      notices.publish(id, { event: 'review', data: { id, revision: rev, state: last.state, by: last.by, at: last.at, note: last.note } });
      return result;
    },
  );
};

export default reviewRoutes;
