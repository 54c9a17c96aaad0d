/**
 * Overload factors: first yield (elastic solution scaled to the yield stress) and plastic collapse
 * (lower-bound theorem, LP) of elastic–perfectly plastic circular bars.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { loadLpSolver, solveModel, type LpSolver } from '../../server/engine/index.js';
import type { Solution } from '../../shared-types/solution.js';
import { expectClose, jHollow, jSolid, model } from './helpers.js';

let lp: LpSolver;
beforeAll(async () => {
  lp = await loadLpSolver();
});

const TAU_Y = 250e6; // Pa
const G = 79.3e9; // Pa

/** Yield torque of a solid or hollow circular bar, N·m: T_Y = τ_y J / c (elastic torsion formula). */
function yieldTorque(d: number, di = 0): number {
  return (TAU_Y * (di === 0 ? jSolid(d) : jHollow(d, di))) / (d / 2);
}
/** Fully plastic torque, N·m: T_p = 2π τ_y (c³ − b³)/3 (contract, "Overload"; stress τ_y over the whole section). */
function plasticTorque(d: number, di = 0): number {
  return (2 * Math.PI * TAU_Y * ((d / 2) ** 3 - (di / 2) ** 3)) / 3;
}

function overload(sol: Solution) {
  expect(sol.overload).toBeDefined();
  return sol.overload as NonNullable<Solution['overload']>;
}

const steel = { id: 'steel', G: '79.3 GPa', shearYield: '250 MPa' };

