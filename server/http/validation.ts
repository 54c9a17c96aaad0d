/**
 * Request validation with TypeBox's compiler, and the translation of its
 * errors into issues that name a field by JSON pointer.
 *
 * Why not Fastify's default Ajv setup: it removes unknown properties
 * (removeAdditional) and coerces types, so a misspelt field would vanish
 * silently. Bodies are checked exactly as sent; only query and path parameters
 * (always strings on the wire) are converted to their declared types.
 */
import type { FastifySchemaCompiler } from 'fastify';
import type { TSchema } from 'typebox';
import { Compile } from 'typebox/compile';
import { Value } from 'typebox/value';
import { MODEL_FORMAT } from '../../shared-types/model.js';
import { pointer as joinPointer, type ErrorCode, type ModelIssue } from '../../shared-types/errors.js';

/** The shape of one validator error, TypeBox's or Ajv's. */
export interface ValidationErrorLike {
  keyword: string;
  instancePath: string;
  params?: Record<string, unknown>;
  message?: string;
}

/** Marks a body that the route handles itself (a large solve parsed in a worker). */
export class DeferredBody {
  /** The raw bytes, in a buffer of their own (transferable to a worker). */
  constructor(readonly bytes: Buffer) {}
}

/** Fastify validator compiler: exact for bodies, converting for query, params and headers. */
export const validatorCompiler = (({ schema, httpPart }) => {
  const check = Compile(schema);
  const convert = httpPart !== 'body';
  return (value: unknown) => {
    if (value instanceof DeferredBody) return { value };
    const v = convert ? Value.Convert(schema, value) : value;
    if (check.Check(v)) return { value: v };
    return { error: check.Errors(v) as unknown as Error[] };
  };
}) as FastifySchemaCompiler<TSchema>;

/** Converts validator errors into one issue per field (pointer), with readable messages. */
export function validationIssues(errors: readonly ValidationErrorLike[], prefix = '', context = 'body'): ModelIssue[] {
  const byPointer = new Map<string, { messages: string[]; allowed: string[]; types: string[]; code: ErrorCode }>();
  const add = (ptr: string) => {
    let entry = byPointer.get(ptr);
    if (!entry) byPointer.set(ptr, (entry = { messages: [], allowed: [], types: [], code: 'SN_SCHEMA' }));
    return entry;
  };
  for (const e of errors) {
    const at = prefix + (e.instancePath ?? '');
    const params = e.params ?? {};
    switch (e.keyword) {
      case 'required': {
        const missing = (params.requiredProperties as string[] | undefined) ?? [params.missingProperty as string];
        for (const p of missing) if (p !== undefined) add(at + joinPointer(p)).messages.push('is required');
        break;
      }
      case 'additionalProperties': {
        const extra = (params.additionalProperties as string[] | undefined) ?? [params.additionalProperty as string];
        for (const p of extra) {
          if (p !== undefined) add(at + joinPointer(p)).messages.push(`"${p}" is not a field here (misspelt?)`);
        }
        break;
      }
      case 'boolean':
      case 'anyOf':
        break; // restated by 'additionalProperties' and by each branch's error
      case 'const': {
        const entry = add(at);
        entry.allowed.push(JSON.stringify(params.allowedValue));
        if (context === 'body' && at.endsWith('/format') && params.allowedValue === MODEL_FORMAT) entry.code = 'SN_FORMAT';
        break;
      }
      case 'type':
        add(at).types.push(String(params.type));
        break;
      default:
        add(at).messages.push(e.message ?? `fails "${e.keyword}"`);
    }
  }
  const issues: ModelIssue[] = [];
  for (const [ptr, { messages, allowed, types, code }] of byPointer) {
    let message: string;
    if (messages.length > 0) message = messages[0];
    else if (allowed.length > 0) message = `must be ${allowed.length === 1 ? '' : 'one of '}${[...new Set(allowed)].join(', ')}`;
    else if (types.includes('number') && types.includes('string')) {
      message = 'must be a number in SI units or a string "<number> <unit>"';
    } else if (types.length > 0) {
      message = `must be ${[...new Set(types)].map((t) => (t === 'integer' ? 'a whole number' : t === 'array' || t === 'object' ? `an ${t}` : `a ${t}`)).join(' or ')}`;
    } else message = 'is not valid here';
    if (context !== 'body') {
      const name = ptr.slice(prefix.length + 1) || '(all)';
      message = `${context === 'querystring' ? 'query' : context === 'params' ? 'path' : context} parameter "${name}" ${message}`;
    }
    issues.push({ code, pointer: ptr, message });
  }
  // A model of another format version: the rest of its errors would only be noise.
  const format = issues.find((i) => i.code === 'SN_FORMAT');
  if (format) return [format];
  if (issues.length === 0) issues.push({ code: 'SN_SCHEMA', pointer: prefix, message: 'does not match the expected format' });
  return issues.slice(0, 200);
}
