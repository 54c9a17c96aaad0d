/**
 * The pass over the combinations by station (`Superposition.combineAll`) against the same
 * combinations evaluated one by one (`evaluate` + `addToEnvelope`, the reference): every number of
 * the envelope, each combination's residual, torque scale and finiteness must agree bit for bit
 * (the same sums in the same order, the first combination winning ties), on seeded random geared,
 * coupled models with and without an assembled state.
 */
import { describe, expect, it } from 'vitest';
import { normaliseModel, withSolved } from '../../server/engine/index.js';
import { columnWeights, emptyEnvelope, finishEnvelope, type CombinedAll, type Envelope } from '../../server/engine/combinations.js';
import { randomModel, Rng } from './random-models.js';

// The tests edit models as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

/** Seeds whose random model has point torques (a load case needs a load). */
function seeds(imposed: boolean): number[] {
  return Array.from({ length: 100 }, (_, k) => k + 1)
    .filter((seed) => ((randomModel(seed, { loops: 'sometimes', imposed, shafts: [1, 6], maxSegments: 5 }) as Json).torques ?? []).length > 0)
    .slice(0, 30);
}

/**
 * A random model with point torques only (so it has spans) spread over three cases, and combinations
 * with random factors, a zero factor, a repeat of an earlier one (a tie) and a negated one.
 */
function spannedModel(seed: number, imposed: boolean): Json {
  const m = randomModel(seed, { loops: 'sometimes', imposed, shafts: [1, 6], maxSegments: 5 }) as Json;
  delete m.distributedTorques;
  delete m.stressRaisers;
  const rng = new Rng(seed * 104729 + 3);
  const torques: Json[] = m.torques ?? [];
  const cases = ['a', 'b', 'c'].slice(0, Math.max(1, Math.min(3, torques.length)));
  torques.forEach((t, n) => (t.case = cases[n < cases.length ? n : rng.int(0, cases.length - 1)]));
  m.loadCases = cases.map((id) => ({ id }));
  const combos: Json[] = [];
  for (let k = 0; k < 24; k++) combos.push({ id: `r${k}`, factors: Object.fromEntries(cases.map((c) => [c, rng.range(-2, 2)])) });
  combos.push({ id: 'zero', factors: { [cases[0]]: 0 } });
  combos.push({ id: 'again', factors: { ...combos[3].factors } });
  combos.push({ id: 'negated', factors: Object.fromEntries(Object.entries(combos[5].factors).map(([c, f]) => [c, -(f as number)])) });
  m.combinations = combos;
  return m;
}

/** Every entry of every array of `a` and `b` the same number (Object.is: −0 and NaN told apart). */
function expectSameBits(a: Record<string, ArrayLike<number>>, b: Record<string, ArrayLike<number>>, what: string): void {
  expect(Object.keys(a).sort(), what).toEqual(Object.keys(b).sort());
  for (const key of Object.keys(a)) {
    const x = Array.from(a[key]);
    const y = Array.from(b[key]);
    expect(x.length, `${what}: ${key}`).toBe(y.length);
    const differ = x.findIndex((v, i) => !Object.is(v, y[i]));
    expect(differ, `${what}: ${key}[${differ}] ${x[differ]} against ${y[differ]}`).toBe(-1);
  }
}

/** The envelope and per-combination numbers by both routes. */
function bothWays(m: Json): { byStation: [Envelope, CombinedAll]; oneByOne: [Envelope, CombinedAll]; spans: boolean } {
  const model = normaliseModel(m);
  return withSolved(model, {}, (sv) => {
    const sup = (sv.cases as NonNullable<typeof sv.cases>).superposition;
    const weights = model.combinations.map(columnWeights);
    const run = (byStation: boolean): [Envelope, CombinedAll] => {
      const env = emptyEnvelope(sup);
      const all = sup.combineAll(weights, env, byStation);
      finishEnvelope(env, sup);
      return [env, all];
    };
    return { byStation: run(true), oneByOne: run(false), spans: sup.spans !== null };
  });
}

describe('the pass by station equals the combinations evaluated one by one, bit for bit', () => {
  for (const imposed of [false, true]) {
    it(`random geared, coupled models ${imposed ? 'with' : 'without'} an assembled state (seeded)`, () => {
      let spanned = 0;
      const list = seeds(imposed);
      expect(list.length).toBe(30);
      for (const seed of list) {
        const { byStation, oneByOne, spans } = bothWays(spannedModel(seed, imposed));
        if (spans) spanned++;
        expectSameBits(byStation[0] as never, oneByOne[0] as never, `seed ${seed}: envelope`);
        expectSameBits(byStation[1] as never, oneByOne[1] as never, `seed ${seed}: per combination`);
      }
      // Without distributed torques, tapers and stress raisers every model has spans (the pass's route).
      expect(spanned).toBe(30);
    });
  }

  it('the governing combinations are spread over the combinations, and the repeated one never governs (the first wins ties)', () => {
    const counts = new Map<number, number>();
    let again = 0;
    for (const seed of seeds(true).slice(0, 10)) {
      const m = spannedModel(seed, true);
      const { byStation } = bothWays(m);
      const env = byStation[0];
      const k = m.combinations.findIndex((c: Json) => c.id === 'again');
      for (const at of [...env.segCombination, ...env.layerCombination, ...env.twistCombination, ...env.reactionMaxAt]) {
        counts.set(at, (counts.get(at) ?? 0) + 1);
        if (at === k) again++;
      }
    }
    expect(counts.size).toBeGreaterThan(5);
    expect(again).toBe(0);
  });
});
