/**
 * Request validation with TypeBox's compiler. Its errors are worded by the one
 * schema translator (shared-types/schema-issues.ts), the same as the engine's
 * and the command line's.
 *
 * Why not Fastify's default Ajv setup: it removes unknown properties
 * (removeAdditional) and coerces types, so a misspelt field would vanish
 * silently. Bodies are checked exactly as sent; only query and path parameters
 * (always strings on the wire) are converted to their declared types.
 *
 * A model in a body (the whole body, or a field of it such as `model`) is
 * checked by the program's one compiled model validator, and only the rest of
 * the body by a validator compiled for the route: a model's issues are then
 * the engine's, in the same order, with the model's place as a prefix.
 */
import type { FastifySchemaCompiler } from 'fastify';
import Type, { type TSchema } from 'typebox';
import { Compile } from 'typebox/compile';
import { Value } from 'typebox/value';
import { Model } from '../../shared-types/model.js';
import type { ModelIssue } from '../../shared-types/errors.js';
import {
  MODEL_VALIDATOR,
  schemaIssues,
  validatorErrors,
  valueAt,
  type SchemaContext,
  type SchemaError,
} from '../../shared-types/schema-issues.js';
import { pointerToken } from '../../shared-types/errors.js';

/** The shape of one validator error, TypeBox's or Ajv's. */
export type ValidationErrorLike = SchemaError;

/** Marks a body that the route handles itself (a large solve parsed in a worker). */
export class DeferredBody {
  /** The raw bytes, in a buffer of their own (transferable to a worker). */
  constructor(readonly bytes: Buffer) {}
}

/** True for the model schema, with or without its $id (routes embed it without): it holds the model's own properties. */
function isModelSchema(schema: unknown): boolean {
  if (schema === Model) return true;
  return schema !== null && typeof schema === 'object' && (schema as { properties?: unknown }).properties === (Model as { properties?: unknown }).properties;
}

/** A body's check: an envelope validator, and the fields that hold a model. */
interface BodyCheck {
  readonly envelope: ReturnType<typeof Compile> | null;
  readonly modelFields: readonly string[];
}

/** Splits a body schema into the models it holds and the rest. */
function bodyCheck(schema: TSchema): BodyCheck {
  if (isModelSchema(schema)) return { envelope: null, modelFields: [''] };
  const props = (schema as { properties?: Record<string, TSchema> }).properties;
  if (!props) return { envelope: Compile(schema), modelFields: [] };
  const modelFields = Object.keys(props).filter((k) => isModelSchema(props[k]));
  if (modelFields.length === 0) return { envelope: Compile(schema), modelFields };
  const envelopeProps: Record<string, TSchema> = { ...props };
  for (const k of modelFields) envelopeProps[k] = Type.Unknown();
  // The model fields stay required where they were: the envelope keeps `required` and the other keywords.
  return { envelope: Compile({ ...schema, properties: envelopeProps } as TSchema), modelFields };
}

/** Attaches the value at each type error's pointer, for the translator (an Infinity is said to be one). */
function withValues(errors: SchemaError[], root: unknown): SchemaError[] {
  return errors.map((e) => (e.keyword === 'type' || e.keyword === 'const' ? { ...e, value: valueAt(root, e.instancePath) } : e));
}

/** Fastify validator compiler: exact for bodies, converting for query, params and headers. */
export const validatorCompiler = (({ schema, httpPart }) => {
  if (httpPart !== 'body') {
    const check = Compile(schema);
    return (value: unknown) => {
      const v = Value.Convert(schema, value);
      if (check.Check(v)) return { value: v };
      return { error: withValues(validatorErrors(check, v), v) as unknown as Error[] };
    };
  }
  const { envelope, modelFields } = bodyCheck(schema);
  return (value: unknown) => {
    if (value instanceof DeferredBody) return { value };
    const errors: SchemaError[] = [];
    if (envelope && !envelope.Check(value)) errors.push(...validatorErrors(envelope, value));
    for (const field of modelFields) {
      const at = field === '' ? '' : '/' + pointerToken(field);
      const model = field === '' ? value : valueAt(value, at);
      if (model === undefined && field !== '') continue; // missing: the envelope says it is required
      if (MODEL_VALIDATOR.Check(model)) continue;
      for (const e of validatorErrors(MODEL_VALIDATOR, model)) errors.push({ ...e, instancePath: at + e.instancePath });
    }
    if (errors.length === 0) return { value };
    return { error: withValues(errors, value) as unknown as Error[] };
  };
}) as FastifySchemaCompiler<TSchema>;

/**
 * Validator errors (as the compiler above answers them) into issues, one per
 * field; `context` names the part of the request. The one translator's words.
 */
export function validationIssues(errors: readonly ValidationErrorLike[], prefix = '', context = 'body'): ModelIssue[] {
  return schemaIssues(errors, { prefix, context: context as SchemaContext });
}
