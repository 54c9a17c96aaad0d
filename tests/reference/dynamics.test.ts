/**
 * Natural frequencies against closed forms: uniform shafts fixed–free and fixed–fixed, two discs on a
 * massless shaft (free–free), a shaft with an end disc, a geared pair against its ratio-squared
 * reduction, and a three-disc chain against the roots of its cubic (with Holzer's residual torque).
 * Every expected value is computed here from the inputs; none comes from engine code.
 */
import { describe, expect, it } from 'vitest';
import { solveModel } from '../../server/engine/index.js';
import { ModelError } from '../../shared-types/errors.js';
import type { Solution } from '../../shared-types/solution.js';

/** The contract's accuracy of a frequency, relative. */
const FREQ_TOL = 1e-9;

const G = 79.3e9; // Pa
const RHO = 7850; // kg/m³
const D = 0.06; // m
const IP = (Math.PI * D ** 4) / 32; // m⁴, polar moment of a solid circle
const WAVE = Math.sqrt(G / RHO); // m/s, torsional wave speed √(G/ρ)

function expectRel(actual: number, expected: number, tol = FREQ_TOL): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tol * Math.abs(expected));
}

interface ShaftSpec {
  lengths: number[];
  density?: boolean;
}

/** One steel shaft of solid 60 mm segments, with the given extras. */
function shaftModel(spec: ShaftSpec, extras: Record<string, unknown>): Record<string, unknown> {
  return {
    format: 'shaftnet/1',
    name: 'dynamics reference',
    materials: [{ id: 'steel', G, ...(spec.density === false ? {} : { density: RHO }) }],
    sections: [{ id: 'd60', shape: 'solid', d: D }],
    shafts: [{ id: 's', segments: spec.lengths.map((length) => ({ length, section: 'd60', material: 'steel' })) }],
    ...extras,
  };
}

/** The root of f in [a, b] (f(a), f(b) of opposite signs) by bisection to the last bit: the test's own solver. */
function bisect(f: (x: number) => number, a0: number, b0: number): number {
  let a = a0;
  let b = b0;
  const fa = f(a);
  for (let k = 0; k < 200; k++) {
    const m = 0.5 * (a + b);
    if (m === a || m === b) break;
    if (f(m) > 0 === fa > 0) a = m;
    else b = m;
  }
  return 0.5 * (a + b);
}

describe('uniform shaft, fixed at one end, free at the other', () => {
  // Closed form ω_n = (2n − 1)·π/(2L)·√(G/ρ) (wave equation of a uniform shaft; e.g. Thomson,
  // Theory of Vibration with Applications, torsional vibration of rods, from memory).
  const L = 1.2;
  for (const lengths of [[L], [0.3, 0.5, 0.4], [0.0123, 1.1877]]) {
    it(`the lowest five frequencies, segments ${lengths.join(' + ')} m`, () => {
      const sol = solveModel(shaftModel({ lengths }, { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }], dynamics: { modes: 5 } }));
      const modes = sol.modes ?? [];
      expect(modes).toHaveLength(5);
      modes.forEach((m, k) => {
        const n = k + 1;
        const omega = (((2 * n - 1) * Math.PI) / (2 * L)) * WAVE;
        expectRel(m.angularFrequency, omega);
        expectRel(m.frequency, omega / (2 * Math.PI));
        expect(m.rigidBody).toBe(false);
      });
    });
  }

  it('mode shapes: sin((2n − 1)πz/2L) at the stations and along the drawing, largest |φ| +1', () => {
    const sol = solveModel(shaftModel({ lengths: [0.3, 0.5, 0.4] }, { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }], dynamics: { modes: 3 } }));
    (sol.modes ?? []).forEach((m, k) => {
      const kz = ((2 * k + 1) * Math.PI) / (2 * L);
      const shaft = m.shafts[0];
      // The largest |φ| at the stations is at the free end, |sin((2n − 1)π/2)| = 1: so φ = ±sin(kz) scaled by 1.
      const sign = Math.sign(Math.sin(kz * L));
      shaft.z.forEach((z, i) => expect(Math.abs(shaft.rotation[i] - sign * Math.sin(kz * z))).toBeLessThanOrEqual(1e-7));
      shaft.diagram.z.forEach((z, i) => expect(Math.abs(shaft.diagram.rotation[i] - sign * Math.sin(kz * z))).toBeLessThanOrEqual(1e-7));
      expect(Math.max(...shaft.rotation.map(Math.abs))).toBeCloseTo(1, 12);
      // One segment of uniform inertia: the energy shares follow ∫ sin² and ∫ cos² over each segment.
      const strain = m.energy.strain ?? [];
      const kinetic = m.energy.kinetic;
      expect(strain.reduce((s, x) => s + x.share, 0)).toBeCloseTo(1, 12);
      expect(kinetic.reduce((s, x) => s + x.share, 0)).toBeCloseTo(1, 12);
      const bounds = [0, 0.3, 0.8, 1.2];
      const sinSq = (a: number, b: number) => (b - a) / 2 - (Math.sin(2 * kz * b) - Math.sin(2 * kz * a)) / (4 * kz);
      const cosSq = (a: number, b: number) => (b - a) / 2 + (Math.sin(2 * kz * b) - Math.sin(2 * kz * a)) / (4 * kz);
      for (let j = 0; j < 3; j++) {
        expect(Math.abs(kinetic[j].share - sinSq(bounds[j], bounds[j + 1]) / sinSq(0, L))).toBeLessThanOrEqual(1e-9);
        expect(Math.abs(strain[j].share - cosSq(bounds[j], bounds[j + 1]) / cosSq(0, L))).toBeLessThanOrEqual(1e-9);
        expect(kinetic[j].item).toBe(`s[${j}]`);
      }
    });
  });
});

