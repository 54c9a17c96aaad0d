/**
 * Load cases and combinations. The engine is linear in the loads and in the
 * assembled state (prescribed rotations, misfits, mesh offsets), so every
 * combination must equal the factored sum of its cases solved alone plus the
 * assembled state solved alone (closed form: superposition), and the shown
 * combination must equal a plain model carrying the factored loads. The
 * envelope must equal the extremes over the combinations. A model without
 * load cases must answer byte for byte as before load cases existed.
 */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { ModelError, type ErrorCode } from '../../shared-types/errors.js';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import { solveModel, solveModelJson } from '../../server/engine/index.js';
import { randomModel, Rng } from './random-models.js';
import { fixedFixedChain } from '../helpers/long-chain.js';

// The tests edit models as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const CASES = ['dead', 'run', 'jam'];

/** A random geared, coupled model with its loads spread over three cases, and four combinations. */
function casedModel(seed: number): Json {
  const m = randomModel(seed, { loops: 'sometimes' }) as Json;
  const rng = new Rng(seed * 7919 + 1);
  const loads = [...(m.torques ?? []), ...(m.distributedTorques ?? [])];
  // Every case gets a load (the first three loads one each), the rest at random.
  loads.forEach((l: Json, n: number) => (l.case = n < CASES.length ? CASES[n] : CASES[rng.int(0, CASES.length - 1)]));
  const used = CASES.filter((c) => loads.some((l: Json) => l.case === c));
  m.loadCases = used.map((id) => ({ id, name: `case ${id}` }));
  m.combinations = [
    { id: 'service', factors: Object.fromEntries(used.map((c) => [c, 1])) },
    { id: 'peak', name: 'Peak', factors: Object.fromEntries(used.map((c, k) => [c, 1.35 - 0.2 * k])) },
    { id: 'reverse', factors: Object.fromEntries(used.map((c, k) => [c, k % 2 === 0 ? -0.7 : 2.5])) },
    { id: 'single', factors: { [used[used.length - 1]]: rng.range(0.5, 3) } },
  ];
  return m;
}

/** The model with only the loads of `keep` (a case id; null: none), the assembled state kept or dropped; no load cases. */
function plainPart(m: Json, keep: string | null, assembled: boolean): Json {
  const p = structuredClone(m);
  delete p.loadCases;
  delete p.combinations;
  p.torques = (p.torques ?? []).filter((t: Json) => t.case === keep);
  p.distributedTorques = (p.distributedTorques ?? []).filter((t: Json) => t.case === keep);
  for (const l of [...p.torques, ...p.distributedTorques]) delete l.case;
  if (!assembled) {
    for (const s of p.supports ?? []) delete s.rotation;
    for (const c of p.couplings ?? []) delete c.misfit;
    for (const g of p.gearMeshes ?? []) delete g.offset;
  }
  return p;
}

/** The model with every load times its case's factor in combination `c`, as a plain model (no load cases). */
function factoredPlain(m: Json, c: Json): Json {
  const p = structuredClone(m);
  delete p.loadCases;
  delete p.combinations;
  for (const t of p.torques ?? []) {
    const f = c.factors[t.case] ?? 0;
    delete t.case;
    if (t.torque !== undefined) t.torque = f * t.torque;
    else t.power = f * t.power; // torque = power / speed: linear in the power
  }
  for (const d of p.distributedTorques ?? []) {
    const f = c.factors[d.case] ?? 0;
    delete d.case;
    d.start = f * d.start;
    d.end = f * d.end;
  }
  return p;
}

/** |a − b| ≤ 1e-12 of the scale, elementwise. */
function expectClose(a: number[], b: number[], scale: number, what: string): void {
  expect(a.length, what).toBe(b.length);
  a.forEach((x, i) => {
    if (Math.abs(x - b[i]) > 1e-12 * scale) throw new Error(`${what}[${i}]: ${x} vs ${b[i]} (scale ${scale})`);
  });
}

