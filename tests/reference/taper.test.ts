/**
 * Tapered segments (server/engine/taper.ts) against closed forms and a textbook result. The
 * expectations are written out here from their formulas, never read from the engine.
 */
import { describe, expect, it } from 'vitest';
import {
  consistentLoads,
  polarMomentAt,
  taperFlexibility,
  taperState,
  taperStiffness,
  type TaperInput,
} from '../../server/engine/taper.js';
import { expectClose, jHollow, jSolid } from './helpers.js';

const G = 79.3e9; // Pa

/** Flexibility of a linearly tapered solid bar, ∫ dz/(G J) = 32 L (d1² + d1 d2 + d2²)/(3π G d1³ d2³). */
function solidTaperFlexibility(L: number, d1: number, d2: number): number {
  return (32 * L * (d1 * d1 + d1 * d2 + d2 * d2)) / (3 * Math.PI * G * d1 ** 3 * d2 ** 3);
}

describe('linearly tapered solid bar under an end torque', () => {
  it('φ = 32 T L (dA² + dA dB + dB²)/(3π G dA³ dB³) to 1e-13', () => {
    // Gere & Goodno, Mechanics of Materials, torsion chapter: twist of a linearly tapered solid bar
    // (example/problem number not verified; from memory)
    const t: TaperInput = { length: 0.8, dA: 0.06, dB: 0.035 };
    const T = 1200; // N·m
    const phi = 32 * T * 0.8 * (0.06 ** 2 + 0.06 * 0.035 + 0.035 ** 2) / (3 * Math.PI * G * 0.06 ** 3 * 0.035 ** 3);
    expectClose(T * taperFlexibility(t, G), phi, 1e-13);
    // and inside: a cantilever fixed at A with T at B carries T everywhere
    const s = taperState(t, G, 0, phi);
    expectClose(s.torqueStart, T, 1e-12);
    expectClose(s.torqueEnd, T, 1e-12);
    // closed form: φ(z) = T·∫₀ᶻ dz/(GJ), the same formula over [0, z]
    const z = 0.3;
    expectClose(s.rotationAt(z), T * solidTaperFlexibility(z, 0.06, 0.06 + (0.035 - 0.06) * (z / 0.8)), 1e-13);
    // τ = T r/J peaks at the small end (closed form 16T/(π dB³))
    expectClose(s.peak.shear, (16 * T) / (Math.PI * 0.035 ** 3), 1e-12);
    expect(s.peak.z).toBe(0.8);
  });
});

describe('tapered bar fixed at both ends, torque at an interior point', () => {
  it('reactions and the twist at the load from the two flexibilities', () => {
    const L = 1.2;
    const dA = 0.07;
    const dB = 0.04;
    const a = 0.45;
    const T0 = 3000;
    const dAt = (z: number) => dA + ((dB - dA) * z) / L;
    // closed form by compatibility: the two parts share φ(a); f1, f2 by the tapered-bar formula above
    const f1 = solidTaperFlexibility(a, dA, dAt(a));
    const f2 = solidTaperFlexibility(L - a, dAt(a), dB);
    const T1 = (T0 * f2) / (f1 + f2); // torque in the left part; reaction at A is −T1
    const T2 = -(T0 * f1) / (f1 + f2); // torque in the right part; reaction at B is +T2
    const phiA = (T0 * f1 * f2) / (f1 + f2);

    const left: TaperInput = { length: a, dA, dB: dAt(a) };
    const right: TaperInput = { length: L - a, dA: dAt(a), dB };
    const k1 = taperStiffness(left, G);
    const k2 = taperStiffness(right, G);
    const phi = T0 / (k1 + k2); // the nodal solution of the two elements
    expectClose(phi, phiA, 1e-13);
    const sl = taperState(left, G, 0, phi);
    const sr = taperState(right, G, phi, 0);
    expectClose(sl.torqueStart, T1, 1e-12);
    expectClose(sr.torqueEnd, T2, 1e-12);
    // equilibrium at the load: T(a−) − T(a+) = T0
    expectClose(sl.torqueEnd - sr.torqueStart, T0, 1e-12);
    expectClose(sl.rotationAt(a / 2), T1 * solidTaperFlexibility(a / 2, dA, dAt(a / 2)), 1e-13);
  });
});