describe('uniform shaft, fixed at both ends', () => {
  // Closed form ω_n = n·π/L·√(G/ρ) (same source). Without an inner station every mode lies inside the
  // one element, whose ends are held: these roots are the clamped-element frequencies of the count.
  const L = 0.9;
  for (const stations of [[], [0.45], [0.2, 0.45, 0.7]]) {
    it(`the lowest five frequencies, inner stations at ${stations.join(', ') || 'none'}`, () => {
      const discs = stations.map((at, i) => ({ id: `p${i}`, shaft: 's', at, inertia: 0 }));
      const sol = solveModel(
        shaftModel({ lengths: [L] }, { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }, { id: 'B', shaft: 's', at: L, kind: 'fixed' }], discs, dynamics: { modes: 5 } }),
      );
      const modes = sol.modes ?? [];
      expect(modes).toHaveLength(5);
      modes.forEach((m, k) => {
        const n = k + 1;
        expectRel(m.angularFrequency, ((n * Math.PI) / L) * WAVE);
        // The shape is ±sin(nπz/L): compare along the drawing, scaled by its largest sample.
        const d = m.shafts[0].diagram;
        const ref = d.z.map((z) => Math.sin((n * Math.PI * z) / L));
        const peak = Math.max(...d.rotation.map(Math.abs));
        const sign = Math.sign(d.rotation.reduce((s, v, i) => s + v * ref[i], 0));
        const refPeak = Math.max(...ref.map(Math.abs));
        d.rotation.forEach((v, i) => expect(Math.abs(v / peak - (sign * ref[i]) / refPeak)).toBeLessThanOrEqual(1e-6));
      });
    });
  }
});

