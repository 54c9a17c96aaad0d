/**
 * The one schema translator: validator errors (TypeBox's, or Ajv's shape) into
 * issues `{code, pointer, message}`, one per field, with one wording on every
 * path. The engine's `normaliseModel`, the HTTP validator and the command line
 * all report a model's shape through this module, so one mistake reads the same
 * wherever it is made.
 *
 * The model schema is compiled here, once (`MODEL_VALIDATOR`), and shared.
 *
 * Wording, by keyword (the first message at a pointer wins):
 * - required: `is required`; an unknown field: `"x" is not a field here (misspelt?)`
 * - a wrong type: `must be a number`, `must be an array`, `must be a whole number`, …;
 *   a quantity: `must be a number in SI units or a string "<number> <unit>"`;
 *   a number that is not finite (JSON text 1e999 parses to Infinity): SN_NOT_FINITE `must be a finite number`
 * - an enum: `must be one of "fixed", "spring"`; one allowed value: `must be "x"`
 * - another format version: SN_FORMAT `must be "shaftnet/1", not "shaftnet/2"`, and it is the only issue
 * - limits: `must not be empty`, `must have at most 100 characters`, `must be at least 1`, …
 */
import { Compile } from 'typebox/compile';
import { Settings } from 'typebox/system';
import { MODEL_FORMAT, Model } from './model.js';
import { pointer as joinPointer, type ErrorCode, type ModelIssue } from './errors.js';

/** Most issues reported for one document: every issue of any real model, bounded against abuse. */
export const MAX_SCHEMA_ISSUES = 200;

/** Raw validator errors gathered for one document (a field can give several: one per union branch). */
const MAX_RAW_ERRORS = 1000;

/** One validator error: TypeBox's shape, or Ajv's (`missingProperty`, `additionalProperty`). */
export interface SchemaError {
  readonly keyword: string;
  /** JSON pointer into the document checked. */
  readonly instancePath: string;
  readonly params?: Readonly<Record<string, unknown>>;
  readonly message?: string;
  /** The value at `instancePath`, when the caller attached it (else it is read from `root`). */
  readonly value?: unknown;
}

/** Where the document sits in a request: its issues name the part when it is not the body. */
export type SchemaContext = 'body' | 'querystring' | 'params' | 'headers';

/** How to translate. */
export interface TranslateOptions {
  /** Prepended to every pointer: the document's place in a larger one (e.g. "/model"). */
  readonly prefix?: string;
  /** The part of a request the document is (default 'body'). */
  readonly context?: SchemaContext;
  /** The document itself, to read values at pointers (an Infinity, a wrong format). */
  readonly root?: unknown;
}

/** Anything compiled that lists errors for a value. */
export interface ErrorLister {
  Errors(value: unknown): unknown[];
}

/** The model schema, compiled once for the whole program. */
export const MODEL_VALIDATOR = Compile(Model);

/**
 * The errors of a compiled schema for a value, up to a bound. TypeBox keeps its
 * bound in a process-wide setting; it is raised for this call only.
 */
export function validatorErrors(validator: ErrorLister, value: unknown): SchemaError[] {
  const before = Settings.Get().maxErrors;
  Settings.Set({ maxErrors: MAX_RAW_ERRORS });
  try {
    return validator.Errors(value) as SchemaError[];
  } finally {
    Settings.Set({ maxErrors: before });
  }
}

/** The issues of a model's shape; [] when it matches the schema. `prefix` is the model's place in a request. */
export function modelSchemaIssues(model: unknown, prefix = ''): ModelIssue[] {
  if (MODEL_VALIDATOR.Check(model)) return [];
  return schemaIssues(validatorErrors(MODEL_VALIDATOR, model), { prefix, root: model });
}

/** The value at a JSON pointer, or undefined. */
export function valueAt(root: unknown, ptr: string): unknown {
  if (ptr === '') return root;
  let v: unknown = root;
  for (const token of ptr.split('/').slice(1)) {
    if (v === null || typeof v !== 'object') return undefined;
    const key = token.replace(/~1/g, '/').replace(/~0/g, '~');
    if (!Object.prototype.hasOwnProperty.call(v, key)) return undefined;
    v = (v as Record<string, unknown>)[key];
  }
  return v;
}