describe('cantilever bar, torque at the free end: yield and fully plastic torque', () => {
  const bar = (section: Record<string, unknown>) =>
    model('Cantilever', {
      materials: [steel],
      sections: [section],
      shafts: [{ id: 's', segments: [{ length: '1 m', section: section.id, material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 's', at: '1 m', torque: '1 kN*m' }],
    });

  it('solid 50 mm: factors T_Y/T and T_p/T, and T_p = 4/3 T_Y', () => {
    const o = overload(solveModel(bar({ id: 'd50', shape: 'solid', d: '50 mm' }), { lp }));
    // closed form: T_Y = τ_y J/c; T_p = 2π τ_y c³/3 = (4/3) T_Y for a solid bar
    // (Beer & Johnston, Mechanics of Materials, §3.11 plastic deformations in circular shafts, from memory)
    expectClose(o.firstYieldFactor, yieldTorque(0.05) / 1000);
    expectClose(o.collapseFactor, plasticTorque(0.05) / 1000);
    expectClose((o.collapseFactor as number) / (o.firstYieldFactor as number), 4 / 3);
    expect(o.firstYield).toEqual({ shaft: 's', z: null, layer: 'steel' });
    expect(o.collapse).toBe('mechanism');
    expect(o.plasticAt).toEqual([
      { shaft: 's', z: 0 },
      { shaft: 's', z: 1 },
    ]);
  });

  it('hollow 60/40 mm: T_p = 2π τ_y (c³ − b³)/3', () => {
    const o = overload(solveModel(bar({ id: 'h', shape: 'hollow', d: '60 mm', di: '40 mm' }), { lp }));
    // closed forms: T_Y = τ_y J/c with J = π(d⁴ − di⁴)/32; T_p = 2π τ_y (c³ − b³)/3
    expectClose(o.firstYieldFactor, yieldTorque(0.06, 0.04) / 1000);
    expectClose(o.collapseFactor, plasticTorque(0.06, 0.04) / 1000);
  });
});

describe('non-circular sections', () => {
  const bar = (section: Record<string, unknown>) =>
    model('Cantilever, non-circular', {
      materials: [steel],
      sections: [section],
      shafts: [{ id: 's', segments: [{ length: '1 m', section: section.id, material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 's', at: '1 m', torque: '100 N*m' }],
    });

  it('rectangle 20 × 40 mm collapses at T_p = τ_y b² (3h − b)/6', () => {
    const o = overload(solveModel(bar({ id: 'r', shape: 'rectangle', width: '40 mm', height: '20 mm' }), { lp }));
    // closed form (contract, "Overload"; the sand-heap fully plastic torque of a rectangle), b = 20 mm, h = 40 mm
    const b = 0.02;
    const h = 0.04;
    expectClose(o.collapseFactor, (TAU_Y * b * b * (3 * h - b)) / 6 / 100);
  });

  it('ellipse: no fully plastic torque, so the collapse factor is omitted with SN_NO_PLASTIC_TORQUE; first yield stays', () => {
    const sol = solveModel(bar({ id: 'e', shape: 'ellipse', width: '40 mm', height: '20 mm' }), { lp });
    const o = overload(sol);
    expect(o.collapseFactor).toBeNull();
    expect(sol.warnings.find((w) => w.code === 'SN_NO_PLASTIC_TORQUE')?.message).toContain('"e"');
    // closed form: τmax = 2T/(π a c²) (ellipse, semi-axes a = 20 mm, c = 10 mm) reaches τ_y
    expectClose(o.firstYieldFactor, (TAU_Y * Math.PI * 0.02 * 0.01 ** 2) / 2 / 100);
  });
});

describe('stepped bar fixed at both ends, one torque at the step', () => {
  // 50 mm over 0.5 m, 40 mm over 1.5 m, 1 kN·m at the step.
  const m = model('Fixed-fixed stepped', {
    materials: [steel],
    sections: [
      { id: 'd50', shape: 'solid', d: '50 mm' },
      { id: 'd40', shape: 'solid', d: '40 mm' },
    ],
    shafts: [
      {
        id: 's',
        segments: [
          { length: '0.5 m', section: 'd50', material: 'steel' },
          { length: '1.5 m', section: 'd40', material: 'steel' },
        ],
      },
    ],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: '2 m', kind: 'fixed' },
    ],
    torques: [{ id: 'T', shaft: 's', at: '0.5 m', torque: '1 kN*m' }],
  });
  const o = () => overload(solveModel(m, { lp }));

  it('collapses at T_p1 + T_p2', () => {
    // closed form: both parts fully plastic, T_collapse = T_p1 + T_p2 (lower and upper bound agree)
    expectClose(o().collapseFactor, (plasticTorque(0.05) + plasticTorque(0.04)) / 1000);
    expect(o().plasticAt).toEqual([
      { shaft: 's', z: 0 },
      { shaft: 's', z: 0.5 },
      { shaft: 's', z: 2 },
    ]);
  });

  it('first yields at the elastic solution scaled to τ_y', () => {
    // closed form: the torque splits as the stiffnesses k_i = G J_i / L_i; τ_i = T_i c_i / J_i
    const k1 = (G * jSolid(0.05)) / 0.5;
    const k2 = (G * jSolid(0.04)) / 1.5;
    const T1 = (1000 * k1) / (k1 + k2);
    const T2 = (1000 * k2) / (k1 + k2);
    const l1 = yieldTorque(0.05) / T1;
    const l2 = yieldTorque(0.04) / T2;
    expectClose(o().firstYieldFactor, Math.min(l1, l2));
    expect(o().firstYield).toEqual({ shaft: 's', z: null, layer: 'steel' });
  });
});

describe('uniform distributed torque on a fixed-fixed bar', () => {
  // 30 mm bar, 1.2 m, t = 1 kN·m/m.
  const m = model('Fixed-fixed, uniform t', {
    materials: [steel],
    sections: [{ id: 'd30', shape: 'solid', d: '30 mm' }],
    shafts: [{ id: 's', segments: [{ length: '1.2 m', section: 'd30', material: 'steel' }] }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: '1.2 m', kind: 'fixed' },
    ],
    distributedTorques: [{ id: 'q', shaft: 's', from: 0, to: '1.2 m', start: '1 kN*m/m', end: '1 kN*m/m' }],
  });

  it('first yield at the ends: t L/2 = T_Y; collapse when both ends are fully plastic: t L = 2 T_p', () => {
    const o = overload(solveModel(m, { lp }));
    // closed form: elastic end torques ±tL/2 (symmetry); collapse T(z) linear from +T_p to −T_p
    expectClose(o.firstYieldFactor, yieldTorque(0.03) / 600);
    expectClose(o.collapseFactor, (2 * plasticTorque(0.03)) / 1200);
    expect(o.firstYield?.z).toBe(0);
    expect(o.plasticAt).toEqual([
      { shaft: 's', z: 0 },
      { shaft: 's', z: 1.2 },
    ]);
  });
});

describe('geared split path', () => {
  // Shaft a (40 mm, 1 m) fixed at 0, torque at 0.5 m, gear r = 50 mm at 1 m; shaft b (30 mm, 1 m)
  // with its gear r = 100 mm at 0, fixed at 1 m. The load goes to A directly or through the mesh to b.
  const ra = 0.05;
  const rb = 0.1;
  const m = model('Geared split path', {
    materials: [steel],
    sections: [
      { id: 'd40', shape: 'solid', d: '40 mm' },
      { id: 'd30', shape: 'solid', d: '30 mm' },
    ],
    shafts: [
      { id: 'a', segments: [{ length: '1 m', section: 'd40', material: 'steel' }] },
      { id: 'b', segments: [{ length: '1 m', section: 'd30', material: 'steel' }] },
    ],
    supports: [
      { id: 'A', shaft: 'a', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'b', at: '1 m', kind: 'fixed' },
    ],
    torques: [{ id: 'T', shaft: 'a', at: '0.5 m', torque: '1 kN*m' }],
    gearMeshes: [{ id: 'G', a: { shaft: 'a', at: '1 m', radius: '50 mm' }, b: { shaft: 'b', at: 0, radius: '100 mm' }, sense: 'opposite' }],
  });

  it('collapse factor between a hand lower bound and upper bound that meet', () => {
    const o = overload(solveModel(m, { lp }));
    const Tpa = plasticTorque(0.04);
    const Tpb = plasticTorque(0.03);
    // Lower bound (hand): T = T_pa in a[0, 0.5]; through the mesh the torque on b is (r_b/r_a)·X with
    // X on a[0.5, 1], so X ≤ min(T_pa, T_pb·r_a/r_b); this distribution is in equilibrium and safe.
    const lower = Tpa + Math.min(Tpa, (Tpb * ra) / rb);
    // Upper bound (hand): mechanism with hinges in a[0, 0.5] (rotation θ) and along b (rotation
    // θ·r_a/r_b); external work T·θ = internal T_pa·θ + T_pb·θ·r_a/r_b.
    const upper = Tpa + (Tpb * ra) / rb;
    expect(lower).toBeLessThanOrEqual(upper * (1 + 1e-12));
    expect((o.collapseFactor as number) * 1000).toBeGreaterThanOrEqual(lower * (1 - 1e-9));
    expect((o.collapseFactor as number) * 1000).toBeLessThanOrEqual(upper * (1 + 1e-9));
    expect(o.plasticAt).toEqual([
      { shaft: 'a', z: 0 },
      { shaft: 'a', z: 0.5 },
      { shaft: 'b', z: 0 },
      { shaft: 'b', z: 1 },
    ]);
  });
});

describe('what the overload leaves alone', () => {
  const plain = model('No yield stress', {
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [{ id: 's', segments: [{ length: '1 m', section: 'd50', material: 'steel' }] }],
    supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T', shaft: 's', at: '1 m', torque: '1 kN*m' }],
  });

  it('a model without shearYield answers byte for byte as without the LP solver', () => {
    expect(JSON.stringify(solveModel(plain, { lp }))).toBe(JSON.stringify(solveModel(plain)));
    expect(solveModel(plain, { lp }).overload).toBeUndefined();
  });

  it('a loaded material without shearYield: factors omitted with SN_NO_YIELD naming it', () => {
    const m = {
      ...plain,
      materials: [{ id: 'steel', G: '79.3 GPa' }, { id: 'other', G: '79.3 GPa', shearYield: '200 MPa' }],
      shafts: [
        {
          id: 's',
          segments: [
            { length: '0.5 m', section: 'd50', material: 'other' },
            { length: '0.5 m', section: 'd50', material: 'steel' },
          ],
        },
      ],
    };
    const sol = solveModel(m, { lp });
    expect(sol.overload).toEqual({ firstYieldFactor: null, firstYield: null, collapseFactor: null, plasticAt: [], collapse: 'none' });
    const w = sol.warnings.find((x) => x.code === 'SN_NO_YIELD');
    expect(w?.message).toContain('"steel"');
  });

  it('a torque taken straight by a support: no collapse mechanism', () => {
    const m = { ...plain, materials: [steel], torques: [{ id: 'T', shaft: 's', at: 0, torque: '1 kN*m' }] };
    const o = overload(solveModel(m, { lp }));
    expect(o.collapse).toBe('none');
    expect(o.collapseFactor).toBeNull();
  });
});

describe('overload with load cases', () => {
  it('of every combination equals that of a model carrying its factored loads (the shown one at the top level too)', async () => {
    // A bar fixed at both ends (d40 steel, τy = 170 MPa) with two load cases and a prescribed end
    // rotation (invented). Closed form: the factors are those of one load state, so each combination
    // (1.0·run; 1.35·run + 1.0·jam; −0.6·run + 2·jam) must give the factors of the same bar with its loads typed in.
    const lp = await loadLpSolver();
    const base = {
      format: 'shaftnet/1',
      name: 'Two cases (invented)',
      materials: [{ id: 'st', G: 80e9, shearYield: 1.7e8 }],
      sections: [{ id: 'd40', shape: 'solid', d: 0.04 }],
      shafts: [{ id: 's', segments: [{ length: 1, section: 'd40', material: 'st' }] }],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 's', at: 1, kind: 'fixed', rotation: 0.002 },
      ],
    };
    const factors: Record<string, { run: number; jam: number }> = { service: { run: 1, jam: 0 }, peak: { run: 1.35, jam: 1 }, reverse: { run: -0.6, jam: 2 } };
    const withCases = solveModel(
      {
        ...base,
        loadCases: [{ id: 'run' }, { id: 'jam' }],
        combinations: Object.entries(factors).map(([id, f]) => ({ id, factors: f })),
        torques: [
          { id: 'T1', case: 'run', shaft: 's', at: 0.4, torque: 300 },
          { id: 'T2', case: 'jam', shaft: 's', at: 0.7, torque: -500 },
        ],
      },
      { lp, combination: 'peak' },
    );
    const plainOf = (f: { run: number; jam: number }) =>
      solveModel(
        {
          ...base,
          torques: [
            { id: 'T1', shaft: 's', at: 0.4, torque: f.run * 300 },
            { id: 'T2', shaft: 's', at: 0.7, torque: f.jam * -500 },
          ],
        },
        { lp },
      );
    const same = (o: NonNullable<typeof withCases.overload>, p: NonNullable<typeof withCases.overload>) => {
      expect(o.firstYieldFactor).not.toBeNull();
      expectClose(o.firstYieldFactor, p.firstYieldFactor!, 1e-12);
      // 1e-9: the LP solver's own optimality tolerance, not round-off (common practice, no source).
      expectClose(o.collapseFactor, p.collapseFactor!, 1e-9);
      expect(o.collapse).toBe(p.collapse);
      expect(o.plasticAt).toEqual(p.plasticAt);
      expect(o.firstYield).toEqual(p.firstYield);
    };
    same(withCases.overload!, plainOf(factors.peak).overload!);
    for (const c of withCases.combinations!) same(c.overload!, plainOf(factors[c.id]).overload!);
    // The shown one's entry is the top level's.
    expect(withCases.combinations!.find((c) => c.id === 'peak')!.overload).toEqual(withCases.overload);
    // Three combinations of one element-chain: every collapse factor is sought, nothing omitted.
    expect(withCases.warnings.map((w) => w.code)).not.toContain('SN_OVERLOAD_OMITTED');
  });
});
