/**
 * Bonded concentric composite shafts: every layer twists alike, so the torque
 * shares in proportion to G_i J_i and τ_i = G_i r T / Σ G J.
 */
import { describe, expect, it } from 'vitest';
import {
  expectClose,
  expectEquilibrium,
  expectPublished,
  jHollow,
  jSolid,
  layer,
  model,
  reaction,
  segment,
  shaft,
  solve,
  station,
} from './helpers.js';

const MPA = 1e6;

/** A cantilever of the MecMovies aluminium-over-bronze section, length L (m), torque T (N·m) at the free end. */
function alBronze(name: string, L: number, T: number, allowables: boolean): Record<string, unknown> {
  return model(name, {
    materials: [
      { id: 'aluminum', G: '26 GPa', ...(allowables ? { allowableShear: '85 MPa' } : {}) },
      { id: 'bronze', G: '38 GPa', ...(allowables ? { allowableShear: '100 MPa' } : {}) },
    ],
    sections: [
      {
        id: 'clad',
        shape: 'layered',
        di: '30 mm',
        layers: [
          { d: '42 mm', material: 'bronze' },
          { d: '50 mm', material: 'aluminum' },
        ],
      },
    ],
    shafts: [{ id: 's', segments: [{ length: L, section: 'clad' }] }],
    supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
    torques: [{ id: 'T', shaft: 's', at: L, torque: T }],
  });
}

const J1 = jHollow(0.05, 0.042); // aluminium tube
const J2 = jHollow(0.042, 0.03); // bronze tube
const GJ1 = 26e9 * J1;
const GJ2 = 38e9 * J2;

describe('aluminium tube bonded to a bronze tube, 1400 N·m at the free end', () => {
  // Inputs: MecMovies M6.19 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_19_s000.html
  const sol = solve(alBronze('MecMovies M6.19', 1.0, 1400, false));
  const seg = () => segment(sol, 's', 0);

  it('matches the published shear stresses (printed to 2 decimals)', () => {
    // MecMovies M6.19 (m06_19_s100.html): τ1 = 54.83 MPa (aluminium), τ2 = 67.31 MPa (bronze)
    expectPublished(layer(seg(), 'aluminum').maxShear, 54.83, 0.005, MPA);
    expectPublished(layer(seg(), 'bronze').maxShear, 67.31, 0.005, MPA);
  });

  it('implies the published torque share T1 = 675.7 N·m, T2 = 724.3 N·m', () => {
    // MecMovies M6.19 (m06_19_s100.html): T1 = 675.7 N·m, T2 = 724.3 N·m; T_i = τ_i J_i / c_i
    expectPublished((layer(seg(), 'aluminum').maxShear * J1) / 0.025, 675.7, 0.05);
    expectPublished((layer(seg(), 'bronze').maxShear * J2) / 0.021, 724.3, 0.05);
  });

  it('shares by G·J exactly and twists by T·L/ΣGJ', () => {
    // closed form: τ_i = G_i c_i T / (G1 J1 + G2 J2), φB = T L / (G1 J1 + G2 J2) (Philpot §6.9, from memory)
    expectClose(seg().torsionalRigidity, GJ1 + GJ2);
    expectClose(layer(seg(), 'aluminum').maxShear, (26e9 * 0.025 * 1400) / (GJ1 + GJ2));
    expectClose(layer(seg(), 'bronze').maxShear, (38e9 * 0.021 * 1400) / (GJ1 + GJ2));
    expectClose(layer(seg(), 'aluminum').outerRadius, 0.025);
    expectClose(layer(seg(), 'bronze').outerRadius, 0.021);
    expectClose(station(sol, 's', 1.0).rotation, 1400 / (GJ1 + GJ2));
    expectClose(reaction(sol, 'A').torque, -1400);
    expectEquilibrium(sol, 1400);
  });
});

