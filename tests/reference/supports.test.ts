/**
 * Spring supports (series and parallel with the shaft) and fixed supports with
 * a prescribed rotation.
 */
import { describe, it } from 'vitest';
import {
  DEG,
  FT,
  IN,
  LBF_FT,
  PSI,
  SOLVERS,
  expectClose,
  expectEquilibrium,
  expectPublished,
  jSolid,
  layer,
  model,
  reaction,
  segment,
  solve,
  station,
  stiffness,
} from './helpers.js';

// Inputs (invented for this suite): 40 mm steel shaft, 800 mm, G = 79.3 GPa.
const G = 79.3e9;
const J = jSolid(0.04);
const L = 0.8;
const k = stiffness(G, J, L);

function shaft40(parts: Record<string, unknown>): Record<string, unknown> {
  return model('40 mm shaft', {
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
    shafts: [{ id: 's', segments: [{ length: '800 mm', section: 'd40', material: 'steel' }] }],
    ...parts,
  });
}

describe('shaft held only by a spring support: springs in series', () => {
  const ks = 12e3; // N·m/rad
  const T0 = 200;
  const sol = solve(
    shaft40({
      supports: [{ id: 'K', shaft: 's', at: 0, kind: 'spring', stiffness: '12 kN*m/rad' }],
      torques: [{ id: 'T', shaft: 's', at: '800 mm', torque: T0 }],
    }),
  );

  it('rotates the free end by T0·(1/ks + 1/k) and loads the spring with the whole torque', () => {
    // closed form: flexibilities in series add (spring, then shaft k = GJ/L)
    expectClose(station(sol, 's', L).rotation, T0 * (1 / ks + 1 / k));
    expectClose(reaction(sol, 'K').torque, -T0);
    expectClose(reaction(sol, 'K').rotation, T0 / ks);
    expectEquilibrium(sol, T0);
  });
});

describe('cantilever with a spring support at its end, torque part-way along', () => {
  const ks = 5e3; // N·m/rad
  const a = 0.3;
  const T0 = 120;
  const sol = solve(
    shaft40({
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'K', shaft: 's', at: '800 mm', kind: 'spring', stiffness: '5000 N*m/rad' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '300 mm', torque: '120 N*m' }],
    }),
  );
  // closed form: left part k_L = GJ/a in parallel with (right part k_R = GJ/(L − a) in series with the spring)
  const kL = stiffness(G, J, a);
  const kR = stiffness(G, J, L - a);
  const kRS = 1 / (1 / kR + 1 / ks);
  const phiA = T0 / (kL + kRS);

  it('splits the torque between the wall and the spring chain', () => {
    expectClose(station(sol, 's', a).rotation, phiA);
    expectClose(reaction(sol, 'A').torque, -kL * phiA);
    expectClose(reaction(sol, 'K').torque, -kRS * phiA);
    expectClose(reaction(sol, 'K').rotation, (kRS * phiA) / ks);
    expectEquilibrium(sol, T0);
  });
});

describe.each(SOLVERS)('prescribed rotation of fixed supports (%s solver)', (solver) => {
  const thA = -0.2 * DEG;
  const thB = 0.3 * DEG;
  const T0 = 300;
  const a = 0.5;
  const sol = solve(
    shaft40({
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed', rotation: '-0.2 deg' },
        { id: 'B', shaft: 's', at: '800 mm', kind: 'fixed', rotation: '0.3 deg' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '500 mm', torque: T0 }],
    }),
    solver,
  );

  it('adds k·(θB − θA) to the load-only reactions', () => {
    // closed form: φ(a) = (T0 + k_a θA + k_b θB)/(k_a + k_b), k_a = GJ/a, k_b = GJ/(L − a);
    // T_A = −k_a (φ(a) − θA), T_B = k_b (θB − φ(a)). For T0 = 0 this is the pure support-rotation torque k θ.
    const ka = stiffness(G, J, a);
    const kb = stiffness(G, J, L - a);
    const phi = (T0 + ka * thA + kb * thB) / (ka + kb);
    expectClose(station(sol, 's', a).rotation, phi);
    expectClose(reaction(sol, 'A').torque, -ka * (phi - thA));
    expectClose(reaction(sol, 'B').torque, kb * (thB - phi));
    expectClose(reaction(sol, 'A').rotation, thA);
    expectClose(reaction(sol, 'B').rotation, thB);
    // superposition check: the load part (−T0 b/L) plus the rotation part (−k (θB − θA))
    expectClose(reaction(sol, 'A').torque, (-T0 * (L - a)) / L - k * (thB - thA));
    expectEquilibrium(sol, T0);
  });
});

describe('two shafts in series twisted 6° end to end (US units)', () => {
  // Inputs: Pytel & Singer, Strength of Materials, Problem 325, as solved at
  // https://mathalino.com/reviewer/mechanics-and-strength-of-materials/solution-to-problem-325-torsion
  // 6.5 ft of 2 in shaft and 3.25 ft of 1.5 in shaft, G = 12 × 10⁶ psi, total rotation 6°.
  // Modelled as walls at both ends, the far one turned through 6°.
  const sol = solve(
    model('Pytel & Singer 325', {
      materials: [{ id: 'steel', G: '12000000 psi' }],
      sections: [
        { id: 'd2', shape: 'solid', d: '2 in' },
        { id: 'd1.5', shape: 'solid', d: '1.5 in' },
      ],
      shafts: [
        {
          id: 's',
          segments: [
            { length: '6.5 ft', section: 'd2', material: 'steel' },
            { length: '3.25 ft', section: 'd1.5', material: 'steel' },
          ],
        },
      ],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 's', at: '117 in', kind: 'fixed', rotation: '6 deg' },
      ],
    }),
  );
  const Gs = 12e6 * PSI;
  const flex = (6.5 * FT) / (Gs * jSolid(2 * IN)) + (3.25 * FT) / (Gs * jSolid(1.5 * IN));

  it('needs the published torque T = 817.32 lb·ft', () => {
    // mathalino.com Problem 325 solution: T = 817.32 lb·ft
    expectPublished(reaction(sol, 'B').torque, 817.32, 0.005, LBF_FT);
    expectPublished(-reaction(sol, 'A').torque, 817.32, 0.005, LBF_FT);
    // closed form: T = θ / Σ L_i/(G J_i)
    expectClose(reaction(sol, 'B').torque, (6 * DEG) / flex);
    expectEquilibrium(sol, (6 * DEG) / flex);
  });

  it('gives the published stresses 6243.86 psi and 14800.27 psi', () => {
    // mathalino.com Problem 325 solution: τ = 6243.86 psi (2 in) and 14800.27 psi (1.5 in). The page carries
    // T rounded to 817.32 lb·ft into them (exact: 6243.872, 14800.289), so compared at 1e-5 relative.
    expectClose(layer(segment(sol, 's', 0), 'steel').maxShear / PSI, 6243.86, 1e-5);
    expectClose(layer(segment(sol, 's', 1), 'steel').maxShear / PSI, 14800.27, 1e-5);
  });
});
