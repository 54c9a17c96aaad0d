/**
 * The one schema translator (shared-types/schema-issues.ts): the same bad model
 * gives the same issues — code, pointer and message — through the engine, the
 * command line, the HTTP API (the model as the body, inside a save, as an
 * import) and the worker's shape check. Wording: common practice, no source.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ModelError, type ModelIssue } from '../../shared-types/errors.js';
import { MAX_SCHEMA_ISSUES, modelSchemaIssues, schemaIssues } from '../../shared-types/schema-issues.js';
import { normaliseModel } from '../../server/engine/normalise.js';
import { runCli } from '../../server/cli.js';
import { formatIssue } from '../../server/report.js';
import { checkModelShape } from '../../server/http/solve-core.js';
import { HttpError } from '../../server/http/errors.js';
import { cantilever, errorOf, makeApp, type TestApp } from '../http/helpers.js';

type Json = Record<string, any>;

/** A bad model as JSON text (text, so that 1e999 reaches every path as Infinity). */
function bad(change: (m: Json) => void, replace?: [string, string]): string {
  const m = cantilever(3) as Json;
  change(m);
  const text = JSON.stringify(m);
  return replace ? text.replace(replace[0], replace[1]) : text;
}

const CASES: Array<[string, string, Array<Pick<ModelIssue, 'code' | 'pointer' | 'message'>>]> = [
  ['a list that is not an array', bad((m) => (m.materials = {})), [{ code: 'SN_SCHEMA', pointer: '/materials', message: 'must be an array' }]],
  ['a missing field', bad((m) => delete m.shafts[0].segments[1].length), [{ code: 'SN_SCHEMA', pointer: '/shafts/0/segments/1/length', message: 'is required' }]],
  [
    'a misspelt field',
    bad((m) => (m.supports[0].knd = 'fixed')),
    [{ code: 'SN_SCHEMA', pointer: '/supports/0/knd', message: '"knd" is not a field here (misspelt?)' }],
  ],
  ['a value not in the enum', bad((m) => (m.supports[0].kind = 'welded')), [{ code: 'SN_SCHEMA', pointer: '/supports/0/kind', message: 'must be one of "fixed", "spring"' }]],
  [
    'another format version',
    bad((m) => ((m.format = 'shaftnet/2'), (m.materials = 5))),
    [{ code: 'SN_FORMAT', pointer: '/format', message: 'must be "shaftnet/1", not "shaftnet/2"' }],
  ],
  ['a model that is not an object', '[1, 2]', [{ code: 'SN_SCHEMA', pointer: '', message: 'must be an object' }]],
  [
    'a number that is not finite',
    bad((m) => (m.torques[0].torque = 'INF'), ['"INF"', '1e999']),
    [{ code: 'SN_NOT_FINITE', pointer: '/torques/0/torque', message: 'must be a finite number' }],
  ],
  [
    'a quantity of the wrong JSON type',
    bad((m) => (m.torques[0].at = true)),
    [{ code: 'SN_SCHEMA', pointer: '/torques/0/at', message: 'must be a number in SI units or a string "<number> <unit>"' }],
  ],
  ['an empty list', bad((m) => (m.shafts[0].segments = [])), [{ code: 'SN_SCHEMA', pointer: '/shafts/0/segments', message: 'must not be empty' }]],
  ['an empty id', bad((m) => (m.materials[0].id = '')), [{ code: 'SN_SCHEMA', pointer: '/materials/0/id', message: 'must not be empty' }]],
  ['a name too long', bad((m) => (m.name = 'x'.repeat(500))), [{ code: 'SN_SCHEMA', pointer: '/name', message: expect.stringMatching(/^must have at most \d+ characters$/) }]],
  [
    'several at once, in document order',
    bad((m) => ((m.name = 7), delete m.shafts[0].id, (m.torques[0].torque = null))),
    [
      { code: 'SN_SCHEMA', pointer: '/name', message: 'must be a string' },
      { code: 'SN_SCHEMA', pointer: '/shafts/0/id', message: 'is required' },
      { code: 'SN_SCHEMA', pointer: '/torques/0/torque', message: 'must be a number in SI units or a string "<number> <unit>"' },
    ],
  ],
];

function engineIssues(text: string): ModelIssue[] {
  try {
    normaliseModel(JSON.parse(text));
  } catch (e) {
    if (e instanceof ModelError) return [...e.issues];
    throw e;
  }
  throw new Error('the engine accepted a bad model');
}

const prefixed = (issues: readonly ModelIssue[], prefix: string) => issues.map((i) => ({ ...i, pointer: prefix + i.pointer }));

let t: TestApp;
beforeAll(async () => {
  t = await makeApp();
});
afterAll(async () => {
  await t.close();
});

