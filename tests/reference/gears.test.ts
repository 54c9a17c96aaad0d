/**
 * Two shafts joined by a gear mesh, each held at its far end: the classic
 * statically indeterminate gear problem. Rigid and compliant meshes, external
 * ("opposite") and internal/belt ("same") sense.
 */
import { describe, expect, it } from 'vitest';
import {
  SOLVERS,
  expectClose,
  expectEquilibrium,
  gearMesh,
  jSolid,
  layer,
  model,
  reaction,
  segment,
  solve,
  station,
  stiffness,
} from './helpers.js';

// Inputs: MecMovies M6.24 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_24_s000.html
// Two solid brass shafts (G = 44 GPa), 400 mm long, d1 = 20 mm and d2 = 16 mm, each fixed at its lower end;
// gear A (150 mm) on shaft 1 meshes with gear C (100 mm) on shaft 2; 240 N·m at A.
// Only the inputs were found published; every expected value below is a closed form.
const G = 44e9;
const L = 0.4;
const k1 = stiffness(G, jSolid(0.02), L);
const k2 = stiffness(G, jSolid(0.016), L);
const rA = 0.075;
const rC = 0.05;
const n = rA / rC;
const T0 = 240;

type Sense = 'opposite' | 'same';

function gearPair(sense: Sense, gears: 'radius' | 'teeth', mesh: Record<string, unknown> = {}): Record<string, unknown> {
  const ends =
    gears === 'radius'
      ? { a: { shaft: 's1', at: '400 mm', radius: '75 mm' }, b: { shaft: 's2', at: '400 mm', radius: '50 mm' } }
      : { a: { shaft: 's1', at: '400 mm', teeth: 60 }, b: { shaft: 's2', at: '400 mm', teeth: 40 }, module: '2.5 mm' };
  return model(`MecMovies M6.24 gear pair (${sense}, ${gears})`, {
    materials: [{ id: 'brass', G: '44 GPa' }],
    sections: [
      { id: 'd20', shape: 'solid', d: '20 mm' },
      { id: 'd16', shape: 'solid', d: '16 mm' },
    ],
    shafts: [
      { id: 's1', segments: [{ length: '400 mm', section: 'd20', material: 'brass' }] },
      { id: 's2', segments: [{ length: '400 mm', section: 'd16', material: 'brass' }] },
    ],
    supports: [
      { id: 'B', shaft: 's1', at: 0, kind: 'fixed' },
      { id: 'D', shaft: 's2', at: 0, kind: 'fixed' },
    ],
    torques: [{ id: 'T', shaft: 's1', at: '400 mm', torque: '240 N*m' }],
    gearMeshes: [{ id: 'G1', ...ends, sense, ...mesh }],
  });
}

// closed form for a rigid mesh (compatibility r_A φ_A = ∓ r_C φ_C, torque-twist φ = T L / (G J);
// Philpot §6.10 / Gere & Goodno §3.8 gear problems, from memory):
//   φ_A = T0 / (k1 + n² k2), n = r_A / r_C;  F = k2 n φ_A / r_C;  T_B = −k1 φ_A;  T_D = ± k2 n φ_A
const phiA = T0 / (k1 + n * n * k2);
const F = (k2 * n * phiA) / rC;

describe.each(SOLVERS)('rigid external gear pair, each shaft fixed at its far end (%s solver)', (solver) => {
  const sol = solve(gearPair('opposite', 'radius'), solver);

  it('shares the torque as k1 : n²·k2 and turns the gears in opposite senses', () => {
    expectClose(station(sol, 's1', L).rotation, phiA);
    // s = −1: r_A φ_A + r_C φ_C = 0
    expectClose(station(sol, 's2', L).rotation, -n * phiA);
    expectClose(reaction(sol, 'B').torque, -k1 * phiA);
    expectClose(reaction(sol, 'D').torque, k2 * n * phiA);
    expectEquilibrium(sol, T0);
  });

  it('reports the tooth force and the torques it puts on each shaft', () => {
    const g = gearMesh(sol, 'G1');
    // contract: torque −F r_a on shaft a and +s F r_b on shaft b (s = −1)
    expectClose(g.force, F);
    expectClose(g.torqueA, -F * rA);
    expectClose(g.torqueB, -F * rC);
    expectClose(g.radiusA, rA);
    expectClose(g.radiusB, rC);
    expectClose(g.gap, 0, 1e-9, rA * phiA);
  });

  it('gives the shaft-2 shear stress τ2 = T2 c / J', () => {
    const T2 = k2 * n * phiA;
    expectClose(segment(sol, 's2', 0).maxAbsTorque, T2);
    expectClose(layer(segment(sol, 's2', 0), 'brass').maxShear, (T2 * 0.008) / jSolid(0.016));
  });
});

describe('rigid gear pair with sense "same" (internal gear, belt or chain), gears given by teeth and module', () => {
  const sol = solve(gearPair('same', 'teeth'));

  it('has the same magnitudes as the external pair and turns both shafts one way', () => {
    // closed form as above with s = +1: r_A φ_A − r_C φ_C = 0, torque +F r_C on shaft b
    expectClose(station(sol, 's1', L).rotation, phiA);
    expectClose(station(sol, 's2', L).rotation, n * phiA);
    expectClose(reaction(sol, 'B').torque, -k1 * phiA);
    expectClose(reaction(sol, 'D').torque, -k2 * n * phiA);
    const g = gearMesh(sol, 'G1');
    expectClose(g.force, F);
    expectClose(g.torqueA, -F * rA);
    expectClose(g.torqueB, F * rC);
    // pitch radius = module × teeth / 2
    expectClose(g.radiusA, 0.075);
    expectClose(g.radiusB, 0.05);
    expectEquilibrium(sol, T0);
  });
});

describe('compliant external gear pair with a tangential offset', () => {
  const km = 2e6; // N/m, "2000 N/mm"
  const offset = 0.5e-3; // m
  const sol = solve(gearPair('opposite', 'radius', { stiffness: '2000 N/mm', offset: '0.5 mm' }));
  // closed form from the contract's mesh law F = km·g, g = r_a φ_a − s r_b φ_b − offset, with
  // φ_a = (T0 − F r_a)/k1 and φ_b = s F r_b / k2 (series springs; model-format.md kinematics):
  //   F (1/km + r_a²/k1 + r_b²/k2) = r_a T0 / k1 − offset
  const Fc = ((rA * T0) / k1 - offset) / (1 / km + (rA * rA) / k1 + (rC * rC) / k2);

  it('gives the tooth force, the gap F/km and the shaft rotations', () => {
    const g = gearMesh(sol, 'G1');
    expectClose(g.force, Fc);
    expectClose(g.gap, Fc / km);
    expectClose(g.torqueA, -Fc * rA);
    expectClose(g.torqueB, -Fc * rC);
    expectClose(station(sol, 's1', L).rotation, (T0 - Fc * rA) / k1);
    expectClose(station(sol, 's2', L).rotation, (-Fc * rC) / k2);
    expectClose(reaction(sol, 'B').torque, -(T0 - Fc * rA));
    expectClose(reaction(sol, 'D').torque, Fc * rC);
    expectEquilibrium(sol, T0);
  });

  it('is softer than the rigid mesh: less torque reaches shaft 2', () => {
    expect(Math.abs(reaction(sol, 'D').torque)).toBeLessThan(k2 * n * phiA);
  });
});