const maxAbs = (...lists: number[][]) => Math.max(1e-300, ...lists.flat().map(Math.abs));
const SEEDS = Array.from({ length: 24 }, (_, k) => 101 + k);

describe('superposition over load cases (linearity: closed form)', () => {
  it.each(SEEDS)('seed %i: every combination is the assembled state plus the factored sum of its cases, to 1e-12', (seed) => {
    const m = casedModel(seed);
    const sol = solveModel(m);
    const assembled = solveModel(plainPart(m, null, true));
    const cases = new Map<string, Solution>(m.loadCases.map((c: Json) => [c.id, solveModel(plainPart(m, c.id, false))]));
    expect(sol.combinations?.map((c) => c.id)).toEqual(m.combinations.map((c: Json) => c.id));
    for (const [k, cmb] of (sol.combinations ?? []).entries()) {
      const factors: Record<string, number> = m.combinations[k].factors;
      const sum = (pick: (s: Solution) => number[]) => {
        const out = pick(assembled).slice();
        for (const [id, f] of Object.entries(factors)) pick(cases.get(id) as Solution).forEach((x, i) => (out[i] += f * x));
        return out;
      };
      // Round-off scales: the largest torque and rotation of any part times the largest factor.
      const parts = [assembled, ...cases.values()];
      const fmax = Math.max(1, ...Object.values(factors).map(Math.abs));
      const torqueScale = fmax * maxAbs(...parts.map((s) => [...s.reactions.map((r) => r.torque), ...s.shafts.flatMap((sh) => sh.segments.map((g) => g.maxAbsTorque))]));
      const rotationScale = fmax * maxAbs(...parts.map((s) => s.shafts.flatMap((sh) => sh.stations.map((st) => st.rotation))));
      const check = (what: string, got: number[], pick: (s: Solution) => number[], scale: number) => expectClose(got, sum(pick), scale, `${cmb.id} ${what}`);
      check('reactions', cmb.reactions.map((r) => r.torque), (s) => s.reactions.map((r) => r.torque), torqueScale);
      check('mesh torques', cmb.gearMeshes.flatMap((g) => [g.torqueA, g.torqueB]), (s) => s.gearMeshes.flatMap((g) => [g.torqueA, g.torqueB]), torqueScale);
      // A mesh force is its torque on gear a over that gear's radius.
      const radii = assembled.gearMeshes.map((g) => g.radiusA);
      check('mesh forces', cmb.gearMeshes.map((g) => g.force), (s) => s.gearMeshes.map((g) => g.force), torqueScale / Math.min(Infinity, ...radii));
      check('coupling torques', cmb.couplings.flatMap((c) => [c.torqueA, c.torqueB]), (s) => s.couplings.flatMap((c) => [c.torqueA, c.torqueB]), torqueScale);
      check('segment twists', cmb.segments.map((g) => g.twist), (s) => s.shafts.flatMap((sh) => sh.segments.map((g) => g.twist)), rotationScale);
      expect(cmb.equilibrium.maxResidual).toBeLessThanOrEqual(1e-9 * maxAbs(cmb.segments.map((g) => g.maxAbsTorque)));
    }
  });

  it.each(SEEDS.slice(0, 12))('seed %i: the shown combination equals a plain model with the factored loads, field by field', (seed) => {
    const m = casedModel(seed);
    for (const c of m.combinations) {
      const sol = solveModel(m, { combination: c.id });
      const plain = solveModel(factoredPlain(m, c));
      expect(sol.combination).toBe(c.id);
      const scale = maxAbs(plain.shafts.flatMap((s) => s.segments.map((g) => g.maxAbsTorque)), plain.reactions.map((r) => r.torque));
      const rot = maxAbs(plain.shafts.flatMap((s) => s.stations.map((st) => st.rotation)));
      expectClose(sol.reactions.map((r) => r.torque), plain.reactions.map((r) => r.torque), scale, 'reactions');
      expectClose(
        sol.shafts.flatMap((s) => s.stations.flatMap((st) => [st.torqueLeft ?? 0, st.torqueRight ?? 0])),
        plain.shafts.flatMap((s) => s.stations.flatMap((st) => [st.torqueLeft ?? 0, st.torqueRight ?? 0])),
        scale,
        'station torques',
      );
      expectClose(sol.shafts.flatMap((s) => s.stations.map((st) => st.rotation)), plain.shafts.flatMap((s) => s.stations.map((st) => st.rotation)), rot, 'rotations');
      expectClose(sol.shafts.flatMap((s) => s.segments.map((g) => g.maxAbsTorque)), plain.shafts.flatMap((s) => s.segments.map((g) => g.maxAbsTorque)), scale, 'segment peaks');
      const shear = (s: Solution) => s.shafts.flatMap((sh) => sh.segments.flatMap((g) => g.layers.map((l) => l.maxShear)));
      expectClose(shear(sol), shear(plain), maxAbs(shear(plain)), 'layer stresses');
      // The per-combination summary (from the superposed columns) says the same as the top level (its own solve), to round-off.
      const mine = sol.combinations?.find((x) => x.id === c.id);
      if (!mine) throw new Error(`no combination ${c.id}`);
      const key = (k: Solution['checks'][number]) => `${k.kind} ${k.shaft} ${k.segment ?? ''} ${k.layer ?? ''} ${k.raiser ?? ''}`;
      const byKey = (list: Solution['checks']) => [...list].sort((x, y) => (key(x) < key(y) ? -1 : key(x) > key(y) ? 1 : 0));
      expect(byKey(mine.checks).map(key)).toEqual(byKey(sol.checks).map(key));
      // Utilisations to round-off of the largest of the model (any combination's).
      const utilScale = maxAbs((sol.combinations ?? []).flatMap((x) => x.checks.map((k) => k.utilisation)));
      expectClose(byKey(mine.checks).map((k) => k.utilisation), byKey(sol.checks).map((k) => k.utilisation), utilScale, 'check utilisations');
      expect(mine.reactions.map((r) => r.support)).toEqual(sol.reactions.map((r) => r.support));
      expectClose(mine.reactions.map((r) => r.torque), sol.reactions.map((r) => r.torque), scale, 'summary reactions');
      expectClose(mine.segments.map((g) => g.maxAbsTorque), sol.shafts.flatMap((s) => s.segments.map((g) => g.maxAbsTorque)), scale, 'summary segment peaks');
      expectClose(mine.segments.map((g) => g.twist), sol.shafts.flatMap((s) => s.segments.map((g) => g.twist)), rot, 'summary segment twists');
      expect(mine.equilibrium.maxResidual).toBeLessThanOrEqual(1e-9 * scale);
    }
  });
});

