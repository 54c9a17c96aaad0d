/**
 * The model library's wire types, as TypeBox schemas: what the API answers
 * about stored models, revisions, demos and the session. One source: the
 * store interface (server/store/store.ts), the routes' response schemas and
 * the client's `api.ts` all take their types from here.
 */
import Type, { type Static } from 'typebox';
import { Model } from './model.js';

/** ISO 8601 time (UTC). */
export const Timestamp = Type.String({ description: 'ISO 8601 time (UTC).' });

/** The model schema without its $id, for embedding in other bodies and answers. */
const { $id: _modelId, ...modelFields } = Model as typeof Model & { $id?: string };
void _modelId;
export const EmbeddedModel = modelFields as unknown as typeof Model;

/** A revision's review state (prepared at the save; checked, approved, returned by personal keys). */
export const ReviewState = Type.Union([Type.Literal('prepared'), Type.Literal('checked'), Type.Literal('approved'), Type.Literal('returned')], {
  description: 'prepared → checked → approved, or prepared|checked → returned; approved and returned are final.',
});
export type ReviewState = Static<typeof ReviewState>;

/** One change of a revision's review state; the first (`prepared`) is the save itself. */
export const ReviewEntry = Type.Object({
  state: ReviewState,
  by: Type.String({ description: "Who: the author of the save, or the personal key's name." }),
  at: Timestamp,
  note: Type.Union([Type.String(), Type.Null()]),
});
export type ReviewEntry = Static<typeof ReviewEntry>;

/** A revision's review: its state and every change, oldest first. */
export const Review = Type.Object({ state: ReviewState, history: Type.Array(ReviewEntry) });
export type Review = Static<typeof Review>;

/** What `POST /api/models/{id}/revisions/{rev}/review` answers. */
export const ReviewResult = Type.Object({ id: Type.String(), revision: Type.Integer(), state: ReviewState, history: Type.Array(ReviewEntry) });
export type ReviewResult = Static<typeof ReviewResult>;

/** The states a review request may set. */
export const ReviewTarget = Type.Union([Type.Literal('checked'), Type.Literal('approved'), Type.Literal('returned')]);
export type ReviewTarget = Static<typeof ReviewTarget>;

/** A personal key's role: editor (create, save, archive), checker (+ check, return), approver (+ approve). */
export const KeyRole = Type.Union([Type.Literal('editor'), Type.Literal('checker'), Type.Literal('approver')]);
export type KeyRole = Static<typeof KeyRole>;

/** Who a personal key says the client is. */
export const Identity = Type.Object({ name: Type.String(), role: KeyRole });
export type Identity = Static<typeof Identity>;

/** A personal key as `shaftnet keys list` shows it (never its secret or hash). */
export const KeyInfo = Type.Object({
  id: Type.String(),
  name: Type.String(),
  role: KeyRole,
  created: Timestamp,
  revoked: Type.Union([Timestamp, Type.Null()]),
});
export type KeyInfo = Static<typeof KeyInfo>;

/** The data of a live-notice event (`GET /api/models/{id}/events`), `event: revision`. */
export const RevisionEvent = Type.Object({ id: Type.String(), revision: Type.Integer(), author: Type.String(), at: Timestamp });
export type RevisionEvent = Static<typeof RevisionEvent>;

/** The data of a live-notice event, `event: review`. */
export const ReviewEvent = Type.Object({
  id: Type.String(),
  revision: Type.Integer(),
  state: ReviewState,
  by: Type.String(),
  at: Timestamp,
  note: Type.Union([Type.String(), Type.Null()]),
});
export type ReviewEvent = Static<typeof ReviewEvent>;

/** One line of the library listing. */
export const ModelSummary = Type.Object({
  id: Type.String(),
  name: Type.String({ description: 'The model name in its latest revision.' }),
  author: Type.String({ description: 'Author of the latest revision.' }),
  updated: Type.String({ description: 'ISO 8601 time (UTC) of the latest revision.' }),
  revision: Type.Integer(),
  archived: Type.Boolean(),
  reviewState: ReviewState,
});
export type ModelSummary = Static<typeof ModelSummary>;

/** One revision without its model. */
export const RevisionInfo = Type.Object({
  revision: Type.Integer(),
  author: Type.String(),
  message: Type.String(),
  created: Type.String({ description: 'ISO 8601 time (UTC) the revision was saved.' }),
  reviewState: ReviewState,
});
export type RevisionInfo = Static<typeof RevisionInfo>;

/** One revision with its model, as stored (units as the user typed them). */
export const StoredModel = Type.Object({
  id: Type.String(),
  revision: Type.Integer(),
  model: EmbeddedModel,
  author: Type.String(),
  message: Type.String(),
  created: Timestamp,
  archived: Type.Boolean(),
  review: Review,
});
export type StoredModel = Static<typeof StoredModel>;

/** What a save (create, update, import) answers. */
export const Saved = Type.Object({ id: Type.String(), revision: Type.Integer() });
export type Saved = Static<typeof Saved>;

/** What archiving or restoring answers. */
export const ArchiveState = Type.Object({ id: Type.String(), archived: Type.Boolean() });
export type ArchiveState = Static<typeof ArchiveState>;

/** One shipped demo model, without the model. */
export const DemoInfo = Type.Object({ id: Type.String(), name: Type.String(), notes: Type.String() });
export type DemoInfo = Static<typeof DemoInfo>;

/** Whether the server needs a key (team token or personal key), whether this client has one, and whose. */
export const SessionInfo = Type.Object({
  tokenRequired: Type.Boolean(),
  signedIn: Type.Boolean(),
  identity: Type.Union([Identity, Type.Null()], { description: 'The personal key signed in; null for the team token, open mode, or signed out.' }),
});
export type SessionInfo = Static<typeof SessionInfo>;

/** The answers that wrap a list. */
export const ModelList = Type.Object({ models: Type.Array(ModelSummary) });
export type ModelList = Static<typeof ModelList>;
export const RevisionList = Type.Object({ revisions: Type.Array(RevisionInfo) });
export type RevisionList = Static<typeof RevisionList>;
export const DemoList = Type.Object({ demos: Type.Array(DemoInfo) });
export type DemoList = Static<typeof DemoList>;
