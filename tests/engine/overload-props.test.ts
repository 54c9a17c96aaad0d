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