describe('the envelope is the extremes over the combinations', () => {
  it.each(SEEDS.slice(0, 8))('seed %i', (seed) => {
    const m = casedModel(seed);
    const shown = m.combinations.map((c: Json) => solveModel(m, { combination: c.id }));
    const sol = shown[0] as Solution;
    const env = sol.envelope;
    const combos = sol.combinations;
    if (!env || !combos) throw new Error('no envelope');
    const ids: string[] = m.combinations.map((c: Json) => c.id);
    // Round-off scales of the solves one by one against the superposed columns.
    const scale = maxAbs(...shown.map((s: Solution) => [...s.reactions.map((r) => r.torque), ...s.shafts.flatMap((sh) => sh.segments.map((g) => g.maxAbsTorque))]));
    const rot = maxAbs(...shown.map((s: Solution) => s.shafts.flatMap((sh) => sh.stations.map((st) => st.rotation))));
    // Reactions: exactly the extremes of the combinations' own lists, with the combination that attains each;
    // and those lists are the separately shown solves to 1e-12 (superposition).
    env.reactions.forEach((r, n) => {
      const values = combos.map((c) => c.reactions[n].torque);
      expectClose(values, shown.map((s: Solution) => s.reactions[n].torque), scale, 'reactions');
      expect(r.min).toBe(Math.min(...values));
      expect(r.max).toBe(Math.max(...values));
      expect(values[ids.indexOf(r.minCombination)]).toBe(r.min);
      expect(values[ids.indexOf(r.maxCombination)]).toBe(r.max);
    });
    env.shafts.forEach((sh, s) => {
      const st = (k: number) => (shown[k] as Solution).shafts[s].stations;
      const ext = (pick: (x: Solution['shafts'][number]['stations'][number]) => number | null, f: (...v: number[]) => number) =>
        st(0).map((_, d) => {
          const v = shown.map((_x: Solution, k: number) => pick(st(k)[d]));
          return v[0] === null ? null : f(...(v as number[]));
        });
      const close = (got: Array<number | null>, want: Array<number | null>, sc: number, what: string) => {
        expect(got.map((x) => x === null)).toEqual(want.map((x) => x === null));
        expectClose(got.map((x) => x ?? 0), want.map((x) => x ?? 0), sc, what);
      };
      expect(sh.stations.z).toEqual(st(0).map((x) => x.z));
      close(sh.stations.torqueLeftMin, ext((x) => x.torqueLeft, Math.min), scale, 'T(z−) min');
      close(sh.stations.torqueLeftMax, ext((x) => x.torqueLeft, Math.max), scale, 'T(z−) max');
      close(sh.stations.torqueRightMin, ext((x) => x.torqueRight, Math.min), scale, 'T(z+) min');
      close(sh.stations.torqueRightMax, ext((x) => x.torqueRight, Math.max), scale, 'T(z+) max');
      close(sh.stations.rotationMin, ext((x) => x.rotation, Math.min), rot, 'rotation min');
      close(sh.stations.rotationMax, ext((x) => x.rotation, Math.max), rot, 'rotation max');
      sh.segments.forEach((g, k) => {
        const mineOf = (c: (typeof combos)[number]) => c.segments.find((x) => x.shaft === sh.id && x.index === k);
        const peaks = combos.map((c) => mineOf(c)?.maxAbsTorque ?? NaN);
        expectClose(peaks, shown.map((x: Solution) => x.shafts[s].segments[k].maxAbsTorque), scale, 'segment peaks');
        expect(g.maxAbsTorque).toBe(Math.max(...peaks));
        expect(peaks[ids.indexOf(g.combination)]).toBe(g.maxAbsTorque);
        g.layers.forEach((l, j) => {
          const taus = combos.map((c) => mineOf(c)?.layers[j].maxShear ?? NaN);
          // Round-off of τ is that of T times the layer's τ per unit torque (read where T is not zero).
          const perTorque = Math.max(0, ...shown.map((x: Solution) => x.shafts[s].segments[k]).filter((x: Json) => x.maxAbsTorque > 0).map((x: Json) => x.layers[j].maxShear / x.maxAbsTorque));
          expectClose(taus, shown.map((x: Solution) => x.shafts[s].segments[k].layers[j].maxShear), scale * perTorque, 'layer stresses');
          expect(l.maxShear).toBe(Math.max(...taus));
          expect(taus[ids.indexOf(l.combination)]).toBe(l.maxShear);
          const allowable = (shown[0] as Solution).shafts[s].segments[k].layers[j].allowableShear;
          expect(l.utilisation).toBe(allowable === null ? null : l.maxShear / allowable);
        });
      });
    });
    // The JSON text writer says the same as the object writer.
    let text = '';
    solveModelJson(m, (t) => (text += t), { combination: ids[2] });
    expect(text).toBe(JSON.stringify(solveModel(m, { combination: ids[2] })));
  });
});

