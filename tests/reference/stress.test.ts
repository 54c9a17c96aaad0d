/**
 * Section properties and stresses: J of solid and hollow circles, τ = T·r_o/J,
 * φ = T·L/(G·J), and the twist-rate check against a limit.
 */
import { describe, expect, it } from 'vitest';
import {
  DEG,
  FT,
  IN,
  LBF_FT,
  PSI,
  expectClose,
  expectEquilibrium,
  expectPublished,
  jHollow,
  jSolid,
  layer,
  model,
  segment,
  solve,
  station,
} from './helpers.js';

const MPA = 1e6;

function cantilever(section: Record<string, unknown>, G: string | number, length: string | number, torque: string | number): Record<string, unknown> {
  return model('Cantilever', {
    materials: [{ id: 'm', G }],
    sections: [{ id: 'x', ...section }],
    shafts: [{ id: 's', segments: [{ length, section: 'x', material: 'm' }] }],
    supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T', shaft: 's', at: length, torque }],
  });
}

describe('hollow shaft 114/102 mm under 5000 N·m', () => {
  // Inputs: MecMovies M15.1 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch15/m15_01_s041.html
  // (G is not part of the example; stress does not depend on it.)
  const sol = solve(cantilever({ shape: 'hollow', d: '114 mm', di: '102 mm' }, '79.3 GPa', '1 m', '5 kN*m'));
  const seg = () => segment(sol, 's', 0);

  it('has the published J = 5,954,575 mm⁴ and τ = 47.86 MPa', () => {
    // MecMovies M15.1: J = π/32 (114⁴ − 102⁴) = 5,954,575 mm⁴
    expectPublished(seg().torsionalRigidity / 79.3e9, 5954575, 0.5, 1e-12);
    // MecMovies M15.1: τ = T c / J = 47.86 MPa
    expectPublished(layer(seg(), 'm').maxShear, 47.86, 0.005, MPA);
  });

  it('has τ = T·r_o/J and φ = T·L/(G·J) exactly', () => {
    const J = jHollow(0.114, 0.102);
    // closed form: J = π (d⁴ − di⁴)/32, τ_max = T r_o / J (elastic torsion formula)
    expectClose(layer(seg(), 'm').outerRadius, 0.057);
    expectClose(layer(seg(), 'm').maxShear, (5000 * 0.057) / J);
    expectClose(station(sol, 's', 1).rotation, 5000 / (79.3e9 * J));
    expectEquilibrium(sol, 5000);
  });
});

describe('hollow shaft 40 mm with a 5 mm wall', () => {
  // Inputs and J: MecMovies M6.4 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_04_s030.html
  const sol = solve(cantilever({ shape: 'hollow', d: '40 mm', di: '30 mm' }, 80e9, 0.5, 100));

  it('has the published J = 171,805.85 mm⁴', () => {
    // MecMovies M6.4: J = π/32 (40⁴ − 30⁴) = 171,805.85 mm⁴
    expectPublished(segment(sol, 's', 0).torsionalRigidity / 80e9, 171805.85, 0.005, 1e-12);
    expectClose(segment(sol, 's', 0).torsionalRigidity, 80e9 * jHollow(0.04, 0.03));
  });
});

describe('solid steel shaft 4 in × 3 ft under 15 kip·ft (US units)', () => {
  // Inputs: Pytel & Singer, Strength of Materials, Problem 304 (statement at
  // https://mathalino.com/reviewer/mechanics-and-strength-of-materials/solution-to-problem-304-torsion);
  // numbers as solved at http://www.mecha-engineeringbd.com/p/blog-page.html: τmax = 14.32 ksi, θ = 1.23°.
  const sol = solve(cantilever({ shape: 'solid', d: '4 in' }, '12000 ksi', '3 ft', '15 kip*ft'));
  const seg = () => segment(sol, 's', 0);

  it('has the published τmax = 14.32 ksi and θ = 1.23°', () => {
    // mecha-engineeringbd.com solution of Problem 304: τmax = 14.32 ksi
    expectPublished(layer(seg(), 'm').maxShear, 14.32, 0.005, 1000 * PSI);
    // mecha-engineeringbd.com solution of Problem 304: θ = 1.23°
    expectPublished(station(sol, 's', 3 * FT).rotation, 1.23, 0.005, DEG);
  });

  it('has τ = 16T/(πd³) and θ = TL/(GJ) exactly', () => {
    const T = 15000 * LBF_FT;
    const d = 4 * IN;
    expectClose(layer(seg(), 'm').maxShear, (16 * T) / (Math.PI * d ** 3));
    expectClose(seg().twist, (T * 3 * FT) / (12e6 * PSI * jSolid(d)));
    expectEquilibrium(sol, T);
  });
});

describe('twist-rate and total-twist checks against limits', () => {
  // Inputs (invented): 40 mm steel, 2 m cantilever, 400 N·m at the end; limits 0.25°/m and 1°.
  // The 0.25°/m figure is a common line-shaft stiffness limit (common practice, no source); only the
  // arithmetic of the check is under test here.
  const GJ = 79.3e9 * jSolid(0.04);
  const sol = solve({
    ...cantilever({ shape: 'solid', d: '40 mm' }, '79.3 GPa', '2 m', '400 N*m'),
    limits: { twistRate: '0.25 deg/m', totalTwist: '1 deg' },
  });

  it('reports value/limit for the twist rate and the total twist', () => {
    const rate = sol.checks.find((c) => c.kind === 'twistRate');
    const total = sol.checks.find((c) => c.kind === 'totalTwist');
    expect(rate).toBeDefined();
    expect(total).toBeDefined();
    // closed form: dφ/dz = T/(GJ); total twist = T L/(GJ)
    expectClose(rate!.value, 400 / GJ);
    expectClose(rate!.limit, 0.25 * DEG);
    expectClose(rate!.utilisation, 400 / GJ / (0.25 * DEG));
    expect(rate!.pass).toBe(400 / GJ <= 0.25 * DEG);
    expectClose(total!.value, (400 * 2) / GJ);
    expectClose(total!.limit, 1 * DEG);
    expect(total!.pass).toBe((400 * 2) / GJ <= 1 * DEG);
  });
});