describe('two discs on a massless shaft, no support (free–free)', () => {
  // Closed form ω² = k·(J1 + J2)/(J1·J2), k = G·Ip/L, and a rigid-body mode at 0 (two-disc system;
  // Thomson, Theory of Vibration with Applications, two-degree-of-freedom systems, from memory).
  const L = 0.75;
  const J1 = 0.8;
  const J2 = 2.5;
  const k = (G * IP) / L;
  const model = shaftModel(
    { lengths: [L], density: false },
    { discs: [{ id: 'J1', shaft: 's', at: 0, inertia: J1 }, { id: 'J2', shaft: 's', at: L, inertia: J2 }], dynamics: { modes: 2 } },
  );
  it('a rigid-body mode at 0 Hz (no strain shares), then the elastic one; the statics are omitted with a warning', () => {
    const sol: Solution = solveModel(model);
    const [rigid, elastic] = sol.modes ?? [];
    expect(rigid.frequency).toBe(0);
    expect(rigid.rigidBody).toBe(true);
    expect(rigid.energy.strain).toBeNull();
    expect(rigid.shafts[0].rotation).toEqual([1, 1]);
    // Kinetic shares of a rigid turn: J_i / (J1 + J2).
    expectRel(rigid.energy.kinetic[0].share, J1 / (J1 + J2), 1e-12);
    expectRel(elastic.angularFrequency, Math.sqrt((k * (J1 + J2)) / (J1 * J2)));
    // The nodal amplitudes of the elastic mode are in the ratio −J1/J2 (momentum stays zero).
    const [a, b] = elastic.shafts[0].rotation;
    expectRel(b / a, -J1 / J2, 1e-9);
    expect(sol.warnings.map((w) => w.code)).toContain('SN_STATICS_OMITTED');
    expect(sol.shafts[0].stations).toEqual([]);
    expect(sol.reactions).toEqual([]);
  });
  it('without dynamics the same model is still a mechanism (422)', () => {
    const { dynamics, ...statics } = model as { dynamics: unknown };
    void dynamics;
    expect(() => solveModel(statics)).toThrow(ModelError);
    try {
      solveModel(statics);
    } catch (err) {
      expect((err as ModelError).code).toBe('SN_MECHANISM');
    }
  });
});

describe('a geared pair with no support', () => {
  // Rigid-body mode through a compliant mesh (contract kinematics g = r_a·φ_a − s·r_b·φ_b, "opposite"
  // s = −1): no stretch when φ_b = −(r_a/r_b)·φ_a. Kinetic shares J_a·φ_a² : J_b·φ_b². The elastic mode:
  // two inertias through the mesh spring k_t, ω² = k_t·(r_a²/J_a + r_b²/J_b) (closed form, two
  // inertias joined by a spring in the tangential coordinate).
  const [ra, rb, Ja, Jb, kt] = [0.05, 0.125, 0.02, 0.3, 2e8];
  it('the rigid-body mode turns the gears in the ratio of their radii; the elastic frequency is the closed form', () => {
    const sol = solveModel({
      format: 'shaftnet/1',
      name: 'free geared pair',
      materials: [{ id: 'steel', G }],
      sections: [{ id: 'd60', shape: 'solid', d: D }],
      shafts: [
        { id: 'a', segments: [{ length: 0.1, section: 'd60', material: 'steel' }] },
        { id: 'b', segments: [{ length: 0.1, section: 'd60', material: 'steel' }] },
      ],
      gearMeshes: [{ id: 'G', a: { shaft: 'a', at: 0.1, radius: ra }, b: { shaft: 'b', at: 0, radius: rb }, sense: 'opposite', stiffness: kt }],
      discs: [{ id: 'Ja', shaft: 'a', at: 0.1, inertia: Ja }, { id: 'Jb', shaft: 'b', at: 0, inertia: Jb }],
      dynamics: { modes: 2 },
    });
    const [rigid, elastic] = sol.modes ?? [];
    expect(rigid.rigidBody).toBe(true);
    const phiA = rigid.shafts[0].rotation[1];
    const phiB = rigid.shafts[1].rotation[0];
    expectRel(phiB / phiA, -ra / rb, 1e-12);
    const ea = Ja * phiA * phiA;
    const eb = Jb * phiB * phiB;
    expectRel(rigid.energy.kinetic[0].share, ea / (ea + eb), 1e-12);
    // The discs sit at the mesh's stations and the massless shafts run free beyond them, so the shafts
    // carry no torque: ω² = k_t·(r_a²/J_a + r_b²/J_b).
    expectRel(elastic.angularFrequency, Math.sqrt(kt * (ra * ra / Ja + rb * rb / Jb)));
  });
});

