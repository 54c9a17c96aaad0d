/**
 * TypeBox schemas of the API's own request bodies and parameters, and its
 * error answer. The model and the solution come from shared-types/, and so do
 * the library's answers (shared-types/library.ts). They validate requests and
 * feed the OpenAPI document.
 */
import Type, { type Static } from 'typebox';
import { EmbeddedModel } from '../../shared-types/library.js';

export { EmbeddedModel } from '../../shared-types/library.js';

export const ModelId = Type.String({ pattern: '^[A-Za-z0-9_-]{1,64}$', description: 'Model id, as answered by a create.' });
export const RevisionNumber = Type.Integer({ minimum: 1, maximum: 1_000_000_000, description: 'Revision number, from 1.' });
/** No NUL character: PostgreSQL's text refuses it, and no name or note needs it (both stores refuse it alike). */
const NO_NUL = '^[^\\u0000]*$';

export const Author = Type.String({
  minLength: 1,
  maxLength: 100,
  pattern: NO_NUL,
  description: "Who saves: a name or initials. Required unless the request carries a personal key, whose name is then the author (a typed one is ignored).",
});
export const Message = Type.String({ maxLength: 2000, pattern: NO_NUL, description: 'What changed; may be empty.' });

export const Issue = Type.Object({
  code: Type.String(),
  pointer: Type.String({ description: 'JSON pointer into the request body ("" for the whole body).' }),
  message: Type.String(),
  shafts: Type.Optional(Type.Array(Type.String())),
  connections: Type.Optional(Type.Array(Type.String())),
});

export const ErrorBody = Type.Object(
  {
    error: Type.Object({
      code: Type.String({ description: 'A stable code from the registry (shared-types/errors.ts).' }),
      message: Type.String(),
      issues: Type.Array(Issue),
    }),
    currentRevision: Type.Optional(Type.Integer({ description: 'With SN_STALE_REVISION and SN_REVIEW_STALE: the latest revision.' })),
  },
  { description: 'Every 4xx and 5xx answer.' },
);

/** Responses every route may give, for the OpenAPI document. */
export const errorResponses = (...statuses: number[]): Record<number, typeof ErrorBody> =>
  Object.fromEntries(statuses.map((s) => [s, ErrorBody]));

export const CreateBody = Type.Object(
  { model: EmbeddedModel, author: Type.Optional(Author), message: Type.Optional(Message) },
  { additionalProperties: false },
);
export type CreateBody = Static<typeof CreateBody>;

export const UpdateBody = Type.Object(
  { model: EmbeddedModel, baseRevision: RevisionNumber, author: Type.Optional(Author), message: Type.Optional(Message) },
  { additionalProperties: false },
);
export type UpdateBody = Static<typeof UpdateBody>;

export const ListQuery = Type.Object(
  {
    q: Type.Optional(Type.String({ maxLength: 200, description: 'Part of the name, any case.' })),
    archived: Type.Optional(Type.Boolean({ description: 'true: archived models only; false (default): active ones.' })),
  },
  { additionalProperties: false },
);

export const IdParams = Type.Object({ id: ModelId });
export const RevisionParams = Type.Object({ id: ModelId, rev: RevisionNumber });
