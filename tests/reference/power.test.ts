/**
 * Torques given as power and speed: T = P / ω. Checked in SI (kW, rpm) and in
 * US units (hp, rpm, in, Msi) on a published gear-train example.
 */
import { describe, expect, it } from 'vitest';
import {
  HP,
  IN,
  LBF_FT,
  LBF_IN,
  PSI,
  RPM,
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
} from './helpers.js';

describe('15 kW at 1450 rpm on a cantilever', () => {
  const sol = solve(
    model('Power take-off', {
      materials: [{ id: 'steel', G: '79.3 GPa' }],
      sections: [{ id: 'd40', shape: 'solid', d: '40 mm' }],
      shafts: [{ id: 's', segments: [{ length: '300 mm', section: 'd40', material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
      torques: [
        { id: 'motor', shaft: 's', at: '300 mm', power: '15 kW', speed: '1450 rpm' },
        { id: 'pump', shaft: 's', at: '100 mm', power: -5000, speed: 50 },
      ],
    }),
  );

  it('turns power and speed into T = P/ω', () => {
    // closed form: T = P / ω with ω = 2π n / 60 (definition of power of a rotating shaft)
    const Tmotor = 15e3 / (1450 * RPM); // = 98.78583 N·m
    const Tpump = -5000 / 50; // N·m, SI numbers: W and rad/s
    expectClose(reaction(sol, 'A').torque, -(Tmotor + Tpump));
    expectClose(station(sol, 's', 0.3).torqueLeft, Tmotor);
    expectClose(station(sol, 's', 0.1).torqueLeft, Tmotor + Tpump);
    expectClose(station(sol, 's', 0.3).rotation, (Tmotor * 0.2 + (Tmotor + Tpump) * 0.1) / (79.3e9 * jSolid(0.04)));
    expectEquilibrium(sol, Tmotor);
  });
});

describe('15 hp motor at 1800 rpm through a 24:72 gear pair (US units)', () => {
  // Inputs: MecMovies M6.18 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_18_s010.html
  // shaft (1): 0.75 in × 36 in from the motor flange A to gear B (24 teeth); shaft (2): 1.25 in × 96 in from
  // gear C (72 teeth) to gear D; G = 12,000 ksi. The motor flange holds shaft (1); the load at D takes the
  // power at the output speed 1800·24/72 = 600 rpm.
  const sol = solve(
    model('MecMovies M6.18', {
      materials: [{ id: 'steel', G: '12 Msi' }],
      sections: [
        { id: 'd0.75', shape: 'solid', d: '0.75 in' },
        { id: 'd1.25', shape: 'solid', d: '1.25 in' },
      ],
      shafts: [
        { id: 'one', segments: [{ length: '36 in', section: 'd0.75', material: 'steel' }] },
        { id: 'two', segments: [{ length: '96 in', section: 'd1.25', material: 'steel' }] },
      ],
      supports: [{ id: 'A', shaft: 'one', at: 0, kind: 'fixed' }],
      torques: [{ id: 'D', shaft: 'two', at: '96 in', power: '15 hp', speed: '600 rpm' }],
      gearMeshes: [
        {
          id: 'BC',
          a: { shaft: 'one', at: '36 in', teeth: 24 },
          b: { shaft: 'two', at: 0, teeth: 72 },
          module: '3 mm',
          sense: 'opposite',
        },
      ],
    }),
  );

  it('gives the published motor torque T1 = 43.768 lb·ft and T2 = 131.303 lb·ft', () => {
    // MecMovies M6.18 (m06_18_s030.html): T1 = P/ω = 43.768 lb·ft
    expectPublished(Math.abs(reaction(sol, 'A').torque), 43.768, 0.0005, LBF_FT);
    expectPublished(segment(sol, 'one', 0).maxAbsTorque, 43.768, 0.0005, LBF_FT);
    // MecMovies M6.18 (m06_18_s032.html): T2 = TD = TC = 131.303 lb·ft
    expectPublished(segment(sol, 'two', 0).maxAbsTorque, 131.303, 0.0005, LBF_FT);
    // closed form: T1 = P / ω exactly, with 1 hp = 550 ft·lbf/s
    expectClose(segment(sol, 'one', 0).maxAbsTorque, (15 * HP) / (1800 * RPM));
    expectEquilibrium(sol, (15 * HP) / (600 * RPM));
  });

  it('agrees with the handbook relation T[lbf·in] = 63025·P[hp]/n[rpm] to its 5 figures', () => {
    // published handbook relation T = 63025 P / n (lbf·in, hp, rpm), e.g. Machinery's Handbook, power transmission
    // (from memory; the constant is 550·12·60/(2π) = 63025.4 rounded to 5 figures, so compared at 1e-5)
    expectClose(segment(sol, 'one', 0).maxAbsTorque / LBF_IN, (63025 * 15) / 1800, 1e-5);
    expectClose(segment(sol, 'two', 0).maxAbsTorque / LBF_IN, (63025 * 15) / 600, 1e-5);
  });

  it('gives the published shear stress in shaft (1)', () => {
    // MecMovies M6.18 (m06_18_s041.html): τ1 = 6,340 psi (its intermediate 6,340.455 carries a rounded T1)
    expectPublished(layer(segment(sol, 'one', 0), 'steel').maxShear, 6340, 0.5, PSI);
    // closed form: τ2 = T2 c2 / J2 (the page's value was not found)
    const T2 = (15 * HP) / (600 * RPM);
    expectClose(layer(segment(sol, 'two', 0), 'steel').maxShear, (T2 * 0.625 * IN) / jSolid(1.25 * IN));
  });

  it('gives the published rotations: |φB| = 0.050724, |φC| = 0.016908, |φD| = 0.069498 rad', () => {
    const phiB = station(sol, 'one', 36 * IN).rotation;
    const phiC = station(sol, 'two', 0).rotation;
    const phiD = station(sol, 'two', 96 * IN).rotation;
    // MecMovies M6.18 (m06_18_s052.html, s063, s070): φ1 = −0.050724 rad, φC = 0.016908 rad, φD = 0.069498 rad
    expectPublished(Math.abs(phiB), 0.050724, 0.0000005);
    expectPublished(Math.abs(phiC), 0.016908, 0.0000005);
    expectPublished(Math.abs(phiD), 0.069498, 0.0000005);
    // the external pair reverses the sense; shaft (2)'s own twist adds to the gear rotation
    expect(Math.sign(phiC)).toBe(-Math.sign(phiB));
    expect(Math.sign(phiD)).toBe(Math.sign(phiC));
    // closed form: r_B φ_B + r_C φ_C = 0 with r ∝ teeth
    expectClose(phiC, (-phiB * 24) / 72);
  });
});
