/**
 * The HTTP API, typed with the shared types. Every 4xx/5xx becomes an
 * `ApiError` carrying the server's code, message, issues (with JSON pointers)
 * and, for a 409, the current revision.
 */
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import type { ErrorBody, ModelIssue } from '../../shared-types/errors.js';

export interface ModelSummary { id: string; name: string; author: string; updated: string; revision: number; archived: boolean }
export interface StoredModel { id: string; revision: number; model: Model; author: string; message: string; created: string; archived: boolean }
export interface RevisionInfo { revision: number; author: string; message: string; created: string }
export interface DemoInfo { id: string; name: string; notes: string }
export interface SessionInfo { tokenRequired: boolean; signedIn: boolean }
export interface Saved { id: string; revision: number }

/** An error answer of the API, or a network failure (status 0). */
export class ApiError extends Error {
  readonly status: number;
  readonly code: string;
  readonly issues: readonly ModelIssue[];
  readonly currentRevision?: number;

  constructor(status: number, code: string, message: string, issues: readonly ModelIssue[] = [], currentRevision?: number) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.code = code;
    this.issues = issues;
    this.currentRevision = currentRevision;
  }
}

/** True for an abort of a request the client itself cancelled. */
export function isAbort(e: unknown): boolean {
  return e instanceof DOMException && e.name === 'AbortError';
}

async function call<T>(method: string, path: string, body?: unknown, signal?: AbortSignal): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, {
      method,
      headers: body === undefined ? { accept: 'application/json' } : { 'content-type': 'application/json', accept: 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
      credentials: 'same-origin',
      signal,
    });
  } catch (e) {
    if (isAbort(e)) throw e;
    throw new ApiError(0, 'SN_NETWORK', 'The server cannot be reached.');
  }
  const text = await res.text();
  let data: unknown = undefined;
  if (text) {
    try {
      data = JSON.parse(text);
    } catch {
      data = undefined;
    }
  }
  if (!res.ok) {
    const err = (data as Partial<ErrorBody> | undefined)?.error;
    const current = (data as { currentRevision?: number } | undefined)?.currentRevision;
    throw new ApiError(res.status, err?.code ?? `HTTP_${res.status}`, err?.message ?? `${res.status} ${res.statusText}`, err?.issues ?? [], current);
  }
  return data as T;
}

const enc = encodeURIComponent;

/** One function per route of the API. */
export const api = {
  health: () => call<unknown>('GET', '/api/health'),
  solve: (model: Model, signal?: AbortSignal) => call<Solution>('POST', '/api/solve', model, signal),
  listModels: (q = '', archived = false) =>
    call<{ models: ModelSummary[] }>('GET', `/api/models?q=${enc(q)}&archived=${archived ? 'true' : 'false'}`),
  getModel: (id: string) => call<StoredModel>('GET', `/api/models/${enc(id)}`),
  getRevision: (id: string, rev: number) => call<StoredModel>('GET', `/api/models/${enc(id)}/revisions/${rev}`),
  revisions: (id: string) => call<{ revisions: RevisionInfo[] }>('GET', `/api/models/${enc(id)}/revisions`),
  create: (model: Model, author: string, message: string) => call<Saved>('POST', '/api/models', { model, author, message }),
  update: (id: string, model: Model, baseRevision: number, author: string, message: string) =>
    call<Saved>('PUT', `/api/models/${enc(id)}`, { model, baseRevision, author, message }),
  archive: (id: string) => call<unknown>('POST', `/api/models/${enc(id)}/archive`),
  restore: (id: string) => call<unknown>('POST', `/api/models/${enc(id)}/restore`),
  exportUrl: (id: string) => `/api/models/${enc(id)}/export`,
  importModel: (model: unknown, author: string, message: string) =>
    call<Saved>('POST', `/api/models/import?author=${enc(author)}&message=${enc(message)}`, model),
  demos: () => call<{ demos: DemoInfo[] }>('GET', '/api/demos'),
  demo: (id: string) => call<Model>('GET', `/api/demos/${enc(id)}`),
  session: () => call<SessionInfo>('GET', '/api/session'),
  signIn: (token: string) => call<unknown>('POST', '/api/session', { token }),
};
