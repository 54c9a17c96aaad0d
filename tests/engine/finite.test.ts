/**
 * Finite answers: a solution holds only finite numbers. Inputs that cannot
 * give one are refused at normalisation, by the physical range of their kind
 * (shared-types/quantity.ts, QUANTITY_RANGE: common practice, no source), with
 * the field's pointer; what can still go wrong in the solve is refused by the
 * guard (server/engine/finite-guard.ts) with SN_ILL_CONDITIONED (422), never
 * answered with NaN or Infinity (which JSON would write as null).
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ERROR_CODES, ModelError, type ErrorCode } from '../../shared-types/errors.js';
import { QUANTITY_RANGE } from '../../shared-types/quantity.js';
import { normaliseModel, solveModel, solveModelJson, solveResolved, withSolved } from '../../server/engine/index.js';
import { assertFiniteResults } from '../../server/engine/finite-guard.js';
import { writeSolutionJson, type Solved } from '../../server/engine/output.js';
import { extremeCase, misplacedNulls, nonFiniteNumbers } from './finite-helpers.js';

const demoText = readFileSync(new URL('../../server/demos/mixer-drive.json', import.meta.url), 'utf8');

// Broken models are built on purpose, so the demo is edited as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

function demo(change: (m: Json) => void = () => {}): Json {
  const m = JSON.parse(demoText) as Json;
  change(m);
  return m;
}

function refusal(run: () => unknown): ModelError {
  try {
    run();
  } catch (e) {
    if (e instanceof ModelError) return e;
    throw e;
  }
  throw new Error('it solved, but a ModelError was expected');
}

/** The distinct (code, pointer) pairs of a refusal, sorted. */
const pairs = (e: ModelError) => [...new Set(e.issues.map((i) => `${i.code} ${i.pointer}`))].sort();

describe('the values that used to come back as null are refused at normalisation, naming the field', () => {
  it.each<[string, (m: Json) => void, string, string]>([
    [
      'a distributed torque end of -1.7976931348623157e308 N·m/m',
      (m) => (m.distributedTorques[0].end = -1.7976931348623157e308),
      '/distributedTorques/0/end',
      'from 1e-12 to 1e12 N*m/m',
    ],
    ['G = "1e-300 Pa"', (m) => (m.materials[0].G = '1e-300 Pa'), '/materials/0/G', 'from 1e3 to 1e13 Pa'],
    ['G = 1e308', (m) => (m.materials[0].G = 1e308), '/materials/0/G', 'from 1e3 to 1e13 Pa'],
    ['a segment length of 1e12 m', (m) => (m.shafts[0].segments[0].length = 1e12), '/shafts/0/segments/0/length', 'from 1e-7 to 1e5 m'],
  ])('%s: 400 SN_OUT_OF_RANGE at its pointer, the range in the message', (_what, change, pointer, range) => {
    const e = refusal(() => solveModel(demo(change)));
    expect(pairs(e)).toEqual([`SN_OUT_OF_RANGE ${pointer}`]);
    expect(e.status).toBe(400);
    expect(e.issues[0].message).toContain(range);
  });

  it('the demo itself solves (the edits above are what is refused)', () => {
    expect(nonFiniteNumbers(solveModel(demo()))).toEqual([]);
  });
});