const inject = (method: 'POST' | 'PUT', url: string, payload: string) =>
  t.app.inject({ method, url, payload, headers: { 'content-type': 'application/json' } });

describe.each(CASES)('%s', (_what, text, expected) => {
  it('the engine says it in these words', () => {
    expect(engineIssues(text)).toEqual(expected);
  });

  it('the command line prints the same issues', async () => {
    const file = join(mkdtempSync(join(tmpdir(), 'shaftnet-issues-')), 'model.json');
    writeFileSync(file, text);
    const lines: string[] = [];
    const code = await runCli(['solve', file], () => undefined, (s) => lines.push(s));
    expect(code).toBe(2);
    const model = JSON.parse(text);
    expect(lines).toEqual(engineIssues(text).map((i) => formatIssue(i, model)));
    for (const issue of expected) expect(lines.join('\n')).toContain(`: ${typeof issue.message === 'string' ? issue.message : ''}`);
  });

  it('POST /api/solve answers the same issues, under the code of the first', async () => {
    const r = await inject('POST', '/api/solve', text);
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.issues).toEqual(engineIssues(text));
    expect(errorOf(r.body).error.code).toBe(engineIssues(text)[0].code);
  });

  it('a save and an import answer the same issues, at the model in the body', async () => {
    const create = await inject('POST', '/api/models', `{"model": ${text}, "author": "a"}`);
    expect(create.statusCode).toBe(400);
    expect(errorOf(create.body).error.issues).toEqual(prefixed(engineIssues(text), '/model'));
    const imported = await inject('POST', '/api/models/import?author=a', text);
    expect(imported.statusCode).toBe(400);
    expect(errorOf(imported.body).error.issues).toEqual(engineIssues(text));
  });

  it('the shape check of the solver workers throws the same issues', () => {
    let thrown: unknown;
    try {
      checkModelShape(JSON.parse(text), '/model');
    } catch (e) {
      thrown = e;
    }
    expect(thrown).toBeInstanceOf(HttpError);
    expect((thrown as HttpError).issues).toEqual(prefixed(engineIssues(text), '/model'));
    expect((thrown as HttpError).code).toBe(engineIssues(text)[0].code);
  });
});

describe('the translator', () => {
  it('reports a save whose envelope and model are both wrong, envelope first', async () => {
    const r = await inject('POST', '/api/models', `{"model": ${bad((m) => (m.materials = {}))}, "author": "", "extra": 1}`);
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.issues).toEqual([
      { code: 'SN_SCHEMA', pointer: '/extra', message: '"extra" is not a field here (misspelt?)' },
      { code: 'SN_SCHEMA', pointer: '/author', message: 'must not be empty' },
      { code: 'SN_SCHEMA', pointer: '/model/materials', message: 'must be an array' },
    ]);
  });

  it('names a query parameter as one', async () => {
    const r = await t.app.inject({ method: 'GET', url: '/api/models?archived=perhaps' });
    expect(r.statusCode).toBe(400);
    expect(errorOf(r.body).error.issues).toEqual([{ code: 'SN_SCHEMA', pointer: '/archived', message: 'query parameter "archived" must be a boolean' }]);
  });

  it(`stops at ${MAX_SCHEMA_ISSUES} issues, on every path alike`, async () => {
    const m = cantilever(400) as Json;
    for (const s of m.shafts[0].segments) s.lenght = s.length;
    const text = JSON.stringify(m);
    const issues = engineIssues(text);
    expect(issues).toHaveLength(MAX_SCHEMA_ISSUES);
    expect(issues[0]).toEqual({ code: 'SN_SCHEMA', pointer: '/shafts/0/segments/0/lenght', message: '"lenght" is not a field here (misspelt?)' });
    const r = await inject('POST', '/api/solve', text);
    expect(errorOf(r.body).error.issues).toEqual(issues);
  });

  it('answers no issue for a valid model, and a general one for errors it cannot place', () => {
    expect(modelSchemaIssues(cantilever(2))).toEqual([]);
    expect(schemaIssues([{ keyword: 'anyOf', instancePath: '/x' }], { prefix: '/model' })).toEqual([
      { code: 'SN_SCHEMA', pointer: '/model', message: 'does not match the expected format' },
    ]);
  });

  it('reads the error shape of Ajv too', () => {
    expect(
      schemaIssues([
        { keyword: 'required', instancePath: '/a', params: { missingProperty: 'b' } },
        { keyword: 'additionalProperties', instancePath: '', params: { additionalProperty: 'c' } },
      ]),
    ).toEqual([
      { code: 'SN_SCHEMA', pointer: '/a/b', message: 'is required' },
      { code: 'SN_SCHEMA', pointer: '/c', message: '"c" is not a field here (misspelt?)' },
    ]);
  });
});
