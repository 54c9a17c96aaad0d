/**
 * Distributed torque t(z) on uniform bars. The fixed-end torques and the
 * curves T(z), φ(z) follow by integrating dT/dz = −t and dφ/dz = T/(GJ) with
 * φ = 0 at fixed ends; the contract promises them exactly (piecewise-linear t).
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

const G = 79.3e9; // Pa
const d = 0.03; // m
const GJ = G * jSolid(d);
const L = 1.2; // m

/** A fixed-fixed (or cantilever) 30 mm steel bar of length L, cut into segments at `cuts` (m). */
function bar(name: string, dist: Record<string, unknown>[], opts: { cuts?: number[]; cantilever?: boolean } = {}): Record<string, unknown> {
  const cuts = [0, ...(opts.cuts ?? []), L];
  const segments = cuts.slice(1).map((z, i) => ({ length: z - cuts[i], section: 'd30', material: 'steel' }));
  const supports = [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }];
  if (!opts.cantilever) supports.push({ id: 'B', shaft: 's', at: L, kind: 'fixed' });
  return model(name, {
    materials: [{ id: 'steel', G: '79.3 GPa' }],
    sections: [{ id: 'd30', shape: 'solid', d: '30 mm' }],
    shafts: [{ id: 's', segments }],
    supports,
    distributedTorques: dist,
  });
}

/** Every diagram point of shaft s against closed forms T(z), φ(z). */
function expectDiagram(sol: ReturnType<typeof solve>, T: (z: number) => number, phi: (z: number) => number, Tscale: number, phiScale: number): void {
  const dg = shaft(sol, 's').diagram;
  expect(dg.z.length).toBeGreaterThanOrEqual(3);
  expect(dg.torque.length).toBe(dg.z.length);
  expect(dg.rotation.length).toBe(dg.z.length);
  for (let i = 0; i < dg.z.length; i++) {
    expectClose(dg.torque[i], T(dg.z[i]), 1e-9, Tscale);
    expectClose(dg.rotation[i], phi(dg.z[i]), 1e-9, phiScale);
  }
}

describe.each(SOLVERS)('uniform distributed torque on a fixed-fixed bar (%s solver)', (solver) => {
  const t = 500; // N·m/m
  const sol = solve(
    bar('Uniform t, fixed-fixed', [{ id: 'q', shaft: 's', from: 0, to: '1200 mm', start: '500 N*m/m', end: '0.5 kN*m/m' }], {
      cuts: [L / 2],
    }),
    solver,
  );

  it('has fixed-end torques t·L/2 at each end', () => {
    // closed form: T_A = T_B = −t L / 2 (symmetry, ∫t = tL), Roark's Formulas for Stress and Strain, torsion table (from memory)
    expectClose(reaction(sol, 'A').torque, (-t * L) / 2);
    expectClose(reaction(sol, 'B').torque, (-t * L) / 2);
    expectEquilibrium(sol, t * L);
  });

  it('rotates mid-span by φ = t·L²/(8·G·J) with zero internal torque there', () => {
    // closed form: φ(z) = t (L z − z²) / (2 G J), so φ(L/2) = t L² / (8 G J); T(L/2) = 0
    const mid = station(sol, 's', L / 2);
    expectClose(mid.rotation, (t * L * L) / (8 * GJ));
    expectClose(mid.torqueLeft, 0, 1e-9, (t * L) / 2);
    expectClose(mid.torqueRight, 0, 1e-9, (t * L) / 2);
    expectClose(shaft(sol, 's').totalTwist, (t * L * L) / (8 * GJ));
    expectClose(segment(sol, 's', 0).maxAbsTorque, (t * L) / 2);
    expectClose(segment(sol, 's', 0).twist, (t * L * L) / (8 * GJ));
  });

  it('draws T(z) = t(L/2 − z) and φ(z) = t(Lz − z²)/(2GJ) exactly at every diagram point', () => {
    expectDiagram(
      sol,
      (z) => t * (L / 2 - z),
      (z) => (t * (L * z - z * z)) / (2 * GJ),
      (t * L) / 2,
      (t * L * L) / (8 * GJ),
    );
  });
});