describe('a uniform taper (dA = dB) is the uniform segment', () => {
  it('solid: f = L/(G J) to 1e-14', () => {
    expectClose(taperFlexibility({ length: 0.7, dA: 0.05, dB: 0.05 }, G), 0.7 / (G * jSolid(0.05)), 1e-14);
  });
  it('hollow: f = L/(G J) to 1e-14, and consistent loads L(2ta + tb)/6, L(ta + 2tb)/6', () => {
    const t: TaperInput = { length: 0.7, dA: 0.05, dB: 0.05, diA: 0.03, diB: 0.03 };
    expectClose(taperFlexibility(t, G), 0.7 / (G * jHollow(0.05, 0.03)), 1e-14);
    // closed form: consistent loads of a linear t with the linear shape function of a uniform element
    const { fa, fb } = consistentLoads(t, 400, -100);
    expectClose(fa, (0.7 * (2 * 400 - 100)) / 6, 1e-14, 0.7 * 400);
    expectClose(fb, (0.7 * (400 - 2 * 100)) / 6, 1e-14, 0.7 * 400);
  });
});

describe('hollow taper: the quadrature against the exact primitive', () => {
  it('∫ dz/J for d_o 80→50 mm, d_i 60→20 mm to 1e-13', () => {
    // closed form: with p = d_o − d_i and q = d_o + d_i (both linear), J = π p q (p² + q²)/64, and
    // with u = p/q, W = p1 q0 − p0 q1: ∫ dz/(p q (p² + q²)) =
    //   [p1² ln u + (q1² − p1²)/2 · ln(1 + u²) − 2 p1 q1 arctan u] / W³   (partial fractions)
    const L = 0.5;
    const t: TaperInput = { length: L, dA: 0.08, dB: 0.05, diA: 0.06, diB: 0.02 };
    const p0 = 0.08 - 0.06;
    const p1 = (0.05 - 0.02 - p0) / L;
    const q0 = 0.08 + 0.06;
    const q1 = (0.05 + 0.02 - q0) / L;
    const W = p1 * q0 - p0 * q1;
    const prim = (z: number) => {
      const u = (p0 + p1 * z) / (q0 + q1 * z);
      return (p1 * p1 * Math.log(u) + ((q1 * q1 - p1 * p1) / 2) * Math.log(1 + u * u) - 2 * p1 * q1 * Math.atan(u)) / W ** 3;
    };
    const exact = ((64 / Math.PI) * (prim(L) - prim(0))) / G;
    expectClose(taperFlexibility(t, G), exact, 1e-13);
    // J(z) itself: π (d_o⁴ − d_i⁴)/32 at mid-length
    expectClose(polarMomentAt(t, L / 2), jHollow(0.065, 0.04), 1e-14);
  });
});

describe('consistent loads of a solid taper under uniform t', () => {
  it('f_a = t ∫ z/d⁴ dz / ∫ 1/d⁴ dz, f_b = tL − f_a (closed form by integration)', () => {
    const L = 1;
    const dA = 0.06;
    const dB = 0.03;
    const s = (dB - dA) / L;
    const tq = 500; // N·m/m
    // closed form: ∫₀ᴸ dz/d⁴ = (1/(3s))(1/dA³ − 1/dB³); ∫₀ᴸ z dz/d⁴ = (1/s²)[−1/(2u²) + dA/(3u³)] from dA to dB
    const I0 = (1 / (3 * s)) * (1 / dA ** 3 - 1 / dB ** 3);
    const F1 = (u: number) => -1 / (2 * u * u) + dA / (3 * u ** 3);
    const I1 = (F1(dB) - F1(dA)) / (s * s);
    const { fa, fb } = consistentLoads({ length: L, dA, dB }, tq, tq);
    expectClose(fa, (tq * I1) / I0, 1e-13);
    expectClose(fb, tq * L - (tq * I1) / I0, 1e-13);
    // fixed at both ends, the reactions are −f_a and −f_b, and φ = 0 at both ends holds inside:
    const st = taperState({ length: L, dA, dB }, G, 0, 0, tq, tq);
    expectClose(st.torqueStart, fa, 1e-13);
    expectClose(st.torqueEnd, -fb, 1e-13);
  });
});

