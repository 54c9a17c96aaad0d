/**
 * The review routes of the API used by the calculation sheet and the compare views: the sheet of a
 * stored revision (a URL to open), the sheet of an unsaved model (HTML answered to a POST, opened
 * through a Blob URL), and the two comparisons. Errors become `ApiError` as in api.ts.
 */
import type { Comparison } from '../../shared-types/compare.js';
import type { Model } from '../../shared-types/model.js';
import { ApiError, requestInit } from './api.js';

/** A comparison as the API answers it: the sides that did not solve are named. */
export interface ComparisonAnswer extends Comparison {
  readonly unsolved: ReadonlyArray<{ side: 'from' | 'to'; code: string; message: string }>;
}

const enc = encodeURIComponent;

async function send(path: string, init: RequestInit): Promise<Response> {
  let res: Response;
  try {
    res = await fetch(path, init);
  } catch {
    throw new ApiError(0, 'SN_NETWORK', 'The server cannot be reached.');
  }
  if (res.ok) return res;
  let body: { error?: { code?: string; message?: string; issues?: [] } } | undefined;
  try {
    body = (await res.json()) as typeof body;
  } catch {
    body = undefined;
  }
  throw new ApiError(res.status, body?.error?.code ?? `HTTP_${res.status}`, body?.error?.message ?? `${res.status} ${res.statusText}`, body?.error?.issues ?? []);
}

/** The address of a stored revision's calculation sheet. */
export function sheetUrl(id: string, revision: number): string {
  return `/api/models/${enc(id)}/revisions/${revision}/sheet`;
}

/** The calculation sheet of an unsaved model, as HTML text. */
export async function unsavedSheet(model: Model): Promise<string> {
  const init = requestInit('POST', model);
  return (await send('/api/sheet', { ...init, headers: { ...(init.headers as Record<string, string>), accept: 'text/html' } })).text();
}

/** Two stored revisions compared (inputs and results). */
export async function compareStored(id: string, from: number, to: number): Promise<ComparisonAnswer> {
  return (await send(`/api/models/${enc(id)}/compare?from=${from}&to=${to}`, requestInit('GET'))).json() as Promise<ComparisonAnswer>;
}

/** Two models compared (the library's latest and the user's unsaved edit). */
export async function compareModels(from: Model, to: Model): Promise<ComparisonAnswer> {
  return (await send('/api/compare', requestInit('POST', { from, to }))).json() as Promise<ComparisonAnswer>;
}
