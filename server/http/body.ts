/**
 * Reading a JSON request body without stalling the event loop on a large one.
 *
 * Fastify's own reader joins the chunks and decodes the whole body at the end,
 * which for a 60 MB model is a stop of the event loop in the hundreds of
 * milliseconds, followed by a copy to the worker. Here a body whose declared
 * length is above `deferBytes` is copied chunk by chunk, as it arrives, into
 * one buffer of its own, which is then handed over (transferred, not copied)
 * to a solver worker that decodes and parses it. Smaller bodies are parsed here.
 */
import type { IncomingMessage } from 'node:http';
import { HttpError } from './errors.js';
import { parseJsonText } from './solve-core.js';
import { DeferredBody } from './validation.js';

function tooLarge(limit: number): HttpError {
  const message = `the request body is larger than this server accepts (${limit} bytes; see --max-body)`;
  return new HttpError('SN_TOO_LARGE', message, [{ code: 'SN_TOO_LARGE', pointer: '', message }]);
}

function badLength(): HttpError {
  const message = 'the body does not have the length its Content-Length header announced';
  return new HttpError('SN_JSON', message, [{ code: 'SN_JSON', pointer: '', message }]);
}

/**
 * Reads the body: a parsed JSON value, or a DeferredBody for a large one
 * (`deferBytes`: Infinity to always parse here), or undefined for an empty one
 * where `emptyAllowed`. Errors: 413 over `limit` bytes, 400 SN_JSON.
 */
export function readJsonBody(
  payload: IncomingMessage,
  contentLength: string | undefined,
  opts: { limit: number; deferBytes: number; emptyAllowed: boolean },
  done: (err: Error | null, body?: unknown) => void,
): void {
  const { limit, deferBytes } = opts;
  const declared = contentLength === undefined ? NaN : Number(contentLength);
  if (declared > limit) {
    payload.resume(); // drain what the client sends; the answer goes out at once
    done(tooLarge(limit));
    return;
  }
  // Large and announced: one buffer of the final size, filled as chunks arrive.
  const whole = Number.isInteger(declared) && declared > deferBytes ? Buffer.allocUnsafeSlow(declared) : null;
  const chunks: Buffer[] = [];
  let received = 0;
  let finished = false;
  const finish = (err: Error | null, body?: unknown) => {
    if (finished) return;
    finished = true;
    payload.removeListener('data', onData);
    payload.removeListener('end', onEnd);
    payload.removeListener('error', onError);
    if (err) payload.resume();
    done(err, body);
  };
  const onData = (chunk: Buffer) => {
    if (whole) {
      if (received + chunk.length > whole.length) return finish(badLength());
      chunk.copy(whole, received);
    } else chunks.push(chunk);
    received += chunk.length;
    if (received > limit) finish(tooLarge(limit));
  };
  const onEnd = () => {
    if (Number.isInteger(declared) && received !== declared) return finish(badLength());
    if (whole) return finish(null, new DeferredBody(whole));
    const bytes = chunks.length === 1 ? chunks[0] : Buffer.concat(chunks, received);
    // Sent without a length (chunked) but large: still give it to a worker, in a buffer of its own.
    if (received > deferBytes) {
      const own = Buffer.allocUnsafeSlow(received); // not a view into Node's shared pool: transferable
      bytes.copy(own);
      return finish(null, new DeferredBody(own));
    }
    if (received === 0 && opts.emptyAllowed) return finish(null, undefined);
    try {
      finish(null, parseJsonText(bytes.toString('utf8')));
    } catch (err) {
      finish(err as Error);
    }
  };
  const onError = (err: Error) => finish(err);
  payload.on('data', onData);
  payload.on('end', onEnd);
  payload.on('error', onError);
}
