/**
 * Property tests of the overload factors on seeded random shaft systems (random-models.ts: gears,
 * couplings, springs, layered sections, distributed torques, loops). Each property is checked by
 * independent elastic solves or by the lower-bound theorem's own logic, not by the overload code.
 *
 * Tolerances: 1e-9 relative for the elastic re-solve (round-off on well-conditioned systems of a
 * few dozen unknowns); 1e-6 relative where an LP optimum is compared (HiGHS's default primal and
 * dual feasibility tolerance is 1e-7 on the scaled problem). Common practice, no source.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { Model } from '../../shared-types/model.js';
import type { Solution } from '../../shared-types/solution.js';
import { loadLpSolver, solveModel, type LpSolver } from '../../server/engine/index.js';
import { COLLAPSE_ALL_UP_TO, COLLAPSE_FEWEST } from '../../server/engine/overload.js';
import { randomModel } from './random-models.js';

let lp: LpSolver;
beforeAll(async () => {
  lp = await loadLpSolver();
});

const seeds = Array.from({ length: 25 }, (_, i) => 7100 + i);

/** The model with a shear yield stress on every material: 150 … 400 MPa by index. */
function withYield(m: Model): Model {
  return { ...m, materials: m.materials.map((x, i) => ({ ...x, shearYield: 150e6 + 50e6 * (i % 6) })) };
}

/** The loads (point and distributed torques) times λ; the assembled state unchanged. */
function scaled(m: Model, lam: number): Model {
  const num = (q: unknown) => {
    if (typeof q !== 'number') throw new Error('random models are in SI numbers');
    return q * lam;
  };
  return {
    ...m,
    torques: (m.torques ?? []).map((t) => (t.power !== undefined ? { ...t, power: num(t.power) } : { ...t, torque: num(t.torque) })),
    distributedTorques: (m.distributedTorques ?? []).map((d) => ({ ...d, start: num(d.start), end: num(d.end) })),
  };
}

/** Largest τ/τ_y over every layer of every segment (τ_y by material). */
function worstYieldRatio(sol: Solution, m: Model): number {
  const ty = new Map(m.materials.map((x) => [x.id, x.shearYield as number]));
  let worst = 0;
  for (const s of sol.shafts) for (const g of s.segments) for (const l of g.layers) worst = Math.max(worst, l.maxShear / (ty.get(l.material) as number));
  return worst;
}

function overload(sol: Solution) {
  expect(sol.overload).toBeDefined();
  return sol.overload as NonNullable<Solution['overload']>;
}

describe.each(seeds)('random system %i', (seed) => {
  it('first yield: the loads times firstYieldFactor bring the worst layer exactly to τ_y (assembled state held)', () => {
    const m = withYield(randomModel(seed));
    const o = overload(solveModel(m, { lp }));
    if (o.firstYieldFactor === null) {
      expect(o.firstYield).toBeNull();
      return;
    }
    const at = solveModel(scaled(m, o.firstYieldFactor));
    expect(worstYieldRatio(at, m)).toBeCloseTo(1, 9);
    // Just below it, nothing yields (unless the assembled state alone already does: factor 0).
    if (o.firstYieldFactor > 0) expect(worstYieldRatio(solveModel(scaled(m, o.firstYieldFactor * (1 - 1e-6))), m)).toBeLessThan(1);
  });

  it('collapse: not below first yield without an assembled state, and the same with one', () => {
    const free = withYield(randomModel(seed, { imposed: false }));
    const o = overload(solveModel(free, { lp }));
    if (o.collapseFactor === null) {
      expect(o.collapse).toBe('none');
      expect(o.plasticAt).toEqual([]);
    } else {
      expect(o.collapse).toBe('mechanism');
      // Lower-bound theorem: the elastic distribution at first yield is in equilibrium and safe.
      expect(o.collapseFactor).toBeGreaterThanOrEqual((o.firstYieldFactor as number) * (1 - 1e-6));
      expect(o.plasticAt.length).toBeGreaterThan(0);
    }
    // A self-stress does not change the collapse factor (the theorem needs equilibrium with the loads
    // only): the same system with offsets, misfits and prescribed rotations collapses at the same λ.
    const held = withYield(randomModel(seed, { imposed: true }));
    const oh = overload(solveModel(held, { lp }));
    const stripped: Model = {
      ...held,
      supports: (held.supports ?? []).map(({ rotation: _r, ...s }) => s),
      gearMeshes: (held.gearMeshes ?? []).map(({ offset: _o, ...g }) => g),
      couplings: (held.couplings ?? []).map(({ misfit: _f, ...c }) => c),
    };
    const os = overload(solveModel(stripped, { lp }));
    if (os.collapseFactor === null) expect(oh.collapseFactor).toBeNull();
    else expect(Math.abs((oh.collapseFactor as number) - os.collapseFactor)).toBeLessThanOrEqual(1e-6 * os.collapseFactor);
  });
});

