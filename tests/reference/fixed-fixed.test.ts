/**
 * Fixed-fixed uniform bars under point torques: the first statically
 * indeterminate torsion member of every mechanics-of-materials text.
 */
import { describe, expect, it } from 'vitest';
import {
  SOLVERS,
  expectClose,
  expectEquilibrium,
  jSolid,
  model,
  reaction,
  segment,
  shaft,
  solve,
  station,
} from './helpers.js';

// Inputs, SI: a 50 mm steel bar, 2 m between walls, 1.2 kN·m at 0.5 m from A.
const G = 79.3e9; // Pa
const d = 0.05; // m
const L = 2.0; // m
const a = 0.5; // m
const b = L - a; // m
const T0 = 1200; // N·m
const J = jSolid(d);

function oneTorqueBar(): Record<string, unknown> {
  return model('Fixed-fixed bar, one point torque', {
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd50', shape: 'solid', d: '50 mm' }],
    shafts: [{ id: 's', segments: [{ length: '2 m', section: 'd50', material: 'steel' }] }],
    supports: [
      { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
      { id: 'B', shaft: 's', at: '2000 mm', kind: 'fixed' },
    ],
    torques: [{ id: 'T0', shaft: 's', at: '500 mm', torque: '1.2 kN*m' }],
  });
}

describe.each(SOLVERS)('fixed-fixed uniform bar, point torque (%s solver)', (solver) => {
  const sol = solve(oneTorqueBar(), solver);

  it('splits the torque in inverse proportion to the distances: T_A = T0·b/L, T_B = T0·a/L', () => {
    // closed form: T_A = T0 b / L, T_B = T0 a / L (reactions oppose T0),
    // Gere & Goodno, Mechanics of Materials, §3.8 statically indeterminate torsional members (from memory)
    expectClose(reaction(sol, 'A').torque, (-T0 * b) / L);
    expectClose(reaction(sol, 'B').torque, (-T0 * a) / L);
    expectClose(reaction(sol, 'A').rotation, 0, 1e-9, (T0 * a * b) / (L * G * J));
    expectEquilibrium(sol, T0);
  });

  it('jumps the internal torque by T0 at the load and rotates it by T0·a·b/(L·G·J)', () => {
    const st = station(sol, 's', a);
    // closed form: T(a−) = T0 b/L, T(a+) = −T0 a/L, dT/dz + t = 0 across a point torque (model-format.md sign convention)
    expectClose(st.torqueLeft, (T0 * b) / L);
    expectClose(st.torqueRight, (-T0 * a) / L);
    // closed form: φ(a) = T0 a b / (L G J), from φ = T·a/(GJ) on the left part
    expectClose(st.rotation, (T0 * a * b) / (L * G * J));
    const ends = shaft(sol, 's').stations;
    expect(ends[0].torqueLeft).toBeNull();
    expect(ends[ends.length - 1].torqueRight).toBeNull();
  });

  it('reports the segment peaks: max |T|, twist rate, zero end-to-end twist, outer-fibre shear', () => {
    const seg = segment(sol, 's', 0);
    const Tmax = (T0 * b) / L;
    expectClose(seg.maxAbsTorque, Tmax);
    expectClose(seg.torsionalRigidity, G * J);
    // closed form: dφ/dz = T / (G J)
    expectClose(seg.maxTwistRate, Tmax / (G * J));
    expectClose(seg.twist, 0, 1e-9, (T0 * a * b) / (L * G * J));
    // closed form: τ = T r / J at r = d/2 (elastic torsion formula)
    expect(seg.layers).toHaveLength(1);
    expectClose(seg.layers[0].outerRadius, d / 2);
    expectClose(seg.layers[0].maxShear, (Tmax * d) / 2 / J);
    // totalTwist is max φ − min φ along the shaft: here φ(a) − 0
    expectClose(shaft(sol, 's').totalTwist, (T0 * a * b) / (L * G * J));
  });
});

describe('fixed-fixed uniform bar, two opposite torques (superposition)', () => {
  // Inputs: 40 mm bar, G = 80 GPa, 1.5 m; +600 N·m at 0.4 m and −900 N·m at 1.1 m, as plain SI numbers.
  const G2 = 80e9;
  const d2 = 0.04;
  const L2 = 1.5;
  const loads = [
    { at: 0.4, T: 600 },
    { at: 1.1, T: -900 },
  ];
  const J2 = jSolid(d2);
  const sol = solve(
    model('Fixed-fixed bar, two torques', {
      materials: [{ id: 'm', G: G2 }],
      sections: [{ id: 'd40', shape: 'solid', d: d2 }],
      shafts: [{ id: 's', segments: [{ length: L2, section: 'd40', material: 'm' }] }],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 's', at: L2, kind: 'fixed' },
      ],
      torques: loads.map((l, i) => ({ id: `T${i}`, shaft: 's', at: l.at, torque: l.T })),
    }),
  );

  it('matches the sum of the one-torque closed forms', () => {
    // closed form by superposition of T_A = −Σ T_i (L − a_i)/L, T_B = −Σ T_i a_i / L (Gere & Goodno §3.8, from memory)
    const TA = -loads.reduce((s, l) => s + (l.T * (L2 - l.at)) / L2, 0);
    const TB = -loads.reduce((s, l) => s + (l.T * l.at) / L2, 0);
    expectClose(reaction(sol, 'A').torque, TA);
    expectClose(reaction(sol, 'B').torque, TB);
    // internal torque between the loads: T = −T_A − T_1
    const mid = station(sol, 's', 1.1);
    expectClose(mid.torqueLeft, -TA - loads[0].T);
    // rotation under the first load: φ = (−T_A) a_1 / (G J)
    expectClose(station(sol, 's', 0.4).rotation, (-TA * 0.4) / (G2 * J2));
    expectEquilibrium(sol, 900);
  });
});