describe('shaft fixed at one end with a disc at the other', () => {
  // Closed form: β·tan β = J_shaft/J_disc, J_shaft = ρ·Ip·L, ω = β·√(G/ρ)/L (Thomson, torsional vibration
  // of a shaft with an end mass, from memory). For a ratio of 1 applied-mathematics handbooks tabulate
  // the first root as 0.8603 (recalled, not looked up: checked to its four printed digits only).
  const L = 1.0;
  const Jshaft = RHO * IP * L;
  for (const ratio of [1, 0.2, 5]) {
    it(`J_shaft/J_disc = ${ratio}: the lowest three roots of β tan β = ratio`, () => {
      const sol = solveModel(
        shaftModel({ lengths: [L] }, { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }], discs: [{ id: 'disc', shaft: 's', at: L, inertia: Jshaft / ratio }], dynamics: { modes: 3 } }),
      );
      (sol.modes ?? []).forEach((m, k) => {
        // The n-th root lies in (kπ, kπ + π/2), where β tan β runs from 0 up to +∞.
        const beta = bisect((b) => b * Math.tan(b) - ratio, k * Math.PI + 1e-12, k * Math.PI + Math.PI / 2 - 1e-12);
        expectRel(m.angularFrequency, (beta * WAVE) / L);
        if (ratio === 1 && k === 0) expect(Math.abs((m.angularFrequency * L) / WAVE - 0.8603)).toBeLessThanOrEqual(0.00005);
      });
    });
  }
});

describe('two identical shafts, each fixed with an end disc: every frequency twice', () => {
  // Closed form as above (β·tan β = J_shaft/J_disc), each root a double root of the whole model: the
  // count steps by two there, and the two modes found are orthogonal (each on its own shaft, or any
  // mass-orthogonal pair of their combinations).
  const L = 0.7;
  const Jshaft = RHO * IP * L;
  it('the lowest three roots, each twice, with mass-orthogonal shapes', () => {
    const shaft = (id: string) => ({ id, segments: [{ length: L, section: 'd60', material: 'steel' }] });
    const sol = solveModel({
      format: 'shaftnet/1',
      name: 'twins',
      materials: [{ id: 'steel', G, density: RHO }],
      sections: [{ id: 'd60', shape: 'solid', d: D }],
      shafts: [shaft('p'), shaft('q')],
      supports: [{ id: 'A', shaft: 'p', at: 0, kind: 'fixed' }, { id: 'B', shaft: 'q', at: 0, kind: 'fixed' }],
      discs: [{ id: 'Jp', shaft: 'p', at: L, inertia: Jshaft }, { id: 'Jq', shaft: 'q', at: L, inertia: Jshaft }],
      dynamics: { modes: 6 },
    });
    const modes = sol.modes ?? [];
    expect(modes).toHaveLength(6);
    modes.forEach((m, i) => {
      const k = Math.floor(i / 2);
      const beta = bisect((b) => b * Math.tan(b) - 1, k * Math.PI + 1e-12, k * Math.PI + Math.PI / 2 - 1e-12);
      expectRel(m.angularFrequency, (beta * WAVE) / L);
    });
    // Each pair: the end rotations (p, q) of the two modes are orthogonal (equal inertias, equal shapes).
    for (let k = 0; k < 3; k++) {
      const [a, b] = [modes[2 * k], modes[2 * k + 1]];
      const end = (m: typeof a) => [m.shafts[0].rotation[1], m.shafts[1].rotation[1]];
      const [ap, aq] = end(a);
      const [bp, bq] = end(b);
      expect(Math.abs(ap * bp + aq * bq)).toBeLessThanOrEqual(1e-6 * Math.hypot(ap, aq) * Math.hypot(bp, bq));
    }
  });
});

