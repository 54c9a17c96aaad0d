/**
 * Fuzz run: many seeded solves of models with extreme quantities, counting
 * the answers by class (2xx, 4xx, 5xx) and every null where the solution
 * format wants a number (a NaN or Infinity that escaped: JSON writes them as
 * null). A figure for the closing note of the finite-answer work, not a test.
 *
 *   npm run fuzz                               100,000 solves through the HTTP app (app.inject, in-process)
 *   npm run fuzz -- --solves 20000 --seed 7    fewer, from another seed
 *   npm run fuzz -- --engine                   through the engine and its JSON writer directly
 *
 * Case k is `extremeCase(seed + k)` (tests/engine/finite-helpers.ts): a shipped
 * demo or a random valid system, left valid one time in five, otherwise with
 * one to three quantities made extreme (at, just beyond or far beyond the ends
 * of their physical range, special doubles, in random units). Any case it
 * prints can be replayed with `extremeCase(seed)`.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { buildApp } from '../../server/http/app.js';
import { openSqliteStore } from '../../server/store/sqlite-store.js';
import { solveModelJson } from '../../server/engine/index.js';
import { ERROR_CODES, ModelError } from '../../shared-types/errors.js';
import { extremeCase, misplacedNulls } from '../engine/finite-helpers.js';
import { calibrationLine } from './calibrate.js';

function option(name: string, fallback: number): number {
  const i = process.argv.indexOf(name);
  if (i < 0) return fallback;
  const v = Number(process.argv[i + 1]);
  if (!Number.isInteger(v) || v < 1) throw new Error(`${name} needs a positive whole number`);
  return v;
}

/** What one solve answered: its HTTP status, the error code (if any) and the body text. */
interface Answer {
  status: number;
  code: string;
  body: string;
}

async function main(): Promise<void> {
  const solves = option('--solves', 100_000);
  const seed = option('--seed', 1);
  const viaEngine = process.argv.includes('--engine');
  console.log(`Fuzz run (node ${process.version}): ${solves} solves from seed ${seed}, through ${viaEngine ? 'the engine and its JSON writer' : 'the HTTP app (app.inject)'}`);
  console.log(calibrationLine());

  let answer: (model: unknown) => Promise<Answer>;
  let close = async () => {};
  if (viaEngine) {
    answer = async (model) => {
      let body = '';
      try {
        solveModelJson(model, (piece) => (body += piece));
        return { status: 200, code: '', body };
      } catch (e) {
        if (e instanceof ModelError) return { status: e.status, code: e.code, body: JSON.stringify({ error: { code: e.code, issues: e.issues } }) };
        return { status: 500, code: 'SN_INTERNAL', body: String(e instanceof Error ? e.stack : e) };
      }
    };
  } else {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'shaftnet-fuzz-'));
    const store = openSqliteStore(dir);
    const app = await buildApp({ store, seedDemos: false, rateLimitPerMinute: 0 });
    await app.ready();
    answer = async (model) => {
      const r = await app.inject({ method: 'POST', url: '/api/solve', payload: JSON.stringify(model), headers: { 'content-type': 'application/json' } });
      let code = '';
      if (r.statusCode >= 400) code = (JSON.parse(r.body) as { error?: { code?: string } }).error?.code ?? '(none)';
      return { status: r.statusCode, code, body: r.body };
    };
    close = async () => {
      await app.close();
      store.close();
      fs.rmSync(dir, { recursive: true, force: true });
    };
  }

  const byClass = new Map<string, number>();
  const byCode = new Map<string, number>();
  let nullAnswers = 0;
  let nullNumbers = 0;
  let unknownCodes = 0;
  let byGuard = 0;
  const examples: string[] = [];
  const t0 = performance.now();
  for (let k = 0; k < solves; k++) {
    const caseSeed = seed + k;
    const model = extremeCase(caseSeed);
    const a = await answer(model);
    const cls = `${Math.floor(a.status / 100)}xx`;
    byClass.set(cls, (byClass.get(cls) ?? 0) + 1);
    if (a.code !== '') {
      byCode.set(a.code, (byCode.get(a.code) ?? 0) + 1);
      if (!(a.code in ERROR_CODES)) unknownCodes++;
      // The finite guard's refusals (server/engine/finite-guard.ts) say what the solve gave.
      if (a.code === 'SN_ILL_CONDITIONED' && a.body.includes('the solve gave')) {
        byGuard++;
        if (examples.length < 10) examples.push(`seed ${caseSeed}: refused by the finite guard: ${a.body.slice(0, 300)}`);
      }
    }
    if (a.status >= 500 && examples.length < 10) examples.push(`seed ${caseSeed}: ${a.status} ${a.body.slice(0, 300)}`);
    if (a.status === 200) {
      const nulls = misplacedNulls(JSON.parse(a.body));
      if (nulls.length > 0) {
        nullAnswers++;
        nullNumbers += nulls.length;
        if (examples.length < 10) examples.push(`seed ${caseSeed}: null at ${nulls.slice(0, 3).join(', ')}`);
      }
    }
    if ((k + 1) % 10_000 === 0) console.log(`  ${k + 1} solves, ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  }
  const seconds = (performance.now() - t0) / 1000;
  await close();

  console.log(`solves: ${solves} in ${seconds.toFixed(1)} s (${(solves / seconds).toFixed(0)} per second, model generation included)`);
  console.log(`answers: ${['2xx', '4xx', '5xx'].map((c) => `${c} ${byClass.get(c) ?? 0}`).join(', ')}${[...byClass.keys()].some((c) => !['2xx', '4xx', '5xx'].includes(c)) ? ` (other: ${JSON.stringify([...byClass])})` : ''}`);
  console.log(`null numbers: ${nullNumbers} in ${nullAnswers} answers of 200`);
  console.log(`error codes: ${[...byCode].sort((x, y) => y[1] - x[1]).map(([c, n]) => `${c} ${n}`).join(', ')}`);
  console.log(`refused by the finite guard after the solve (SN_ILL_CONDITIONED, "the solve gave ..."): ${byGuard}`);
  if (unknownCodes > 0) console.log(`codes not in the registry: ${unknownCodes}`);
  for (const e of examples) console.log(`  ${e}`);
  if ((byClass.get('5xx') ?? 0) > 0 || nullNumbers > 0 || unknownCodes > 0) process.exitCode = 1;
}

await main();