describe('linearly varying torque, 0 at A to t0 at B, fixed-fixed', () => {
  const t0 = 900; // N·m/m
  const zStar = L / Math.sqrt(3); // where T = 0 and φ peaks
  const sol = solve(bar('Linear t, fixed-fixed', [{ id: 'q', shaft: 's', from: 0, to: L, start: 0, end: t0 }], { cuts: [zStar] }));

  it('has fixed-end torques t0·L/6 at the zero end and t0·L/3 at the loaded end', () => {
    // closed form: T_A = −t0 L / 6, T_B = −t0 L / 3 (integrating t = t0 z / L with φ(0) = φ(L) = 0),
    // Roark's Formulas for Stress and Strain, torsion table (from memory)
    expectClose(reaction(sol, 'A').torque, (-t0 * L) / 6);
    expectClose(reaction(sol, 'B').torque, (-t0 * L) / 3);
    expectClose(segment(sol, 's', 1).maxAbsTorque, (t0 * L) / 3);
    expectEquilibrium(sol, (t0 * L) / 2);
  });

  it('peaks in rotation where T = 0, at z = L/√3, with φ = t0·L²/(9√3·G·J)', () => {
    // closed form: T(z) = t0 L/6 − t0 z²/(2L); φ(z) = t0 (L z / 6 − z³ / (6L)) / (G J)
    const st = station(sol, 's', zStar);
    expectClose(st.torqueLeft, 0, 1e-9, (t0 * L) / 3);
    expectClose(st.rotation, (t0 * L * L) / (9 * Math.sqrt(3) * GJ));
    expectClose(shaft(sol, 's').totalTwist, (t0 * L * L) / (9 * Math.sqrt(3) * GJ));
  });

  it('draws the cubic φ(z) and the parabolic T(z) exactly', () => {
    expectDiagram(
      sol,
      (z) => (t0 * L) / 6 - (t0 * z * z) / (2 * L),
      (z) => (t0 * ((L * z) / 6 - (z * z * z) / (6 * L))) / GJ,
      (t0 * L) / 3,
      (t0 * L * L) / (9 * Math.sqrt(3) * GJ),
    );
  });
});

describe('antisymmetric torque, −t0 at A to +t0 at B, fixed-fixed: interior extreme of T', () => {
  const t0 = 400; // N·m/m, given in kN*m/m
  const sol = solve(
    bar('Antisymmetric t', [{ id: 'q', shaft: 's', from: 0, to: '1.2 m', start: '-0.4 kN*m/m', end: '0.4 kN*m/m' }], {
      cuts: [L / 2],
    }),
  );

  it('has equal end reactions and an interior extreme T = t0·L/12 at mid-span', () => {
    // closed form: t = t0 (2z/L − 1); T(z) = −t0 L/6 + t0 z − t0 z²/L; T(0) = T(L) = −t0 L/6, T(L/2) = t0 L/12
    expectClose(reaction(sol, 'A').torque, (t0 * L) / 6);
    expectClose(reaction(sol, 'B').torque, (-t0 * L) / 6);
    const mid = station(sol, 's', L / 2);
    expectClose(mid.torqueLeft, (t0 * L) / 12);
    expectClose(mid.torqueRight, (t0 * L) / 12);
    // φ(L/2) = ∫0^{L/2} T dz / GJ = (−t0 L²/12 + t0 L²/8 − t0 L²/24) / GJ = 0 by antisymmetry
    expectClose(mid.rotation, 0, 1e-9, (t0 * L * L) / GJ);
    expectClose(segment(sol, 's', 0).maxAbsTorque, (t0 * L) / 6);
    expectEquilibrium(sol, (t0 * L) / 2);
  });
});

describe('antisymmetric torque on a cantilever: the governing point is inside the segment', () => {
  const t0 = 300; // N·m/m
  const sol = solve(bar('Cantilever, antisymmetric t', [{ id: 'q', shaft: 's', from: 0, to: L, start: t0, end: -t0 }], { cantilever: true }));

  it('peaks at |T| = t0·L/4 at z = L/2 with a zero wall reaction', () => {
    // closed form: t = t0 (1 − 2z/L), T(L) = 0 → T(z) = ∫_z^L t = −t0 z (L − z) / L; φ(L) = −t0 L² / (6 G J)
    const seg = segment(sol, 's', 0);
    expectClose(seg.maxAbsTorque, (t0 * L) / 4);
    expectClose(seg.governingZ, L / 2, 1e-9);
    expectClose(seg.maxTwistRate, (t0 * L) / 4 / GJ);
    expectClose(reaction(sol, 'A').torque, 0, 1e-9, t0 * L);
    expectClose(station(sol, 's', L).rotation, (-t0 * L * L) / (6 * GJ));
    expectEquilibrium(sol, (t0 * L) / 2);
  });
});

describe('uniform torque over part of a fixed-fixed bar', () => {
  const t = 250; // N·m/m
  const c = 0.3;
  const e = 0.9;
  const sol = solve(bar('Partial uniform t', [{ id: 'q', shaft: 's', from: '30 cm', to: '90 cm', start: t, end: t }]));

  it('has fixed-end torques −(1/L)∫t(L − z)dz and −(1/L)∫t z dz', () => {
    // closed form: T_A = −t [L(e − c) − (e² − c²)/2] / L, T_B = −t (e² − c²) / (2L), by the unit-load (force) method
    // for a fixed-fixed member (Gere & Goodno §3.8 distributed torques, from memory)
    expectClose(reaction(sol, 'A').torque, (-t * (L * (e - c) - (e * e - c * c) / 2)) / L);
    expectClose(reaction(sol, 'B').torque, (-t * (e * e - c * c)) / (2 * L));
    // stations at both ends of the load; T is constant outside the loaded span
    const TA = (t * (L * (e - c) - (e * e - c * c) / 2)) / L;
    expectClose(station(sol, 's', c).torqueLeft, TA);
    expectClose(station(sol, 's', c).rotation, (TA * c) / GJ);
    expectEquilibrium(sol, t * (e - c));
  });
});
