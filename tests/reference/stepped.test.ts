/**
 * Stepped shafts of two or three materials held at both ends, loaded at a step
 * or inside a segment: the torque splits by the stiffnesses k_i = G_i J_i / L_i
 * of the two sides.
 */
import { describe, expect, it } from 'vitest';
import { stationColumns } from '../../shared-types/present.js';
import {
  IN,
  LBF_IN,
  PSI,
  SOLVERS,
  expectClose,
  expectEquilibrium,
  expectPublished,
  jHollow,
  jSolid,
  layer,
  model,
  reaction,
  segment,
  solve,
  station,
  stiffness,
} from './helpers.js';

const MPA = 1e6;

describe.each(SOLVERS)('hollow steel + solid brass between walls, 1000 N·m at the flange (%s solver)', (solver) => {
  // Inputs: MecMovies M6.20 (T. A. Philpot, companion of "Mechanics of Materials: An Integrated Learning System"),
  // https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_20_s000.html
  const sol = solve(
    model('MecMovies M6.20', {
      materials: [
        { id: 'steel', G: '75 GPa' },
        { id: 'brass', G: '40 GPa' },
      ],
      sections: [
        { id: 'h50x40', shape: 'hollow', d: '50 mm', di: '40 mm' },
        { id: 'd50', shape: 'solid', d: '50 mm' },
      ],
      shafts: [
        {
          id: 's',
          segments: [
            { length: '1500 mm', section: 'h50x40', material: 'steel' },
            { length: '1000 mm', section: 'd50', material: 'brass' },
          ],
        },
      ],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'C', shaft: 's', at: '2500 mm', kind: 'fixed' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '1500 mm', torque: '1000 N*m' }],
    }),
    solver,
  );
  const k1 = stiffness(75e9, jHollow(0.05, 0.04), 1.5);
  const k2 = stiffness(40e9, jSolid(0.05), 1.0);

  it('matches the published internal torques, stresses and flange rotation (printed to 2 and 5 decimals)', () => {
    const B = station(sol, 's', 1.5);
    // MecMovies M6.20 summary (m06_20_s120.html): T1 = 424.63 N·m, T2 = −575.37 N·m
    expectPublished(B.torqueLeft, 424.63, 0.005);
    expectPublished(B.torqueRight, -575.37, 0.005);
    // MecMovies M6.20 summary: τ1 = 29.30 MPa, τ2 = 23.44 MPa (magnitudes)
    expectPublished(layer(segment(sol, 's', 0), 'steel').maxShear, 29.3, 0.005, MPA);
    expectPublished(layer(segment(sol, 's', 1), 'brass').maxShear, 23.44, 0.005, MPA);
    // MecMovies M6.20 summary: φB = +0.02344 rad
    expectPublished(B.rotation, 0.02344, 0.000005);
  });

  it('splits the torque by stiffness exactly: T_A = −T·k1/(k1+k2), T_C = −T·k2/(k1+k2)', () => {
    // closed form: compatibility φ1 + φ2 = 0 with φ_i = T_i L_i / (G_i J_i), Philpot §6.9 / Gere & Goodno §3.8 (from memory)
    expectClose(reaction(sol, 'A').torque, (-1000 * k1) / (k1 + k2));
    expectClose(reaction(sol, 'C').torque, (-1000 * k2) / (k1 + k2));
    expectClose(station(sol, 's', 1.5).rotation, 1000 / (k1 + k2));
    expectClose(segment(sol, 's', 0).twist, 1000 / (k1 + k2));
    expectClose(segment(sol, 's', 1).twist, -1000 / (k1 + k2));
    expectEquilibrium(sol, 1000);
  });
});

