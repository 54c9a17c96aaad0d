/**
 * A solver worker thread. It takes one job at a time from the pool and answers
 * with the solution already serialised to JSON bytes (transferred, not copied),
 * so that a large solution never costs the request thread a serialisation.
 */
import { parentPort } from 'node:worker_threads';
import { ModelError } from '../../shared-types/errors.js';
import { solveModel } from '../engine/index.js';
import { normaliseModel } from '../engine/normalise.js';
import { HttpError } from './errors.js';
import { jsonToBytes } from './json-bytes.js';
import { checkModelShape, checkSize, parseJsonText } from './solve-core.js';
import type { WorkerJob, WorkerReply } from './solver-pool.js';

function run(job: WorkerJob): WorkerReply {
  try {
    let model: unknown;
    if (job.kind === 'text') {
      // A large body that the request thread did not parse: do every step here.
      model = parseJsonText(job.text);
      checkModelShape(model);
      checkSize(model, job.limits);
    } else {
      model = job.model;
    }
    if (job.kind === 'validate') {
      normaliseModel(model);
      return { id: job.id, ok: true, json: null };
    }
    const bytes = jsonToBytes(solveModel(model));
    // Only a buffer that owns its whole ArrayBuffer can be transferred; a small one may be a view into a pool.
    if (bytes.byteOffset === 0 && bytes.buffer.byteLength === bytes.byteLength) {
      return { id: job.id, ok: true, json: new Uint8Array(bytes.buffer, 0, bytes.byteLength) };
    }
    return { id: job.id, ok: true, json: new Uint8Array(bytes) };
  } catch (err) {
    if (err instanceof HttpError || err instanceof ModelError) {
      return { id: job.id, ok: false, error: { code: err.code, message: err.message, issues: err.issues } };
    }
    const message = err instanceof Error ? `${err.name}: ${err.message}\n${err.stack ?? ''}` : String(err);
    return { id: job.id, ok: false, internal: message };
  }
}

parentPort?.on('message', (job: WorkerJob) => {
  const reply = run(job);
  if (reply.ok && reply.json) parentPort?.postMessage(reply, [reply.json.buffer as ArrayBuffer]);
  else parentPort?.postMessage(reply);
});