describe('splitting a tapered segment changes nothing', () => {
  for (const hollow of [false, true]) {
    it(`${hollow ? 'hollow' : 'solid'}: cantilever with linear t and an end torque, split at 0.37 L`, () => {
      const L = 0.9;
      const whole: TaperInput = hollow ? { length: L, dA: 0.07, dB: 0.045, diA: 0.04, diB: 0.03 } : { length: L, dA: 0.07, dB: 0.045 };
      const ta = 800;
      const tb = -300;
      const TB = 250;
      const at = (v0: number, v1: number, z: number) => v0 + ((v1 - v0) * z) / L;
      const a = 0.37 * L;
      const cut = (z0: number, z1: number): TaperInput => ({
        length: z1 - z0,
        dA: at(whole.dA, whole.dB, z0),
        dB: at(whole.dA, whole.dB, z1),
        ...(hollow ? { diA: at(whole.diA!, whole.diB!, z0), diB: at(whole.diA!, whole.diB!, z1) } : {}),
      });
      const s1 = cut(0, a);
      const s2 = cut(a, L);
      const tm = at(ta, tb, a);
      // unsplit: fixed at A, k φB = f_b + TB
      const k = taperStiffness(whole, G);
      const phiB = (consistentLoads(whole, ta, tb).fb + TB) / k;
      // split: [k1 + k2, −k2; −k2, k2] [φm; φB] = [f_b1 + f_a2; f_b2 + TB]
      const k1 = taperStiffness(s1, G);
      const k2 = taperStiffness(s2, G);
      const l1 = consistentLoads(s1, ta, tm);
      const l2 = consistentLoads(s2, tm, tb);
      const r1 = l1.fb + l2.fa;
      const r2 = l2.fb + TB;
      const det = (k1 + k2) * k2 - k2 * k2;
      const phiM = (r1 * k2 + k2 * r2) / det;
      const phiB2 = ((k1 + k2) * r2 + k2 * r1) / det;
      // property: the same nodal rotation at B, and the split node on the unsplit segment's exact curve
      expectClose(phiB2, phiB, 1e-12);
      const st = taperState(whole, G, 0, phiB, ta, tb);
      expectClose(phiM, st.rotationAt(a), 1e-12);
      const st1 = taperState(s1, G, 0, phiM, ta, tm);
      expectClose(st1.torqueEnd, st.torqueAt(a), 1e-11, Math.abs(TB) + Math.abs(ta) * L);
      expectClose(st.torqueEnd, TB, 1e-11, Math.abs(TB) + Math.abs(ta) * L);
    });
  }
});

describe('peak stress inside the segment', () => {
  it('solid, uniform t: the interior maximum of (T0 − t z)/d³ at z* = (t dA + 3 s T0)/(2 s t)', () => {
    const L = 1;
    const dA = 0.06;
    const dB = 0.03;
    const s = (dB - dA) / L;
    const tq = 1000;
    const T0 = (0.9333 * tq) as number;
    const t: TaperInput = { length: L, dA, dB };
    const phiB = (T0 - consistentLoads(t, tq, tq).fa) / taperStiffness(t, G);
    const st = taperState(t, G, 0, phiB, tq, tq);
    expectClose(st.torqueStart, T0, 1e-12);
    // closed form: d/dz [(T0 − t z)/d(z)³] = 0
    const zStar = (tq * dA + 3 * s * T0) / (2 * s * tq);
    expect(zStar).toBeGreaterThan(0.1);
    expect(zStar).toBeLessThan(0.9);
    const tauStar = (16 * (T0 - tq * zStar)) / (Math.PI * (dA + s * zStar) ** 3);
    expectClose(st.peak.shear, tauStar, 1e-12);
    expect(Math.abs(st.peak.z - zStar)).toBeLessThanOrEqual(1e-12 * L);
  });

  it('hollow: the peak is at least every one of 20001 samples and at most 1e-12 above the best', () => {
    // common practice, no source: a dense sampling bounds the maximum from below
    const t: TaperInput = { length: 1, dA: 0.08, dB: 0.04, diA: 0.05, diB: 0.02 };
    const st = taperState(t, G, 0, 2e-3, 3000, 1000);
    let best = 0;
    for (let i = 0; i <= 20000; i++) best = Math.max(best, Math.abs(st.shearAt(i / 20000)));
    expect(st.peak.shear).toBeGreaterThanOrEqual(best * (1 - 1e-15));
    expect(st.peak.shear).toBeLessThanOrEqual(best * (1 + 1e-9));
    expectClose(Math.abs(st.shearAt(st.peak.z)), st.peak.shear, 1e-15);
  });
});