describe('hollow steel + solid bronze between walls, loaded to the bronze allowable', () => {
  // Inputs: MecMovies M6.21 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_21_s000.html
  // steel hollow 80/65 mm, G = 76 GPa, 4 m; bronze solid 80 mm, G = 38 GPa, 3 m; allowables 90 and 50 MPa.
  const J1 = jHollow(0.08, 0.065);
  const J2 = jSolid(0.08);
  const k1 = stiffness(76e9, J1, 4);
  const k2 = stiffness(38e9, J2, 3);
  // closed form: the bronze governs; T2 = τ_allow J2 / c2, φB = T2 / k2, T = (k1 + k2) φB (Philpot M6.21 method)
  const phiB = (50e6 * J2) / 0.04 / k2;
  const T = (k1 + k2) * phiB;
  const sol = solve(
    model('MecMovies M6.21', {
      materials: [
        { id: 'steel', G: '76 GPa', allowableShear: '90 MPa' },
        { id: 'bronze', G: '38 GPa', allowableShear: '50 MPa' },
      ],
      sections: [
        { id: 'h80x65', shape: 'hollow', d: '80 mm', di: '65 mm' },
        { id: 'd80', shape: 'solid', d: '80 mm' },
      ],
      shafts: [
        {
          id: 's',
          segments: [
            { length: '4 m', section: 'h80x65', material: 'steel' },
            { length: '3 m', section: 'd80', material: 'bronze' },
          ],
        },
      ],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'C', shaft: 's', at: '7 m', kind: 'fixed' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '4 m', torque: T }],
    }),
  );

  it('matches the published torques, stresses and rotation', () => {
    const B = station(sol, 's', 4);
    // MecMovies M6.21 summary (m06_21_s130.html): T1 = 4,253.92 N·m, T2 = −5,026.55 N·m
    expectPublished(B.torqueLeft, 4253.92, 0.005);
    expectPublished(B.torqueRight, -5026.55, 0.005);
    // MecMovies M6.21 summary: τ1 = 75.00 MPa, τ2 = 50.00 MPa
    expectPublished(layer(segment(sol, 's', 0), 'steel').maxShear, 75.0, 0.005, MPA);
    expectPublished(layer(segment(sol, 's', 1), 'bronze').maxShear, 50.0, 0.005, MPA);
    // MecMovies M6.21 summary: φB = +0.09868 rad
    expectPublished(B.rotation, 0.09868, 0.000005);
  });

  it('reports utilisation τ/τ_allow: exactly 1 in the bronze, 75/90 in the steel', () => {
    const bronze = layer(segment(sol, 's', 1), 'bronze');
    const steel = layer(segment(sol, 's', 0), 'steel');
    expectClose(bronze.allowableShear, 50e6);
    expectClose(bronze.utilisation, 1);
    // closed form: τ1 = T1 c1 / J1 with T1 = k1 φB
    expectClose(steel.maxShear, (k1 * phiB * 0.04) / J1);
    expectClose(steel.utilisation, (k1 * phiB * 0.04) / J1 / 90e6);
    // checks are sorted worst first: the bronze shear check leads
    const worst = sol.checks[0];
    expect(worst.kind).toBe('shear');
    expect(worst.segment).toBe(segment(sol, 's', 1).index);
    expectClose(worst.utilisation, 1);
    expectEquilibrium(sol, T);
  });
});