describe('a geared pair against its reduction by the ratio squared', () => {
  // Shaft 1 fixed at z = 0, disc J1 and gear r1 at its end; gear r2 at the start of shaft 2, disc J2 at
  // its end. A rigid mesh makes φ2 = ∓(r1/r2)·φ1, so shaft 2 and its disc seen from shaft 1 have
  // stiffness and inertia times n² (n = r1/r2): the ratio-squared rule of geared systems (Thomson,
  // geared systems, from memory).
  const L1 = 0.5;
  const L2 = 0.8;
  const r1 = 0.09;
  const r2 = 0.03;
  const n = r1 / r2;
  const J1 = 0.6;
  const J2 = 0.05;
  const geared = (density: boolean, sense: 'opposite' | 'same') => ({
    format: 'shaftnet/1',
    name: 'geared pair',
    materials: [{ id: 'steel', G, ...(density ? { density: RHO } : {}) }],
    sections: [{ id: 'd60', shape: 'solid', d: D }, { id: 'd40', shape: 'solid', d: 0.04 }],
    shafts: [
      { id: 'in', segments: [{ length: L1, section: 'd60', material: 'steel' }] },
      { id: 'out', segments: [{ length: L2, section: 'd40', material: 'steel' }] },
    ],
    supports: [{ id: 'A', shaft: 'in', at: 0, kind: 'fixed' }],
    gearMeshes: [{ id: 'G', a: { shaft: 'in', at: L1, radius: r1 }, b: { shaft: 'out', at: 0, radius: r2 }, sense }],
    discs: [{ id: 'J1', shaft: 'in', at: L1, inertia: J1 }, { id: 'J2', shaft: 'out', at: L2, inertia: J2 }],
    dynamics: { modes: 4 },
  });
  const k1 = (G * IP) / L1;
  const k2 = (G * ((Math.PI * 0.04 ** 4) / 32)) / L2;

  for (const sense of ['opposite', 'same'] as const) {
    it(`massless shafts (${sense}): the two roots of the 2×2 determinant`, () => {
      // det([[k1 + k', −k'], [−k', k']] − λ·diag(J1, J2')) = 0 with k' = n²k2, J2' = n²J2:
      // J1·J2'·λ² − (J1·k' + J2'·(k1 + k'))·λ + k1·k' = 0.
      const kp = n * n * k2;
      const J2p = n * n * J2;
      const a = J1 * J2p;
      const b = -(J1 * kp + J2p * (k1 + kp));
      const c = k1 * kp;
      const disc = Math.sqrt(b * b - 4 * a * c);
      const roots = [(2 * c) / (-b + disc), (-b + disc) / (2 * a)];
      const sol = solveModel(geared(false, sense));
      const modes = sol.modes ?? [];
      expect(modes).toHaveLength(2); // two inertias, massless shafts: two frequencies only
      expect(sol.warnings.map((w) => w.code)).toContain('SN_DYN_FEWER_MODES');
      modes.forEach((m, i) => expectRel(m.angularFrequency, Math.sqrt(roots[i])));
    });
  }

  it('with the shafts’ own inertia: the same frequencies as one shaft with GJ and ρIp of shaft 2 times n²', () => {
    const sol = solveModel(geared(true, 'opposite'));
    // The reduced system, built as a model of its own: one shaft, the second part of it n²-scaled
    // (G·n² keeps J, so GJ' = n²·GJ; ρ·n² keeps Ip, so ρIp' = n²·ρIp).
    const reduced = solveModel({
      format: 'shaftnet/1',
      name: 'reduced',
      materials: [{ id: 'steel', G, density: RHO }, { id: 'scaled', G: G * n * n, density: RHO * n * n }],
      sections: [{ id: 'd60', shape: 'solid', d: D }, { id: 'd40', shape: 'solid', d: 0.04 }],
      shafts: [{ id: 'in', segments: [{ length: L1, section: 'd60', material: 'steel' }, { length: L2, section: 'd40', material: 'scaled' }] }],
      supports: [{ id: 'A', shaft: 'in', at: 0, kind: 'fixed' }],
      discs: [{ id: 'J1', shaft: 'in', at: L1, inertia: J1 }, { id: 'J2', shaft: 'in', at: L1 + L2, inertia: J2 * n * n }],
      dynamics: { modes: 4 },
    });
    const a = sol.modes ?? [];
    const b = reduced.modes ?? [];
    expect(a).toHaveLength(4);
    a.forEach((m, i) => expectRel(m.angularFrequency, b[i].angularFrequency));
  });
});

