/**
 * The error-path tests' shared tools: a demo model copied and edited as plain JSON (the tests
 * break models on purpose), the ModelError a model is refused with, and the assertion that it is
 * refused with exactly one issue at one pointer.
 */
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import { ERROR_CODES, ModelError, type ErrorCode } from '../../shared-types/errors.js';
import { solveModel } from '../../server/engine/index.js';

// Broken models on purpose: edited as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export type Json = any;

/** A maker of fresh copies of a shipped demo (server/demos/<file>), each edited by `change`. */
export function demoEditor(file: string): (change?: (m: Json) => void) => Json {
  const text = readFileSync(new URL(`../../server/demos/${file}`, import.meta.url), 'utf8');
  return (change = () => {}) => {
    const m = JSON.parse(text) as Json;
    change(m);
    return m;
  };
}

/** The ModelError a model throws (fails the test if it solves or throws something else). */
export function refusal(model: unknown): ModelError {
  try {
    solveModel(model);
  } catch (e) {
    if (e instanceof ModelError) return e;
    throw e;
  }
  throw new Error('the model solved, but a ModelError was expected');
}

/** Asserts one issue, `code` at `pointer`, with a message that says something, and the code's status. */
export function expectIssue(model: unknown, code: ErrorCode, pointer: string): ModelError {
  const e = refusal(model);
  expect(e.issues.map((i) => [i.code, i.pointer])).toEqual([[code, pointer]]);
  expect(e.issues[0].message.length).toBeGreaterThan(10);
  expect(e.status).toBe(ERROR_CODES[code].status);
  return e;
}