const ARTICLE_TYPES: Readonly<Record<string, string>> = {
  integer: 'a whole number',
  array: 'an array',
  object: 'an object',
  null: 'null',
};

function typeWords(types: readonly string[]): string {
  return [...new Set(types)].map((t) => ARTICLE_TYPES[t] ?? `a ${t}`).join(' or ');
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

/** A reader's message for a keyword with a limit; undefined for others. */
function limitMessage(keyword: string, params: Readonly<Record<string, unknown>>): string | undefined {
  const limit = params.limit as number;
  switch (keyword) {
    case 'minLength':
      return limit === 1 ? 'must not be empty' : `must have at least ${plural(limit, 'character')}`;
    case 'maxLength':
      return `must have at most ${plural(limit, 'character')}`;
    case 'minItems':
      return limit === 1 ? 'must not be empty' : `must have at least ${plural(limit, 'item')}`;
    case 'maxItems':
      return `must have at most ${plural(limit, 'item')}`;
    case 'minimum':
      return `must be at least ${limit}`;
    case 'maximum':
      return `must be at most ${limit}`;
    case 'exclusiveMinimum':
      return `must be more than ${limit}`;
    case 'exclusiveMaximum':
      return `must be less than ${limit}`;
    default:
      return undefined;
  }
}

interface Gathered {
  messages: string[];
  allowed: string[];
  types: string[];
  code: ErrorCode;
}

/** Translates validator errors into one issue per field (see the wording in this file's header). */
export function schemaIssues(errors: readonly SchemaError[], options: TranslateOptions = {}): ModelIssue[] {
  const prefix = options.prefix ?? '';
  const context = options.context ?? 'body';
  const valueOf = (e: SchemaError) => ('value' in e ? e.value : valueAt(options.root, e.instancePath));
  const byPointer = new Map<string, Gathered>();
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
        for (const p of extra) if (p !== undefined) add(at + joinPointer(p)).messages.push(`"${p}" is not a field here (misspelt?)`);
        break;
      }
      case 'boolean':
      case 'anyOf':
        break; // restated by 'additionalProperties' and by each branch's own error
      case 'const': {
        if (context === 'body' && params.allowedValue === MODEL_FORMAT) {
          // Another version of the format: its other differences would only be noise.
          const v = valueOf(e);
          const message = `must be ${JSON.stringify(MODEL_FORMAT)}${v === undefined ? '' : `, not ${JSON.stringify(v)}`}`;
          return [{ code: 'SN_FORMAT', pointer: at, message }];
        }
        add(at).allowed.push(JSON.stringify(params.allowedValue));
        break;
      }
      case 'type': {
        const v = valueOf(e);
        const entry = add(at);
        if (typeof v === 'number' && !Number.isFinite(v)) {
          entry.messages.push('must be a finite number');
          entry.code = 'SN_NOT_FINITE';
        } else entry.types.push(String(params.type));
        break;
      }
      default:
        add(at).messages.push(limitMessage(e.keyword, params) ?? e.message ?? `fails "${e.keyword}"`);
    }
  }
  const issues: ModelIssue[] = [];
  for (const [ptr, { messages, allowed, types, code }] of byPointer) {
    let message: string;
    if (messages.length > 0) message = messages[0];
    else if (allowed.length > 0) {
      const values = [...new Set(allowed)];
      message = values.length === 1 ? `must be ${values[0]}` : `must be one of ${values.join(', ')}`;
    } else if (types.includes('number') && types.includes('string')) {
      message = 'must be a number in SI units or a string "<number> <unit>"';
    } else if (types.length > 0) message = `must be ${typeWords(types)}`;
    else message = 'is not valid here';
    if (context !== 'body') {
      const name = ptr.slice(prefix.length + 1) || '(all)';
      message = `${context === 'querystring' ? 'query' : context === 'params' ? 'path' : 'header'} parameter "${name}" ${message}`;
    }
    issues.push({ code, pointer: ptr, message });
    if (issues.length === MAX_SCHEMA_ISSUES) break;
  }
  if (issues.length === 0) issues.push({ code: 'SN_SCHEMA', pointer: prefix, message: 'does not match the expected format' });
  return issues;
}