describe('without combinations each case is solved alone; without load cases nothing changes', () => {
  it('each load case is its own combination with factor 1, named by the case', () => {
    const m = casedModel(7);
    delete m.combinations;
    const sol = solveModel(m);
    expect(sol.combinations?.map((c) => [c.id, c.name])).toEqual(m.loadCases.map((c: Json) => [c.id, c.name]));
    expect(sol.combination).toBe(m.loadCases[0].id);
  });

  // SHA-256 of JSON.stringify(solveModel(randomModel(seed))) written by commit 3a83713, before load
  // cases existed (computed once from that commit's tree; a model without load cases must not change).
  const BEFORE: Record<number, string> = {
    1: '4959bdc8e7374a81834258bcb335a20271029b977338c5e6598e5b1c982d6ebf',
    2: 'a49ecf84cf0107abbc7413f059d9ac83864da000490c80a9bbfc0205cc4d7ec3',
    3: '05927c29b666bcbb1935c6e70deba3c5f574d731ec7ccd88b6d979dfcb4ff965',
    4: 'd3eece6e714b627f9cc70b7f55814fbfe0b4c70649e51a54a90101007dd8b368',
    5: '03089da05380db0acacee380f14183772b57bff32adb9698f2f0978060b4f375',
    6: 'e366ba34939812ce2ff500e1d5efb3a0d2c3a5ea3dbdecf2e33ac64aaba4e340',
    7: 'e76a338522d4c770de698b6841987a0d3dbdf4b621232b0b37e98a68aae9a09b',
    8: '894ffd80590e1b37b637ab86b3b76c8118b4bef0dbc3940343c117e3055961d1',
  };
  it.each(Object.keys(BEFORE).map(Number))('seed %i: byte for byte the answer of before', (seed) => {
    const sol = solveModel(randomModel(seed));
    expect(sol.combination).toBeUndefined();
    expect(sol.combinations).toBeUndefined();
    expect(sol.envelope).toBeUndefined();
    expect(createHash('sha256').update(JSON.stringify(sol)).digest('hex')).toBe(BEFORE[seed]);
  });
});

