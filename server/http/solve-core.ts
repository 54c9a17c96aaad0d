/**
 * The steps of a solve request that do not need Fastify, shared by the
 * request thread and the solver workers: read JSON, check the model's shape,
 * check its size against the limits, solve or validate.
 */
import type { ModelIssue } from '../../shared-types/errors.js';
import { modelSchemaIssues } from '../../shared-types/schema-issues.js';
import { modelSize } from '../engine/index.js';
import { HttpError } from './errors.js';

/** Model size limits. */
export interface SizeLimits {
  /** stations */
  readonly maxStations: number;
  /** shafts */
  readonly maxShafts: number;
}

/** Parses a JSON body; a syntax error is a 400 SN_JSON, a "__proto__" key too. */
export function parseJsonText(text: string): unknown {
  if (text.trim() === '') throw jsonError('the body is empty; send a JSON document');
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    const detail = err instanceof Error ? err.message : String(err);
    throw jsonError(`the body is not valid JSON: ${detail.length > 200 ? detail.slice(0, 200) + '...' : detail}`);
  }
  // JSON.parse makes "__proto__" an own property; refuse it before any code merges objects.
  const proto = text.includes('__proto__') ? protoKeyPointer(value) : null;
  if (proto !== null) throw jsonError('the body contains a "__proto__" key', proto);
  return value;
}

/** The JSON pointer of the first "__proto__" key (depth first), or null. */
function protoKeyPointer(value: unknown): string | null {
  const stack: Array<[unknown, string]> = [[value, '']];
  while (stack.length > 0) {
    const [v, at] = stack.pop()!;
    if (v === null || typeof v !== 'object') continue;
    if (Array.isArray(v)) for (let i = v.length - 1; i >= 0; i--) stack.push([v[i], `${at}/${i}`]);
    else {
      if (Object.prototype.hasOwnProperty.call(v, '__proto__')) return `${at}/__proto__`;
      const keys = Object.keys(v);
      for (let i = keys.length - 1; i >= 0; i--) stack.push([(v as Record<string, unknown>)[keys[i]], at + '/' + keys[i].replace(/~/g, '~0').replace(/\//g, '~1')]);
    }
  }
  return null;
}

function jsonError(message: string, pointer = ''): HttpError {
  return new HttpError('SN_JSON', message, [{ code: 'SN_JSON', pointer, message }]);
}

/** Checks the shape of a model (what Fastify checks for a parsed body); throws a 400 naming the fields. */
export function checkModelShape(value: unknown, prefix = ''): void {
  const issues = modelSchemaIssues(value, prefix);
  if (issues.length === 0) return;
  throw new HttpError(issues[0].code, `${issues[0].pointer || '(model)'}: ${issues[0].message}`, issues);
}

/** The model's size by the engine's upper bound; throws 413 SN_TOO_LARGE over a limit. */
export function checkSize(model: unknown, limits: SizeLimits, prefix = ''): { stations: number; shafts: number } {
  const size = modelSize(model as Parameters<typeof modelSize>[0]);
  const issues: ModelIssue[] = [];
  if (size.shafts > limits.maxShafts) {
    issues.push({
      code: 'SN_TOO_LARGE',
      pointer: prefix + '/shafts',
      message: `the model has ${size.shafts} shafts; this server accepts at most ${limits.maxShafts} (see --max-shafts)`,
    });
  }
  if (size.stations > limits.maxStations) {
    issues.push({
      code: 'SN_TOO_LARGE',
      pointer: prefix,
      message: `the model has up to ${size.stations} stations; this server accepts at most ${limits.maxStations} (see --max-stations)`,
    });
  }
  if (issues.length > 0) throw new HttpError('SN_TOO_LARGE', issues[0].message, issues);
  return size;
}
