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

/** One line of the library listing. */
export const ModelSummary = Type.Object({
  id: Type.String(),
  name: Type.String({ description: 'The model name in its latest revision.' }),
  author: Type.String({ description: 'Author of the latest revision.' }),
  updated: Type.String({ description: 'ISO 8601 time (UTC) of the latest revision.' }),
  revision: Type.Integer(),
  archived: Type.Boolean(),
});
export type ModelSummary = Static<typeof ModelSummary>;

/** One revision without its model. */
export const RevisionInfo = Type.Object({
  revision: Type.Integer(),
  author: Type.String(),
  message: Type.String(),
  created: Type.String({ description: 'ISO 8601 time (UTC) the revision was saved.' }),
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

/** Whether the server needs the team token, and whether this client has it. */
export const SessionInfo = Type.Object({ tokenRequired: Type.Boolean(), signedIn: Type.Boolean() });
export type SessionInfo = Static<typeof SessionInfo>;

/** The answers that wrap a list. */
export const ModelList = Type.Object({ models: Type.Array(ModelSummary) });
export type ModelList = Static<typeof ModelList>;
export const RevisionList = Type.Object({ revisions: Type.Array(RevisionInfo) });
export type RevisionList = Static<typeof RevisionList>;
export const DemoList = Type.Object({ demos: Type.Array(DemoInfo) });
export type DemoList = Static<typeof DemoList>;
