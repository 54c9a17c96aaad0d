/**
 * Couplings between shafts: an angular misfit forced closed at assembly, and a
 * compliant coupling as a spring in series with the shafts.
 */
import { describe, it } from 'vitest';
import {
  DEG,
  SOLVERS,
  coupling,
  expectClose,
  expectEquilibrium,
  jSolid,
  model,
  reaction,
  solve,
  station,
  stiffness,
} from './helpers.js';

// Inputs (invented for this suite): shaft a 40 mm × 600 mm fixed at z = 0, shaft b 30 mm × 900 mm fixed at its
// far end; the coupling joins a's free end to b's start. G = 79.3 GPa.
const G = 79.3e9;
const k1 = stiffness(G, jSolid(0.04), 0.6);
const k2 = stiffness(G, jSolid(0.03), 0.9);

function pair(couplingFields: Record<string, unknown>, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return model('Coupled pair', {
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [
      { id: 'd40', shape: 'solid', d: '40 mm' },
      { id: 'd30', shape: 'solid', d: '30 mm' },
    ],
    shafts: [
      { id: 'a', segments: [{ length: '600 mm', section: 'd40', material: 'steel' }] },
      { id: 'b', segments: [{ length: '900 mm', section: 'd30', material: 'steel' }] },
    ],
    supports: [
      { id: 'A', shaft: 'a', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 'b', at: '900 mm', kind: 'fixed' },
    ],
    couplings: [{ id: 'C1', a: { shaft: 'a', at: '600 mm' }, b: { shaft: 'b', at: 0 }, ...couplingFields }],
    ...extra,
  });
}

describe.each(SOLVERS)('rigid coupling assembled with a 0.5° misfit between two held shafts (%s solver)', (solver) => {
  const misfit = 0.5 * DEG;
  const sol = solve(pair({ misfit: '0.5 deg' }), solver);
  // closed form: closing the gap twists both shafts in series, Q = θ k1 k2 / (k1 + k2)
  // (initial-misfit problems, Gere & Goodno §3.8 / Hibbeler §5.5, from memory); with c = φa − φb − misfit = 0
  const Q = (misfit * k1 * k2) / (k1 + k2);

  it('locks in the assembly torque θ·k1·k2/(k1+k2)', () => {
    const c = coupling(sol, 'C1');
    expectClose(c.torqueA, Q);
    expectClose(c.torqueB, -Q);
    expectClose(c.twist, 0, 1e-9, misfit);
    expectClose(reaction(sol, 'A').torque, -Q);
    expectClose(reaction(sol, 'B').torque, Q);
    expectEquilibrium(sol, Q);
  });

  it('shares the misfit between the shafts in inverse proportion to their stiffness', () => {
    const phiA = station(sol, 'a', 0.6).rotation;
    const phiB = station(sol, 'b', 0).rotation;
    expectClose(phiA, Q / k1);
    expectClose(phiB, -Q / k2);
    expectClose(phiA - phiB, misfit);
  });
});

describe('compliant coupling (8 kN·m/rad) with the same misfit', () => {
  const kc = 8000;
  const misfit = 0.5 * DEG;
  const sol = solve(pair({ misfit: '0.5 deg', stiffness: '8 kN*m/rad' }));
  // closed form: three springs in series, 1/k = 1/k1 + 1/kc + 1/k2, Q = θ k; twist of the coupling c = −Q / kc
  const Q = misfit / (1 / k1 + 1 / kc + 1 / k2);

  it('takes the softer series stiffness', () => {
    const c = coupling(sol, 'C1');
    expectClose(c.torqueA, Q);
    expectClose(c.torqueB, -Q);
    expectClose(c.twist, -Q / kc);
    expectClose(station(sol, 'a', 0.6).rotation, Q / k1);
    expectClose(station(sol, 'b', 0).rotation, -Q / k2);
    expectClose(reaction(sol, 'B').torque, Q);
    expectEquilibrium(sol, Q);
  });
});

describe('compliant coupling in a series chain, torque at the free end', () => {
  // Inputs: shaft a fixed at z = 0; shaft b has no support; 150 N·m at b's far end.
  const kc = 8000;
  const T0 = 150;
  const sol = solve(
    model('Series chain', {
      materials: [{ id: 'steel', G: 79.3e9 }],
      sections: [
        { id: 'd40', shape: 'solid', d: 0.04 },
        { id: 'd30', shape: 'solid', d: 0.03 },
      ],
      shafts: [
        { id: 'a', segments: [{ length: 0.6, section: 'd40', material: 'steel' }] },
        { id: 'b', segments: [{ length: 0.9, section: 'd30', material: 'steel' }] },
      ],
      supports: [{ id: 'A', shaft: 'a', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 'b', at: 0.9, torque: T0 }],
      couplings: [{ id: 'C1', a: { shaft: 'a', at: 0.6 }, b: { shaft: 'b', at: 0 }, stiffness: '8000 N*m/rad' }],
    }),
  );

  it('rotates the tip by T0·(1/k1 + 1/kc + 1/k2)', () => {
    // closed form: torsional springs in series add flexibilities (Roark, torsion of shafts in series, from memory)
    expectClose(station(sol, 'b', 0.9).rotation, T0 * (1 / k1 + 1 / kc + 1 / k2));
    expectClose(station(sol, 'b', 0).rotation, T0 * (1 / k1 + 1 / kc));
    expectClose(station(sol, 'a', 0.6).rotation, T0 / k1);
    const c = coupling(sol, 'C1');
    expectClose(c.torqueA, T0);
    expectClose(c.torqueB, -T0);
    expectClose(c.twist, -T0 / kc);
    expectClose(reaction(sol, 'A').torque, -T0);
    expectEquilibrium(sol, T0);
  });
});