describe('numbers worked out from others are held to the range of their kind', () => {
  it.each<[string, (m: Json) => void, ErrorCode, string]>([
    // G = E / (2(1 + nu)) = 1e13 / (2 × 1e-7) = 5e19 Pa: nu near −1 is what makes it huge, so nu is named.
    ['G from E = 1e13 Pa and nu = −0.9999999', (m) => ((m.materials[1].E = 1e13), (m.materials[1].nu = -0.9999999)), 'SN_OUT_OF_RANGE', '/materials/1/nu'],
    // G = 1e3 / (2 × 1.49) = 335.6 Pa, below 1 kPa: E is named.
    ['G from E = 1 kPa and nu = 0.49', (m) => ((m.materials[1].E = '1 kPa'), (m.materials[1].nu = 0.49)), 'SN_OUT_OF_RANGE', '/materials/1/E'],
    // r = z m / 2 = 100000 × 100 m / 2 = 5e6 m, beyond 1e5 m.
    [
      'a pitch radius of teeth × module / 2 = 5e6 m',
      (m) => (delete m.gearMeshes[0].a.radius, (m.gearMeshes[0].a.teeth = 100000), (m.gearMeshes[0].module = '100 m')),
      'SN_OUT_OF_RANGE',
      '/gearMeshes/0/a/teeth',
    ],
    // T = P / ω = 1e10 W / 1e-6 rad/s = 1e16 N·m, beyond 1e12 N·m.
    ['a torque of power / speed = 1e16 N·m', (m) => ((m.torques[1].power = 1e10), (m.torques[1].speed = 1e-6)), 'SN_OUT_OF_RANGE', '/torques/1/power'],
    // T = 1e-9 W / 1e6 rad/s = 1e-15 N·m, below 1e-12 N·m.
    ['a torque of power / speed = 1e-15 N·m', (m) => ((m.torques[1].power = 1e-9), (m.torques[1].speed = 1e6)), 'SN_OUT_OF_RANGE', '/torques/1/power'],
  ])('%s', (_what, change, code, pointer) => {
    const e = refusal(() => solveModel(demo(change)));
    expect(pairs(e)).toEqual([`${code} ${pointer}`]);
    expect(e.issues[0].message).toMatch(/outside the physical range/);
  });

  it('derived values inside their ranges solve: G = 1e13 / (2 × 1.49) Pa, r = 100000 × 1 mm / 2 = 50 m, T = 1e10 W / 1e3 rad/s = 1e7 N·m', () => {
    const sol = solveModel(
      demo((m) => {
        m.materials[1].E = 1e13;
        m.materials[1].nu = 0.49;
        delete m.gearMeshes[0].a.radius;
        m.gearMeshes[0].a.teeth = 100000;
        m.gearMeshes[0].module = '1 mm';
        m.torques[1].power = 1e10;
        m.torques[1].speed = 1e3;
      }),
    );
    expect(nonFiniteNumbers(sol)).toEqual([]);
    // r = z m / 2 (pitch diameter = module × teeth).
    expect(sol.gearMeshes[0].radiusA).toBe(50);
  });
});

describe('inputs at the corners of their ranges give finite, normal numbers that match the closed form', () => {
  // A cantilever: one solid segment of length L and diameter d, modulus G, fixed at z = 0, torque T at z = L.
  // Closed forms (Saint-Venant torsion of a solid circle): J = π d⁴ / 32, φ(L) = T L / (G J), τ_max = T (d/2) / J.
  const { length, stress, torque } = QUANTITY_RANGE;
  const corners: Array<[number, number, number, number]> = [];
  for (const L of [length.min, length.max]) {
    for (const d of [length.min, length.max]) {
      for (const G of [stress.min, stress.max]) for (const T of [torque.min, -torque.max]) corners.push([L, d, G, T]);
    }
  }
  const MIN_NORMAL = 2.2250738585072014e-308;

  it.each(corners)('L = %s m, d = %s m, G = %s Pa, T = %s N·m', (L, d, G, T) => {
    const sol = solveModel({
      format: 'shaftnet/1',
      name: 'corner',
      materials: [{ id: 'm', G }],
      sections: [{ id: 's', shape: 'solid', d }],
      shafts: [{ id: 'x', segments: [{ length: L, section: 's', material: 'm' }] }],
      supports: [{ id: 'A', shaft: 'x', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'x', at: L, torque: T }],
    });
    expect(nonFiniteNumbers(sol)).toEqual([]);
    const J = (Math.PI * d ** 4) / 32;
    const end = sol.shafts[0].stations[sol.shafts[0].stations.length - 1];
    // Relative 1e-12: a handful of roundings in each of a few products (eps ≈ 2.2e-16), with room.
    expect(Math.abs(end.rotation - (T * L) / (G * J))).toBeLessThanOrEqual(1e-12 * Math.abs((T * L) / (G * J)));
    expect(Math.abs(sol.shafts[0].segments[0].layers[0].maxShear - (Math.abs(T) * d) / 2 / J)).toBeLessThanOrEqual(1e-12 * ((Math.abs(T) * d) / 2 / J));
    // Every nonzero number of the answer is a normal double (none fell to a subnormal on the way).
    const tiny: string[] = [];
    const walk = (v: unknown, p: string) => {
      if (typeof v === 'number' && v !== 0 && Math.abs(v) < MIN_NORMAL) tiny.push(`${p} = ${v}`);
      else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) walk(x, `${p}/${k}`);
    };
    walk(sol, '');
    expect(tiny).toEqual([]);
  });
});