describe('three-segment stepped shaft in US units, torque inside the middle segment', () => {
  // Inputs (invented for this suite): steel 1.5 in solid × 10 in, aluminium 2 in / 1.25 in hollow × 14 in
  // (E = 10 Msi, ν = 0.33), bronze 1 in solid × 8 in; walls at both ends; 8 kip·in at z = 18 in.
  const Gs = 11.5e6 * PSI;
  const Ga = (10e6 * PSI) / (2 * (1 + 0.33));
  const Gb = 5.6e6 * PSI;
  const f = [
    (10 * IN) / (Gs * jSolid(1.5 * IN)),
    (14 * IN) / (Ga * jHollow(2 * IN, 1.25 * IN)),
    (8 * IN) / (Gb * jSolid(1 * IN)),
  ];
  const a = 18 * IN;
  // flexibility left and right of the load: the middle segment is cut at z = 18 in (8 of its 14 in on the left)
  const fLeft = f[0] + (f[1] * 8) / 14;
  const fRight = (f[1] * 6) / 14 + f[2];
  const T0 = 8000 * LBF_IN;
  const sol = solve(
    model('Three-segment stepped shaft', {
      materials: [
        { id: 'steel', G: '11.5 Msi' },
        { id: 'alu', E: '10 Msi', nu: 0.33 },
        { id: 'bronze', G: '5600 ksi' },
      ],
      sections: [
        { id: 'd1.5', shape: 'solid', d: '1.5 in' },
        { id: 't2', shape: 'hollow', d: '2 in', di: '1.25 in' },
        { id: 'd1', shape: 'solid', d: '1 in' },
      ],
      shafts: [
        {
          id: 's',
          segments: [
            { length: '10 in', section: 'd1.5', material: 'steel' },
            { length: '14 in', section: 't2', material: 'alu' },
            { length: '8 in', section: 'd1', material: 'bronze' },
          ],
        },
      ],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'D', shaft: 's', at: '32 in', kind: 'fixed' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '18 in', torque: '8 kip*in' }],
    }),
  );

  it('splits the torque by the flexibilities of the two sides', () => {
    // closed form: T_A = −T0 f_R/(f_L+f_R), T_D = −T0 f_L/(f_L+f_R), φ(a) = T0 f_L f_R/(f_L+f_R),
    // force method for a statically indeterminate torsion member (Gere & Goodno §3.8, from memory)
    expectClose(reaction(sol, 'A').torque, (-T0 * fRight) / (fLeft + fRight));
    expectClose(reaction(sol, 'D').torque, (-T0 * fLeft) / (fLeft + fRight));
    expectClose(station(sol, 's', a).rotation, (T0 * fLeft * fRight) / (fLeft + fRight));
    // rotation at the first step: φ = T_int f_0 with T_int = −T_A
    expectClose(station(sol, 's', 10 * IN).rotation, ((T0 * fRight) / (fLeft + fRight)) * f[0]);
    expectClose(segment(sol, 's', 1).torsionalRigidity, Ga * jHollow(2 * IN, 1.25 * IN));
    expectEquilibrium(sol, T0);
  });

  it('gives the governing shear in each material: τ = T c / J', () => {
    const TL = (T0 * fRight) / (fLeft + fRight);
    const TR = (T0 * fLeft) / (fLeft + fRight);
    expectClose(layer(segment(sol, 's', 0), 'steel').maxShear, (TL * 0.75 * IN) / jSolid(1.5 * IN));
    // the middle segment carries TL left of the load and −TR right of it: the larger governs
    expectClose(segment(sol, 's', 1).maxAbsTorque, Math.max(TL, TR));
    expectClose(layer(segment(sol, 's', 1), 'alu').maxShear, (Math.max(TL, TR) * IN) / jHollow(2 * IN, 1.25 * IN));
    expectClose(layer(segment(sol, 's', 2), 'bronze').maxShear, (TR * 0.5 * IN) / jSolid(1 * IN));
  });
});

describe('the shear diagram and the station table jump where the diameter steps', () => {
  // A cantilever of d = 40 mm then d = 30 mm (steel, G = 80 GPa), 0.3 m each, with 200 N·m at its free end:
  // T = 200 N·m all along, τ = 16 T / (π d³) on each side of the step (solid round bar, closed form).
  const T = 200;
  const sol = solve(
    model('Stepped cantilever (invented)', {
      materials: [{ id: 'steel', G: 80e9 }],
      sections: [
        { id: 'd40', shape: 'solid', d: 0.04 },
        { id: 'd30', shape: 'solid', d: 0.03 },
      ],
      shafts: [{ id: 's', segments: [{ length: 0.3, section: 'd40', material: 'steel' }, { length: 0.3, section: 'd30', material: 'steel' }] }],
      supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
      torques: [{ id: 'T', shaft: 's', at: 0.6, torque: T }],
    }),
  );
  const tau = (d: number) => (16 * T) / (Math.PI * d ** 3);

  it('has two points at the step, τ of the larger then of the smaller diameter', () => {
    const dg = sol.shafts[0].diagram;
    const at = dg.z.flatMap((z, i) => (z === 0.3 ? [i] : []));
    expect(at.length).toBe(2);
    expectClose(dg.shear[at[0]], tau(0.04), 1e-12);
    expectClose(dg.shear[at[1]], tau(0.03), 1e-12);
    expectClose(dg.torque[at[0]], T, 1e-12);
    expectClose(dg.torque[at[1]], T, 1e-12);
  });

  it('gives the station at the step the larger stress, that of the smaller diameter, in the CSV', () => {
    const cols = stationColumns(sol);
    const d = Array.from(cols.z).indexOf(0.3);
    expectClose(cols.shear[d], tau(0.03), 1e-12);
    expectClose(cols.shear[0], tau(0.04), 1e-12);
  });
});