describe('overload of many combinations (random systems with load cases)', () => {
  /** The random model with its loads spread over two cases and `n` seeded combinations (factors −1.5 … 1.5). */
  function cased(seed: number, n: number): Model {
    const m = withYield(randomModel(seed)) as Model & Record<string, unknown>;
    let r = seed;
    const rand = () => ((r = (r * 1103515245 + 12345) >>> 0) / 4294967296);
    const ids = ['p', 'q'];
    const nT = (m.torques ?? []).length;
    const torques = (m.torques ?? []).map((t, k) => ({ ...t, case: ids[k % 2] }));
    const distributedTorques = (m.distributedTorques ?? []).map((d, k) => ({ ...d, case: ids[(nT + k) % 2] }));
    const used = ids.filter((id) => [...torques, ...distributedTorques].some((x) => x.case === id));
    return {
      ...m,
      loadCases: used.map((id) => ({ id })),
      torques,
      distributedTorques,
      combinations: Array.from({ length: n }, (_, k) => ({ id: `c${k}`, factors: Object.fromEntries(used.map((id) => [id, 3 * rand() - 1.5])) })),
    } as Model;
  }
  /** The combination's loads typed into a model without load cases. */
  function typedIn(m: Model, c: { factors: Record<string, number> }): Model {
    const f = (x: { case?: string }) => c.factors[x.case as string] ?? 0;
    const plain = scaled({ ...m, torques: [], distributedTorques: [] }, 1) as Model & Record<string, unknown>;
    delete plain.loadCases;
    delete plain.combinations;
    return {
      ...plain,
      torques: (m.torques ?? []).map(({ case: _c, ...t }) => (t.power !== undefined ? { ...t, power: f({ case: _c }) * (t.power as number) } : { ...t, torque: f({ case: _c }) * (t.torque as number) })),
      distributedTorques: (m.distributedTorques ?? []).map(({ case: _c, ...d }) => ({ ...d, start: f({ case: _c }) * (d.start as number), end: f({ case: _c }) * (d.end as number) })),
    } as Model;
  }

  it.each([7101, 7104, 7107])('seed %i: each combination’s factors are those of its loads typed in; few combinations: every collapse sought', (seed) => {
    const m = cased(seed, 4);
    const sol = solveModel(m, { lp });
    const combos = sol.combinations ?? [];
    expect(sol.warnings.map((w) => w.code)).not.toContain('SN_OVERLOAD_OMITTED');
    for (const [k, c] of combos.entries()) {
      const o = c.overload;
      const p = solveModel(typedIn(m, (m.combinations ?? [])[k] as never), { lp }).overload;
      if (!o || !p) {
        expect(o).toEqual(p);
        continue;
      }
      if (p.firstYieldFactor === null) expect(o.firstYieldFactor).toBeNull();
      else expect(Math.abs((o.firstYieldFactor as number) - p.firstYieldFactor)).toBeLessThanOrEqual(1e-9 * p.firstYieldFactor);
      expect(o.collapse).toBe(p.collapse);
      if (p.collapseFactor === null) expect(o.collapseFactor).toBeNull();
      else expect(Math.abs((o.collapseFactor as number) - p.collapseFactor)).toBeLessThanOrEqual(1e-6 * p.collapseFactor);
    }
  });

  it('over COLLAPSE_ALL_UP_TO combinations × elements: collapse for the one shown and the COLLAPSE_FEWEST nearest to yield, "omitted" for the rest', () => {
    const m = cased(7101, 1);
    const elements = solveModel(m).shafts.reduce((n, s) => n + s.stations.length - 1, 0);
    const n = Math.floor(COLLAPSE_ALL_UP_TO / elements) + 1;
    const many = cased(7101, n);
    const sol = solveModel(many, { lp, combination: 'c3' });
    const combos = sol.combinations ?? [];
    const warning = sol.warnings.find((w) => w.code === 'SN_OVERLOAD_OMITTED');
    expect(warning?.message).toContain(`${n} combinations × ${elements} elements`);
    const sought = combos.filter((c) => c.overload?.collapse !== 'omitted').map((c) => c.id);
    const nearest = combos
      .filter((c) => c.id !== 'c3' && c.overload?.firstYieldFactor != null)
      .sort((a, b) => (a.overload?.firstYieldFactor as number) - (b.overload?.firstYieldFactor as number))
      .slice(0, COLLAPSE_FEWEST)
      .map((c) => c.id);
    expect(new Set(sought)).toEqual(new Set(['c3', ...nearest]));
    for (const c of combos) if (c.overload?.collapse === 'omitted') expect(c.overload.collapseFactor).toBeNull();
    // One sought and one omitted, against their loads typed in.
    for (const id of [nearest[0], combos.find((c) => c.overload?.collapse === 'omitted')?.id as string]) {
      const k = combos.findIndex((c) => c.id === id);
      const o = combos[k].overload as NonNullable<Solution['overload']>;
      const p = solveModel(typedIn(many, (many.combinations ?? [])[k] as never), { lp }).overload as NonNullable<Solution['overload']>;
      expect(Math.abs((o.firstYieldFactor as number) - (p.firstYieldFactor as number))).toBeLessThanOrEqual(1e-9 * (p.firstYieldFactor as number));
      if (o.collapse !== 'omitted') expect(Math.abs((o.collapseFactor as number) - (p.collapseFactor as number))).toBeLessThanOrEqual(1e-6 * (p.collapseFactor as number));
    }
  });
});