describe('three discs on massless shafts, fixed at one end (Holzer)', () => {
  // A chain ground–k1–J1–k2–J2–k3–J3 of the kind tabulated by Holzer's method in Thomson, Theory of
  // Vibration with Applications (the Holzer section); the book's own numbers could not be verified
  // here, so these inputs are ours. Expected: the three roots of the characteristic cubic of M⁻¹K in
  // closed (trigonometric) form, and Holzer's residual torque at the free end vanishing at each.
  const J = [1.2, 0.8, 0.5];
  const k = [4.0e5, 2.5e5, 1.5e5]; // N·m/rad
  // Spring supports are not massless shafts of one model; give each spring as a shaft of that stiffness.
  const segLen = (kk: number) => (G * IP) / kk;
  const model = {
    format: 'shaftnet/1',
    name: 'three discs',
    materials: [{ id: 'steel', G }],
    sections: [{ id: 'd60', shape: 'solid', d: D }],
    shafts: [{ id: 's', segments: k.map((kk) => ({ length: segLen(kk), section: 'd60', material: 'steel' })) }],
    supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
    discs: J.map((inertia, i) => ({ id: `J${i + 1}`, shaft: 's', at: segLen(k[0]) + (i > 0 ? segLen(k[1]) : 0) + (i > 1 ? segLen(k[2]) : 0), inertia })),
    dynamics: { modes: 3 },
  };
  it('the three roots of the cubic, and zero residual torque in a Holzer table at each', () => {
    // M⁻¹K = [[(k1+k2)/J1, −k2/J1, 0], [−k2/J2, (k2+k3)/J2, −k3/J2], [0, −k3/J3, k3/J3]].
    const A = [
      [(k[0] + k[1]) / J[0], -k[1] / J[0], 0],
      [-k[1] / J[1], (k[1] + k[2]) / J[1], -k[2] / J[1]],
      [0, -k[2] / J[2], k[2] / J[2]],
    ];
    // λ³ − p·λ² + q·λ − r = 0: trace, sum of principal 2×2 minors, determinant.
    const p = A[0][0] + A[1][1] + A[2][2];
    const q = A[0][0] * A[1][1] - A[0][1] * A[1][0] + A[0][0] * A[2][2] - A[0][2] * A[2][0] + A[1][1] * A[2][2] - A[1][2] * A[2][1];
    const r = A[0][0] * (A[1][1] * A[2][2] - A[1][2] * A[2][1]) - A[0][1] * (A[1][0] * A[2][2] - A[1][2] * A[2][0]) + A[0][2] * (A[1][0] * A[2][1] - A[1][1] * A[2][0]);
    // Viète's trigonometric solution of the depressed cubic t³ + P·t + Q = 0, λ = t + p/3.
    const P = q - (p * p) / 3;
    const Q = (-2 * p ** 3) / 27 + (p * q) / 3 - r;
    const m = 2 * Math.sqrt(-P / 3);
    const theta = Math.acos((3 * Q) / (P * m)) / 3;
    const lambdas = [0, 1, 2].map((j) => m * Math.cos(theta - (2 * Math.PI * j) / 3) + p / 3).sort((x, y) => x - y);
    const sol = solveModel(model);
    const modes = sol.modes ?? [];
    expect(modes).toHaveLength(3);
    modes.forEach((mode, i) => {
      expectRel(mode.angularFrequency, Math.sqrt(lambdas[i]));
      // Holzer's table from the free end: θ1 = 1, torque carried past disc i = Σ J·ω²·θ, next θ = θ − T/k.
      const w2 = mode.angularFrequency ** 2;
      let theta1 = 1;
      let torque = 0;
      const thetas: number[] = [];
      for (let d = 2; d >= 0; d--) {
        thetas.unshift(theta1);
        torque += J[d] * w2 * theta1;
        theta1 -= torque / k[d];
      }
      // Residual: the rotation at the fixed end must be zero (relative to the amplitudes).
      expect(Math.abs(theta1)).toBeLessThanOrEqual(1e-6);
      // The engine's shape at the discs has the Holzer ratios.
      const rot = mode.shafts[0].rotation;
      const big = thetas.reduce((a, b) => (Math.abs(b) > Math.abs(a) ? b : a), 0);
      thetas.forEach((t, d) => expect(Math.abs(rot[d + 1] - t / big)).toBeLessThanOrEqual(1e-7));
    });
  });
});