/** A small model with two cases, edited by `change`. */
function small(change: (m: Json) => void = () => {}): Model {
  const m: Json = {
    format: 'shaftnet/1',
    name: 'cases',
    materials: [{ id: 'st', G: 80e9 }],
    sections: [{ id: 's', shape: 'solid', d: 0.05 }],
    shafts: [{ id: 'a', segments: [{ length: 1, section: 's', material: 'st' }] }],
    supports: [{ id: 'L', shaft: 'a', at: 0, kind: 'fixed' }],
    loadCases: [{ id: 'run' }, { id: 'jam' }],
    torques: [{ id: 't1', case: 'run', shaft: 'a', at: 0.5, torque: 100 }],
    distributedTorques: [{ id: 'd1', case: 'jam', shaft: 'a', from: 0, to: 1, start: 10, end: 10 }],
    combinations: [{ id: 'c1', factors: { run: 1, jam: 2 } }],
  };
  change(m);
  return m;
}

function issues(model: unknown, options = {}): Array<[ErrorCode, string]> {
  try {
    solveModel(model, options);
  } catch (e) {
    if (e instanceof ModelError) return e.issues.map((i) => [i.code, i.pointer]);
    throw e;
  }
  throw new Error('the model solved, but a ModelError was expected');
}

describe('bad load cases and combinations are refused with the field named', () => {
  it('the small model solves: a cantilever carries 100 + 2·10·1 N·m at its root (statics, closed form)', () => {
    expect(solveModel(small()).reactions[0].torque).toBeCloseTo(-120, 9);
  });
  it('a load without case in a model with load cases', () => {
    expect(issues(small((m) => delete m.torques[0].case))).toEqual([['SN_LOAD_CASE', '/torques/0/case']]);
    expect(issues(small((m) => delete m.distributedTorques[0].case))).toEqual([['SN_LOAD_CASE', '/distributedTorques/0/case']]);
  });
  it('a case without load cases, and combinations without load cases', () => {
    expect(issues(small((m) => (delete m.loadCases, delete m.combinations)))).toEqual([
      ['SN_LOAD_CASE', '/torques/0/case'],
      ['SN_LOAD_CASE', '/distributedTorques/0/case'],
    ]);
    expect(
      issues(
        small((m) => {
          delete m.loadCases;
          delete m.torques[0].case;
          delete m.distributedTorques[0].case;
        }),
      ),
    ).toEqual([['SN_LOAD_CASE', '/combinations']]);
  });
  it('a load naming an unknown case', () => {
    expect(issues(small((m) => (m.torques[0].case = 'wind')))).toEqual([['SN_UNRESOLVED', '/torques/0/case']]);
  });
  it('a load case with no loads', () => {
    expect(issues(small((m) => m.loadCases.push({ id: 'idle' })))).toEqual([['SN_LOAD_CASE', '/loadCases/2']]);
  });
  it('a combination naming an unknown case, with a pointer-escaped key', () => {
    expect(issues(small((m) => (m.combinations[0].factors['w/n~d'] = 1)))).toEqual([['SN_UNRESOLVED', '/combinations/0/factors/w~1n~0d']]);
  });
  it('a non-finite factor', () => {
    expect(issues(small((m) => (m.combinations[0].factors.jam = Number.POSITIVE_INFINITY)))).toEqual([['SN_NOT_FINITE', '/combinations/0/factors/jam']]);
    expect(issues(small((m) => (m.combinations[0].factors.jam = Number.NaN)))).toEqual([['SN_NOT_FINITE', '/combinations/0/factors/jam']]);
  });
  it('duplicate ids of load cases and combinations', () => {
    expect(issues(small((m) => m.combinations.push({ id: 'c1', factors: {} })))).toEqual([['SN_DUPLICATE_ID', '/combinations/1/id']]);
    expect(issues(small((m) => m.loadCases.push({ id: 'run' })))).toEqual([['SN_DUPLICATE_ID', '/loadCases/2/id']]);
  });
  it('a factor that makes a load beyond its physical range is refused before the solve: SN_OUT_OF_RANGE at the factor', () => {
    // 1e306 × 100 N·m would give τ ≈ 4e312 Pa at the root of a 50 mm shaft, beyond 1.8e308; the torque range ends at 1e12 N·m.
    expect(issues(small((m) => m.combinations.push({ id: 'c2', factors: { run: 1e306 } })))).toEqual([['SN_OUT_OF_RANGE', '/combinations/1/factors/run']]);
    // 1e11 × 100 N·m = 1e13 N·m: past the range (1e12 N·m), not yet past double range.
    expect(issues(small((m) => (m.combinations[0].factors.run = -1e11)))).toEqual([['SN_OUT_OF_RANGE', '/combinations/0/factors/run']]);
    // The distributed torque of case "jam" (10 N·m/m) times 1e12 = 1e13 N·m/m: past its range (1e12 N·m/m).
    expect(issues(small((m) => (m.combinations[0].factors.jam = 1e12)))).toEqual([['SN_OUT_OF_RANGE', '/combinations/0/factors/jam']]);
    // Up to the range's end it solves: 1e10 × 100 N·m = 1e12 N·m.
    expect(() => solveModel(small((m) => (m.combinations[0].factors.run = 1e10)))).not.toThrow();
  });
  it('an unknown combination to show: SN_UNRESOLVED at the root, naming the ones there are', () => {
    try {
      solveModel(small(), { combination: 'nope' });
      throw new Error('solved');
    } catch (e) {
      if (!(e instanceof ModelError)) throw e;
      expect(e.issues.map((i) => [i.code, i.pointer])).toEqual([['SN_UNRESOLVED', '']]);
      expect(e.issues[0].message).toContain('"c1"');
    }
  });
});