describe('the same section, 400 mm long, loaded until one allowable is reached', () => {
  // Inputs: MecMovies M6.22 (Philpot), https://drbuc2jl8158i.cloudfront.net/shared/Engeneering/mecmovies/ch06/m06_22_s000.html
  // closed form: the bronze governs (100 MPa); T2 = τ J2 / c2, φ = T2 / (G2 J2), T = (G1J1 + G2J2) φ
  const phi = (100e6 * J2) / 0.021 / GJ2; // rad per m
  const T = (GJ1 + GJ2) * phi;
  const sol = solve(alBronze('MecMovies M6.22', 0.4, T, true));
  const seg = () => segment(sol, 's', 0);

  it('matches the published stresses, torques and end rotation', () => {
    // MecMovies M6.22 summary (m06_22_s130.html): τ1 = 81.45 MPa, τ2 = 100 MPa
    expectPublished(layer(seg(), 'aluminum').maxShear, 81.45, 0.005, MPA);
    expectPublished(layer(seg(), 'bronze').maxShear, 100, 0.005, MPA);
    // MecMovies M6.22 summary: T1 = 1,003.8 N·m, T2 = 1,076.0 N·m
    expectPublished((layer(seg(), 'aluminum').maxShear * J1) / 0.025, 1003.8, 0.05);
    expectPublished((layer(seg(), 'bronze').maxShear * J2) / 0.021, 1076.0, 0.05);
    // MecMovies M6.22 summary: φB = +0.05012 rad. The page carries rounded intermediates
    // (exact: 0.0501253), so this one is compared to ±1 in its last printed digit.
    expectPublished(station(sol, 's', 0.4).rotation, 0.05012, 0.00001);
  });

  it('reports utilisation 1 in the bronze and 81.45/85 in the aluminium', () => {
    expectClose(layer(seg(), 'bronze').utilisation, 1);
    expectClose(layer(seg(), 'aluminum').utilisation, (26e9 * 0.025 * phi) / 85e6);
    const shearChecks = sol.checks.filter((c) => c.kind === 'shear');
    expect(shearChecks.length).toBeGreaterThanOrEqual(2);
    expectClose(shearChecks[0].utilisation, 1);
    expect(shearChecks[0].material).toBe('bronze');
  });
});

describe('steel core bonded inside a bronze tube given by E and ν, held at both ends', () => {
  // Inputs (invented for this suite, section as in the demo): steel core 30 mm (G = 79.3 GPa) in a bronze
  // tube 45 mm (E = 110 GPa, ν = 0.34); 400 mm between walls; 250 N·m at 150 mm.
  const Gst = 79.3e9;
  const Gbr = 110e9 / (2 * (1 + 0.34)); // G = E / (2(1 + ν)), isotropic elasticity
  const GJ = Gst * jSolid(0.03) + Gbr * jHollow(0.045, 0.03);
  const T0 = 250;
  const a = 0.15;
  const L = 0.4;
  const sol = solve(
    model('Clad shaft between walls', {
      materials: [
        { id: 'steel', G: '79.3 GPa' },
        { id: 'bronze', E: '110 GPa', nu: 0.34 },
      ],
      sections: [
        {
          id: 'clad',
          shape: 'layered',
          di: 0,
          layers: [
            { d: '30 mm', material: 'steel' },
            { d: '45 mm', material: 'bronze' },
          ],
        },
      ],
      shafts: [{ id: 's', segments: [{ length: '400 mm', section: 'clad' }] }],
      supports: [
        { id: 'A', shaft: 's', at: 0, kind: 'fixed' },
        { id: 'B', shaft: 's', at: '400 mm', kind: 'fixed' },
      ],
      torques: [{ id: 'T', shaft: 's', at: '150 mm', torque: '250 N*m' }],
    }),
  );

  it('uses ΣGJ as one rigidity: reactions −T0·b/L and −T0·a/L, φ(a) = T0·a·b/(L·ΣGJ)', () => {
    // closed form: uniform fixed-fixed bar with GJ → Σ G_i J_i (Gere & Goodno §3.8 and §3.5 composite bars, from memory)
    expectClose(segment(sol, 's', 0).torsionalRigidity, GJ);
    expectClose(reaction(sol, 'A').torque, (-T0 * (L - a)) / L);
    expectClose(reaction(sol, 'B').torque, (-T0 * a) / L);
    expectClose(station(sol, 's', a).rotation, (T0 * a * (L - a)) / (L * GJ));
    expectClose(shaft(sol, 's').totalTwist, (T0 * a * (L - a)) / (L * GJ));
    expectEquilibrium(sol, T0);
  });

  it('gives each layer τ = G_i c_i T_max / ΣGJ', () => {
    const Tmax = (T0 * (L - a)) / L;
    const seg = segment(sol, 's', 0);
    expectClose(layer(seg, 'steel').maxShear, (Gst * 0.015 * Tmax) / GJ);
    expectClose(layer(seg, 'bronze').maxShear, (Gbr * 0.0225 * Tmax) / GJ);
    expectClose(seg.maxTwistRate, Tmax / GJ);
  });
});
