/**
 * POST /api/solve asking for progress (`Accept: text/event-stream`, see
 * server/http/API.md, "Progress and cancel"): progress events go to
 * `onProgress`, the `result` event is the solution, an `error` event or an
 * ordinary error answer becomes an `ApiError` as in api.ts. Aborting `signal`
 * closes the connection, which cancels the solve on the server.
 */
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import { ERROR_CODES, type ErrorBody } from '../../shared-types/errors.js';
import { ApiError, isAbort, requestInit } from './api.js';

/** One progress event: the phase under way, the fraction of it done and of the whole solve (0 … 1). */
export interface SolveProgressEvent {
  readonly phase: string;
  readonly fraction: number;
  readonly overall: number;
}

function apiErrorOf(status: number, statusText: string, data: unknown): ApiError {
  const err = (data as Partial<ErrorBody> | undefined)?.error;
  return new ApiError(status, err?.code ?? `HTTP_${status}`, err?.message ?? `${status} ${statusText}`, err?.issues ?? []);
}

function parseOrUndefined(text: string): unknown {
  try {
    return text ? JSON.parse(text) : undefined;
  } catch {
    return undefined;
  }
}

export async function solveWithProgress(
  model: Model,
  signal: AbortSignal | undefined,
  combination: string | undefined,
  onProgress: (p: SolveProgressEvent) => void,
): Promise<Solution> {
  const init = requestInit('POST', model, signal);
  init.headers = { ...(init.headers as Record<string, string>), accept: 'text/event-stream, application/json;q=0.5' };
  const path = combination ? `/api/solve?combination=${encodeURIComponent(combination)}` : '/api/solve';
  let res: Response;
  try {
    res = await fetch(path, init);
  } catch (e) {
    if (isAbort(e)) throw e;
    throw new ApiError(0, 'SN_NETWORK', 'The server cannot be reached.');
  }
  if (!(res.headers.get('content-type') ?? '').startsWith('text/event-stream') || !res.body) {
    // An ordinary answer: an error found before the solve started (or a server without events).
    const data = parseOrUndefined(await res.text());
    if (!res.ok) throw apiErrorOf(res.status, res.statusText, data);
    return data as Solution;
  }
  const reader = res.body.getReader();
  const decoder = new TextDecoder();
  let buffer = '';
  // The last event (result or error) may be hundreds of megabytes: its pieces are kept apart and
  // joined once, not searched again and again for the end of an event.
  let last: { event: string; pieces: string[] } | undefined;
  for (;;) {
    let chunk: ReadableStreamReadResult<Uint8Array>;
    try {
      chunk = await reader.read();
    } catch (e) {
      if (isAbort(e) || signal?.aborted) throw new DOMException('aborted', 'AbortError');
      throw new ApiError(0, 'SN_NETWORK', 'The connection to the server was lost during the solve.');
    }
    const text = chunk.done ? decoder.decode() : decoder.decode(chunk.value, { stream: true });
    if (last) last.pieces.push(text);
    else {
      buffer += text;
      for (;;) {
        const head = /^event: (result|error)\ndata: /.exec(buffer);
        if (head) {
          last = { event: head[1], pieces: [buffer.slice(head[0].length)] };
          buffer = '';
          break;
        }
        const end = buffer.indexOf('\n\n');
        if (end < 0) break;
        const block = buffer.slice(0, end); // a progress event (data is one line of JSON)
        const data = block.indexOf('\ndata: ');
        if (block.startsWith('event: progress\n') && data >= 0) onProgress(JSON.parse(block.slice(data + 7)) as SolveProgressEvent);
        buffer = buffer.slice(end + 2);
      }
    }
    if (chunk.done) break;
  }
  if (!last) throw new ApiError(0, 'SN_NETWORK', 'The server ended the answer before the solution.');
  const data = last.pieces.join('').replace(/\n\n$/, '');
  if (last.event === 'error') {
    const body = parseOrUndefined(data) as Partial<ErrorBody> | undefined;
    const code = body?.error?.code;
    throw apiErrorOf(code && code in ERROR_CODES ? ERROR_CODES[code].status : 500, 'error', body);
  }
  return JSON.parse(data) as Solution;
}
