/**
 * The HTTP API, typed with the shared types (the library's answers from
 * shared-types/library.ts). Every 4xx/5xx becomes an `ApiError` carrying the
 * server's code, message, issues (with JSON pointers) and, for a 409, the
 * current revision.
 *
 * Every unsafe request (POST, PUT, PATCH, DELETE) is sent as JSON with
 * `Content-Type: application/json`, with `{}` where it has nothing to say: the
 * server refuses a state change in any other form (a cross-site form cannot
 * send one).
 */
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import type { ErrorBody, ModelIssue } from '../../shared-types/errors.js';
import type {
  ArchiveState,
  DemoInfo,
  DemoList,
  ModelList,
  ModelSummary,
  RevisionInfo,
  RevisionList,
  Saved,
  SessionInfo,
  StoredModel,
} from '../../shared-types/library.js';

export type { ArchiveState, DemoInfo, ModelSummary, RevisionInfo, Saved, SessionInfo, StoredModel };

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

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

/** The fetch options of a request: JSON in and out; an unsafe method always carries a JSON body. */
export function requestInit(method: Method, body?: unknown, signal?: AbortSignal): RequestInit {
  if (method === 'GET') return { method, headers: { accept: 'application/json' }, credentials: 'same-origin', signal };
  return {
    method,
    headers: { 'content-type': 'application/json', accept: 'application/json' },
    body: JSON.stringify(body === undefined ? {} : body),
    credentials: 'same-origin',
    signal,
  };
}

async function call<T>(method: Method, path: string, body?: unknown, signal?: AbortSignal): Promise<T> {
  let res: Response;
  try {
    res = await fetch(path, requestInit(method, body, signal));
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
  solve: (model: Model, signal?: AbortSignal, combination?: string) =>
    call<Solution>('POST', combination ? `/api/solve?combination=${enc(combination)}` : '/api/solve', model, signal),
  listModels: (q = '', archived = false) =>
    call<ModelList>('GET', `/api/models?q=${enc(q)}&archived=${archived ? 'true' : 'false'}`),
  getModel: (id: string) => call<StoredModel>('GET', `/api/models/${enc(id)}`),
  getRevision: (id: string, rev: number) => call<StoredModel>('GET', `/api/models/${enc(id)}/revisions/${rev}`),
  revisions: (id: string) => call<RevisionList>('GET', `/api/models/${enc(id)}/revisions`),
  create: (model: Model, author: string, message: string) => call<Saved>('POST', '/api/models', { model, author, message }),
  update: (id: string, model: Model, baseRevision: number, author: string, message: string) =>
    call<Saved>('PUT', `/api/models/${enc(id)}`, { model, baseRevision, author, message }),
  archive: (id: string) => call<ArchiveState>('POST', `/api/models/${enc(id)}/archive`),
  restore: (id: string) => call<ArchiveState>('POST', `/api/models/${enc(id)}/restore`),
  exportUrl: (id: string) => `/api/models/${enc(id)}/export`,
  importModel: (model: unknown, author: string, message: string) =>
    call<Saved>('POST', `/api/models/import?author=${enc(author)}&message=${enc(message)}`, model),
  demos: () => call<DemoList>('GET', '/api/demos'),
  demo: (id: string) => call<Model>('GET', `/api/demos/${enc(id)}`),
  session: () => call<SessionInfo>('GET', '/api/session'),
  signIn: (token: string) => call<SessionInfo>('POST', '/api/session', { token }),
  signOut: () => call<SessionInfo>('DELETE', '/api/session'),
};
