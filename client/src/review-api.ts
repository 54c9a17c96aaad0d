/**
 * The review's routes for the client: a state change of a revision, and the
 * address of a model's live event stream. The stored revision (with its
 * `review`) and the session (with its `identity`) come from api.ts and are read
 * with review-types.ts. Errors are api.ts's `ApiError`, as everywhere.
 */
import type { ErrorBody } from '../../shared-types/errors.js';
import { ApiError, isAbort, requestInit } from './api.js';
import { type Review, readReview } from './review-types.js';
import type { ReviewAction } from './review-rules.js';

const enc = encodeURIComponent;

/** `POST /api/models/{id}/revisions/{rev}/review`: the new state and history (null fields on an odd answer). */
export async function postReview(id: string, revision: number, state: ReviewAction, note: string): Promise<Review | null> {
  let res: Response;
  try {
    res = await fetch(`/api/models/${enc(id)}/revisions/${revision}/review`, requestInit('POST', { state, note }));
  } catch (e) {
    if (isAbort(e)) throw e;
    throw new ApiError(0, 'SN_NETWORK', 'The server cannot be reached.');
  }
  let data: unknown = undefined;
  try {
    data = JSON.parse(await res.text());
  } catch {
    data = undefined;
  }
  if (!res.ok) {
    const err = (data as Partial<ErrorBody> | undefined)?.error;
    throw new ApiError(res.status, err?.code ?? `HTTP_${res.status}`, err?.message ?? `${res.status} ${res.statusText}`, err?.issues ?? []);
  }
  return readReview(data);
}

/** `GET /api/models/{id}/events`: the model's live stream (for an EventSource; the session cookie authenticates it). */
export function eventsUrl(id: string): string {
  return `/api/models/${enc(id)}/events`;
}
