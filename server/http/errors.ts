/**
 * Every error the API answers has one body: `{ error: { code, message, issues } }`
 * with a code from the registry in shared-types/errors.ts. This module turns
 * whatever was thrown (our HttpError, the engine's ModelError, Fastify's own
 * errors, validation failures) into that body, and never lets a stack trace or
 * an internal message reach the client.
 */
import type { FastifyError } from 'fastify';
import { ERROR_CODES, ModelError, type ErrorCode, type ModelIssue } from '../../shared-types/errors.js';
import { StoreUnavailableError } from '../store/store-errors.js';
import { StoreFullError } from '../store/store.js';
import { validationIssues, type ValidationErrorLike } from './validation.js';

/** An error with a registry code, raised by the routes. */
export class HttpError extends Error {
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly issues: readonly ModelIssue[] = [],
    /** Extra top-level fields of the body beside `error` (e.g. `currentRevision`). */
    readonly extra: Readonly<Record<string, unknown>> = {},
  ) {
    super(message);
    this.name = 'HttpError';
  }

  get status(): number {
    return ERROR_CODES[this.code].status;
  }
}

/** The body and status the API answers for an error. */
export interface ErrorReply {
  readonly status: number;
  readonly body: Record<string, unknown> & {
    error: { code: ErrorCode; message: string; issues: readonly ModelIssue[] };
  };
}

/** Builds an error reply from a code, message and issues. */
export function errorReply(
  code: ErrorCode,
  message: string,
  issues: readonly ModelIssue[] = [],
  extra: Readonly<Record<string, unknown>> = {},
): ErrorReply {
  return { status: ERROR_CODES[code].status, body: { ...extra, error: { code, message, issues } } };
}

/** Prefixes every issue's pointer (for bodies that wrap the model, e.g. "/model"). */
export function prefixIssues(issues: readonly ModelIssue[], prefix: string): ModelIssue[] {
  return issues.map((i) => ({ ...i, pointer: prefix + i.pointer }));
}

/** A copy of an issue with only the fields of the contract (no engine internals). */
function cleanIssue(i: ModelIssue): ModelIssue {
  const out: { -readonly [K in keyof ModelIssue]: ModelIssue[K] } = {
    code: i.code in ERROR_CODES ? i.code : 'SN_SCHEMA',
    pointer: typeof i.pointer === 'string' ? i.pointer : '',
    message: String(i.message),
  };
  if (i.shafts) out.shafts = [...i.shafts];
  if (i.connections) out.connections = [...i.connections];
  return out;
}

/** Reply for the engine's ModelError, pointers prefixed for wrapped bodies. */
export function modelErrorReply(err: ModelError, prefix = ''): ErrorReply {
  const issues = prefixIssues(err.issues.map(cleanIssue), prefix);
  const code = err.code in ERROR_CODES ? err.code : 'SN_SCHEMA';
  const first = issues[0];
  const message = first ? `${first.pointer || '(model)'}: ${first.message}` : ERROR_CODES[code].summary;
  return errorReply(code, message, issues);
}

const PARTS: Record<string, string> = { body: 'body', querystring: 'query parameter', params: 'path parameter', headers: 'header' };

/**
 * Maps anything thrown in a request to the reply. `internal` is true when the
 * error is a fault of the server, which the caller logs in full.
 */