describe('the guard: a non-finite number after the solve is a 422, never an answer', () => {
  const resolved = normaliseModel(demo());

  /** The ModelError of the guard after `spoil` put a non-finite number into one column of a real solve. */
  function spoilt(spoil: (sv: Solved) => void): ModelError {
    return withSolved(resolved, {}, (sv) => {
      assertFiniteResults(sv); // clean: passes
      spoil(sv);
      return refusal(() => assertFiniteResults(sv));
    });
  }

  it('passes a clean solve', () => {
    expect(withSolved(resolved, {}, (sv) => assertFiniteResults(sv))).toBeUndefined();
  });

  it.each<[string, (sv: Solved) => void, string, string | undefined]>([
    // dof 3 of the demo lies on shaft "input" (shaft 0: its stations come first).
    ['a rotation', (sv) => (sv.rec.phi[3] = Number.NaN), '/shafts/0', 'input'],
    ['the last rotation (on shaft "tail")', (sv) => (sv.rec.phi[sv.rec.phi.length - 1] = Infinity), '/shafts/2', 'tail'],
    ['an element end torque', (sv) => (sv.rec.TL[0] = -Infinity), '/shafts/0', 'input'],
    ['the twist of the first segment of shaft "output"', (sv) => (sv.rec.segTwist[sv.rec.segBase[1]] = Number.NaN), '/shafts/1/segments/0', 'output'],
    ['the peak shear of a layer of the second segment of "input"', (sv) => (sv.rec.layerMaxShear[sv.rec.layerBase[1]] = Infinity), '/shafts/0/segments/1', 'input'],
    ['a diagram torque of shaft "tail"', (sv) => (sv.rec.dT[sv.rec.diagStart[2]] = Number.NaN), '/shafts/2', 'tail'],
    ['the total twist of shaft "output"', (sv) => (sv.rec.totalTwist[1] = Infinity), '/shafts/1', 'output'],
    ['a reaction', (sv) => (sv.rec.reactions[1].torque = Number.NaN), '/supports/1', 'input'],
    ['a mesh force', (sv) => (sv.rec.gearMeshes[0].force = Infinity), '/gearMeshes/0', 'input'],
    ['a coupling twist', (sv) => (sv.rec.couplings[0].twist = Number.NaN), '/couplings/0', 'output'],
  ])('%s', (_what, spoil, pointer, shaft) => {
    const e = spoilt(spoil);
    expect(e.code).toBe('SN_ILL_CONDITIONED');
    expect(e.status).toBe(422);
    expect(ERROR_CODES[e.code].status).toBe(422);
    expect(e.issues).toHaveLength(1);
    expect(e.issues[0].pointer).toBe(pointer);
    expect(e.issues[0].shafts).toEqual(shaft === undefined ? undefined : [shaft]);
    expect(e.issues[0].message).toMatch(/^the solve gave (NaN|-?Infinity) for /);
  });

  it.each<[string, (sv: Solved) => void, RegExp]>([
    ['a natural frequency', (sv) => ((sv.dynamics?.modes[0] as { angularFrequency: number }).angularFrequency = Number.NaN), /for the frequency of mode 1: /],
    ['a mode shape', (sv) => ((sv.dynamics?.modes[1].shafts[0].rotation as Float64Array)[0] = Infinity), /for the shape of mode 2 of shaft "input"/],
    ['a vibratory torque of the forced response', (sv) => ((sv.forced?.torque as Float64Array)[5] = Number.NaN), /for the forced response's vibratory torque/],
    ['a forced-response peak shear', (sv) => ((sv.forced?.peakShear as Float64Array)[0] = -Infinity), /for a forced-response peak shear/],
  ])('with dynamics (the invented demo geared-drive-vibration.json): %s', (_what, spoil, message) => {
    const dyn = normaliseModel(JSON.parse(readFileSync(new URL('../../server/demos/geared-drive-vibration.json', import.meta.url), 'utf8')));
    const e = withSolved(dyn, {}, (sv) => {
      expect(sv.forced).toBeDefined();
      assertFiniteResults(sv); // clean: passes
      spoil(sv);
      return refusal(() => assertFiniteResults(sv));
    });
    expect(e.code).toBe('SN_ILL_CONDITIONED');
    expect(e.issues[0].pointer.startsWith('/dynamics')).toBe(true);
    expect(e.issues[0].message).toMatch(message);
  });

  it('twist rates are walked segment by segment when a peak shear is above 1e300 Pa: one that overflows is named', () => {
    // d = 1 mm and G = 1 kPa: G·J = 1e3 × π (1e-3)⁴ / 32 ≈ 9.8e-11 N·m², so a peak torque of 1e300 N·m gives a rate of 1e310 = Infinity.
    const soft = normaliseModel({
      format: 'shaftnet/1',
      name: 'soft',
      materials: [{ id: 'm', G: 1e3 }],
      sections: [{ id: 's', shape: 'solid', d: 1e-3 }],
      shafts: [{ id: 'x', segments: [{ length: 1, section: 's', material: 'm' }, { length: 1, section: 's', material: 'm' }] }],
      supports: [{ id: 'A', shaft: 'x', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'x', at: 2, torque: 1 }],
    });
    const e = withSolved(soft, {}, (sv) => {
      sv.rec.segMaxAbs[1] = 1e300;
      sv.rec.layerMaxShear[sv.rec.layerBase[1]] = 1e301;
      return refusal(() => assertFiniteResults(sv));
    });
    expect(e.code).toBe('SN_ILL_CONDITIONED');
    expect(e.issues[0].pointer).toBe('/shafts/0/segments/1');
    expect(e.issues[0].message).toMatch(/^the solve gave Infinity for the peak twist rate of segment 1 of shaft "x"/);
  });

  it('a torque past the ranges (put into a resolved model, as normalisation would never let it) is refused with 422, not answered', () => {
    const wild = { ...resolved, torques: resolved.torques.map((t) => ({ ...t, torque: Number.MAX_VALUE })) };
    const e = refusal(() => solveResolved(wild));
    expect(e.code).toBe('SN_ILL_CONDITIONED');
    expect(e.status).toBe(422);
    expect(e.issues[0].message).toMatch(/^the solve gave (NaN|-?Infinity) for /);
    expect(e.issues[0].pointer.startsWith('/')).toBe(true);
    // The JSON writer is reached through the same gate: nothing is written.
    let written = '';
    const again = refusal(() => withSolved(wild, {}, (sv) => writeSolutionJson(sv, (piece) => (written += piece))));
    expect(again.code).toBe('SN_ILL_CONDITIONED');
    expect(written).toBe('');
  });
});

describe('property: every number in every answer is finite, for extreme inputs (seeded)', () => {
  it('models with extreme quantities are solved with finite numbers only, or refused with a 400/422 that names a field', () => {
    const outcome = new Map<string, number>();
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 31 - 1 }), (seed) => {
        const model = extremeCase(seed);
        let text = '';
        try {
          solveModelJson(model, (piece) => (text += piece));
        } catch (e) {
          if (!(e instanceof ModelError)) throw e;
          outcome.set(e.code, (outcome.get(e.code) ?? 0) + 1);
          expect([400, 422]).toContain(e.status);
          for (const issue of e.issues) {
            expect(issue.pointer === '' || issue.pointer.startsWith('/'), JSON.stringify(issue)).toBe(true);
            expect(issue.pointer !== '' || (issue.shafts?.length ?? 0) > 0 || (issue.connections?.length ?? 0) > 0, JSON.stringify(issue)).toBe(true);
          }
          return;
        }
        outcome.set('solved', (outcome.get('solved') ?? 0) + 1);
        const parsed = JSON.parse(text) as unknown;
        expect(misplacedNulls(parsed), `seed ${seed}`).toEqual([]);
        expect(nonFiniteNumbers(solveModel(model)), `seed ${seed}`).toEqual([]);
      }),
      { seed: 20261202, numRuns: 600 },
    );
    // The cases reach both sides: many solve, many are refused by range.
    expect(outcome.get('solved') ?? 0).toBeGreaterThan(120);
    expect(outcome.get('SN_OUT_OF_RANGE') ?? 0).toBeGreaterThan(120);
  });
});