describe('many combinations: each item listed under the combination that governs it', () => {
  /** A fixed–fixed chain of 60 segments with allowables, three cases of point torques and `n` seeded combinations (invented). */
  function manyCombinations(n: number): Json {
    const rng = new Rng(4242);
    const segments = Array.from({ length: 60 }, (_, k) => ({ length: 0.05, section: k % 3 ? 'a' : 'b', material: 'steel' }));
    const torques = Array.from({ length: 30 }, (_, k) => ({ id: `t${k}`, case: CASES[k % 3], shaft: 's', at: 0.1 * k + 0.025, torque: rng.range(-500, 500) }));
    return fixedFixedChain('Many combinations (invented)', segments, 3, {
      torques,
      loadCases: CASES.map((id) => ({ id })),
      combinations: Array.from({ length: n }, (_, k) => ({ id: `k${k}`, factors: Object.fromEntries(CASES.map((c) => [c, rng.range(-1.5, 1.5)])) })),
    });
  }

  it('2,000 combinations × 60 segments (over 100,000 items): abridged, every listed number that of its combination', () => {
    const m = manyCombinations(2000);
    const sol = solveModel(m);
    const combos = sol.combinations ?? [];
    const env = sol.envelope;
    if (!env) throw new Error('no envelope');
    expect(sol.warnings.map((w) => w.code)).toContain('SN_COMBINATIONS_ABRIDGED');
    expect(combos).toHaveLength(2000);
    // Every combination keeps all its reactions; the segments are split among the combinations that govern them.
    for (const c of combos) expect(c.reactions.map((r) => r.support)).toEqual(['A', 'B']);
    const listed = combos.flatMap((c) => c.segments.map((g) => ({ c: c.id, g })));
    const segs = env.shafts[0].segments;
    expect(new Set(listed.map((x) => x.g.index)).size).toBe(segs.length);
    for (const g of segs) {
      const mine = listed.filter((x) => x.g.index === g.index);
      // Uniform segments: the combination of the peak |T| is that of the stress; listed once.
      expect(mine.map((x) => x.c)).toEqual([g.combination]);
      expect(mine[0].g.maxAbsTorque).toBe(g.maxAbsTorque);
      expect(mine[0].g.layers[0].maxShear).toBe(g.layers[0].maxShear);
    }
    // Each shear check once, under the combination of its layer's envelope, with the envelope's utilisation.
    const checks = combos.flatMap((c) => c.checks.map((k) => ({ c: c.id, k })));
    expect(checks).toHaveLength(segs.length);
    for (const { c, k } of checks) {
      const g = segs[k.segment as number];
      expect(c).toBe(g.layers[0].combination);
      expect(k.utilisation).toBe(g.layers[0].utilisation);
    }
    // Spot checks against the combination solved and shown on its own (its own right-hand side): to 1e-12.
    for (const id of ['k0', 'k777', 'k1999', listed[0].c]) {
      const alone = solveModel(m, { combination: id });
      const scale = maxAbs(alone.shafts[0].segments.map((g) => g.maxAbsTorque), alone.reactions.map((r) => r.torque));
      const mine = combos.find((c) => c.id === id) as NonNullable<Solution['combinations']>[number];
      expectClose(mine.reactions.map((r) => r.torque), alone.reactions.map((r) => r.torque), scale, `${id} reactions`);
      expectClose(mine.segments.map((g) => g.maxAbsTorque), mine.segments.map((g) => alone.shafts[0].segments[g.index].maxAbsTorque), scale, `${id} segment peaks`);
      expectClose(mine.segments.map((g) => g.twist), mine.segments.map((g) => alone.shafts[0].segments[g.index].twist), maxAbs(alone.shafts[0].stations.map((s) => s.rotation)), `${id} twists`);
    }
    // The JSON text writer says the same as the object writer.
    let text = '';
    solveModelJson(m, (t) => (text += t));
    expect(text).toBe(JSON.stringify(sol));
  });

  it('50 combinations of the same model (3,000 items): every item of every combination, no warning', () => {
    const sol = solveModel(manyCombinations(50));
    expect(sol.warnings.map((w) => w.code)).not.toContain('SN_COMBINATIONS_ABRIDGED');
    for (const c of sol.combinations ?? []) {
      expect(c.segments).toHaveLength(60);
      expect(c.checks).toHaveLength(60);
    }
  });
});