export function toErrorReply(err: unknown): ErrorReply & { internal: boolean } {
  if (err instanceof HttpError) return { ...errorReply(err.code, err.message, err.issues, err.extra), internal: false };
  if (err instanceof ModelError) return { ...modelErrorReply(err), internal: false };
  if (err instanceof StoreUnavailableError) {
    // No host or port in the answer; the server's log has them.
    return {
      ...errorReply('SN_STORE_UNAVAILABLE', "nothing of this request was saved: the library's database server cannot be reached; retry shortly"),
      internal: false,
    };
  }
  if (err instanceof StoreFullError) {
    // No path in the answer; the server's log has the code and status of every refusal.
    return { ...errorReply('SN_DISK_FULL', "nothing was saved: the library's disk is full; the same save succeeds once space is freed"), internal: false };
  }
  const fe = err as Partial<FastifyError> & { validation?: ValidationErrorLike[]; validationContext?: string };
  if (Array.isArray(fe.validation)) {
    const context = fe.validationContext ?? 'body';
    const issues = validationIssues(fe.validation, context === 'body' ? '' : '', context);
    const first = issues[0];
    const code = first?.code ?? 'SN_SCHEMA'; // the first issue's, as the engine's ModelError has it
    const message = !first ? `invalid ${PARTS[context] ?? context}` : context === 'body' ? `${first.pointer || '(body)'}: ${first.message}` : first.message;
    return { ...errorReply(code, message, issues), internal: false };
  }
  switch (fe.code) {
    case 'FST_ERR_CTP_BODY_TOO_LARGE':
      return {
        ...errorReply('SN_TOO_LARGE', 'the request body is larger than this server accepts (see --max-body)', [
          { code: 'SN_TOO_LARGE', pointer: '', message: 'the body exceeds the configured byte limit' },
        ]),
        internal: false,
      };
    case 'FST_ERR_CTP_EMPTY_JSON_BODY':
      return jsonError('the body is empty; send a JSON document');
    case 'FST_ERR_CTP_INVALID_JSON_BODY':
      return jsonError('the body is not valid JSON');
    case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
    case 'FST_ERR_CTP_INVALID_CONTENT_LENGTH':
      return jsonError('send the body as JSON with "Content-Type: application/json"');
    case 'FST_ERR_NOT_FOUND':
      return { ...errorReply('SN_NOT_FOUND', 'no such route'), internal: false };
    // The router's own refusals (passed on by buildApp's frameworkErrors).
    case 'FST_ERR_BAD_URL':
      return jsonError('the path has a percent-escape that does not decode to UTF-8 text', 'SN_BAD_REQUEST');
    case 'FST_ERR_MAX_PARAM_LENGTH':
      return jsonError('a part of the path is longer than 1000 characters', 'SN_PATH_TOO_LONG');
  }
  const status = typeof fe.statusCode === 'number' ? fe.statusCode : 500;
  if (status === 404) return { ...errorReply('SN_NOT_FOUND', 'not found'), internal: false };
  if (status === 429) return { ...errorReply('SN_RATE_LIMITED', ERROR_CODES.SN_RATE_LIMITED.summary), internal: false };
  if (status === 413) return { ...errorReply('SN_TOO_LARGE', ERROR_CODES.SN_TOO_LARGE.summary), internal: false };
  if (status >= 400 && status < 500) {
    // Another client error from Fastify or a plugin: say what it was, as a request error.
    return jsonError(typeof fe.message === 'string' ? fe.message : 'bad request', 'SN_SCHEMA');
  }
  return {
    ...errorReply('SN_INTERNAL', 'internal server error; the server log has the details'),
    internal: true,
  };
}

/**
 * The raw HTTP answer for a request Node's parser refused before any route saw
 * it (a broken request line or header): the project's body, then the
 * connection is closed.
 */
export function clientErrorResponse(message: string): string {
  const body = JSON.stringify(errorReply('SN_BAD_REQUEST', message, [{ code: 'SN_BAD_REQUEST', pointer: '', message }]).body);
  return `HTTP/1.1 400 Bad Request\r\nContent-Type: application/json; charset=utf-8\r\nContent-Length: ${Buffer.byteLength(body)}\r\nConnection: close\r\n\r\n${body}`;
}

function jsonError(message: string, code: ErrorCode = 'SN_JSON'): ErrorReply & { internal: boolean } {
  return { ...errorReply(code, message, [{ code, pointer: '', message }]), internal: false };
}