describe('speeds to avoid', () => {
  // Fixed–free shaft: ω1 = π/(2L)·√(G/ρ); a crossing of order o lies at s = ω1/o (contract), and it fails
  // when min·(1 − margin) ≤ s ≤ max·(1 + margin) (binding reading).
  const L = 1.2;
  const w1 = (Math.PI / (2 * L)) * WAVE;
  const run = (min: number, max: number, margin: number) =>
    solveModel(shaftModel({ lengths: [L] }, { supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }], dynamics: { modes: 1, speed: { shaft: 's', min, max }, orders: [1, 2], margin } }));
  it('a crossing inside the widened range is a failing check; one outside is listed, not checked', () => {
    const s2 = w1 / 2;
    // The range ends 5 % below the order-2 crossing; a margin of 10 % takes it in.
    const sol = run(s2 * 0.5, s2 / 1.05, 0.1);
    expect(sol.crossings).toHaveLength(2);
    const [c1, c2] = sol.crossings ?? [];
    expect(c1).toMatchObject({ mode: 1, order: 1, inRange: false });
    expectRel(c1.speed, w1);
    expect(c2).toMatchObject({ mode: 1, order: 2, inRange: true });
    expectRel(c2.speed, s2);
    const checks = sol.checks.filter((c) => c.kind === 'crossing');
    expect(checks).toHaveLength(1);
    expect(checks[0]).toMatchObject({ shaft: 's', mode: 1, order: 2, pass: false });
    expectRel(checks[0].limit, (s2 / 1.05) * 1.1, 1e-12);
    // Without the margin it is outside.
    const tight = run(s2 * 0.5, s2 / 1.05, 0);
    expect((tight.crossings ?? []).every((c) => !c.inRange)).toBe(true);
    expect(tight.checks.filter((c) => c.kind === 'crossing')).toHaveLength(0);
  });
});

describe('a solid linear taper fixed at its wide end, free at its narrow end', () => {
  // With the radius linear in z, Ip ∝ x⁴ (x measured from the cone's apex) and (x⁴φ')' + k²x⁴φ = 0,
  // k = ω·√(ρ/G), whose solutions are j1(kx)/x and y1(kx)/x (spherical Bessel functions of order 1;
  // Abramowitz & Stegun 10.1.11–10.1.12 for j1, y1 and 10.1.22 for their derivatives). The frequency
  // equation: φ(a) = 0 at the wide end x = a, φ'(b) = 0 at the narrow end x = b.
  const L = 0.8;
  const dA = 0.06;
  const dB = 0.03;
  const a = (L * dA) / (dA - dB); // x of the wide end: the apex lies beyond the narrow end
  const b = a - L;
  const j1 = (t: number) => Math.sin(t) / (t * t) - Math.cos(t) / t;
  const y1 = (t: number) => -Math.cos(t) / (t * t) - Math.sin(t) / t;
  const j1p = (t: number) => Math.sin(t) / t - (2 * j1(t)) / t;
  const y1p = (t: number) => -Math.cos(t) / t - (2 * y1(t)) / t;
  // d/dx of Z(kx)/x = (k·x·Z'(kx) − Z(kx)) / x².
  const dZ = (Z: (t: number) => number, Zp: (t: number) => number, k: number, x: number) => (k * x * Zp(k * x) - Z(k * x)) / (x * x);
  const det = (k: number) => (j1(k * a) / a) * dZ(y1, y1p, k, b) - (y1(k * a) / a) * dZ(j1, j1p, k, b);
  // The roots of det in k, bracketed by a fine scan (the test's own root finder).
  const roots: number[] = [];
  for (let k = 0.01; roots.length < 3; k += 0.01) if (det(k) > 0 !== det(k + 0.01) > 0) roots.push(bisect(det, k, k + 0.01));
  for (const inner of [[], [0.3]]) {
    it(`the lowest three frequencies${inner.length > 0 ? ', cut by a station inside' : ''}`, () => {
      const sol = solveModel({
        format: 'shaftnet/1',
        name: 'cone',
        materials: [{ id: 'steel', G, density: RHO }],
        sections: [{ id: 'd60', shape: 'solid', d: dA }, { id: 'd30', shape: 'solid', d: dB }],
        shafts: [{ id: 's', segments: [{ length: L, section: 'd60', sectionEnd: 'd30', material: 'steel' }] }],
        supports: [{ id: 'A', shaft: 's', at: 0, kind: 'fixed' }],
        discs: inner.map((at, i) => ({ id: `p${i}`, shaft: 's', at, inertia: 0 })),
        dynamics: { modes: 3 },
      });
      (sol.modes ?? []).forEach((m, i) => expectRel(m.angularFrequency, roots[i] * WAVE));
    });
  }
});
