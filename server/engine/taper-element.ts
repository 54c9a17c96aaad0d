/**
 * The elements of a tapered segment. A station inside a tapered segment (a torque, a support)
 * cuts it into sub-tapers: each element is the linear taper between the sections at its two
 * ends, interpolated along the segment, so every element is exact on its own (taper.ts) and a
 * segment cut anywhere gives the same nodal results as the whole.
 */
import type { ResolvedSegment, ResolvedTaper } from './normalise.js';
import { consistentLoads, peakAbs, polarMomentAt, taperStateFromTorque, taperStiffness, type TaperInput, type TaperState } from './taper.js';

/** The taper of the element from za to zb (m, on the shaft) of a tapered segment. */
export function subTaper(seg: ResolvedSegment, taper: ResolvedTaper, za: number, zb: number): TaperInput {
  const t = taper.input;
  const L = seg.z1 - seg.z0;
  // The whole segment: its own input, not an interpolation that might round.
  if (za <= seg.z0 && zb >= seg.z1) return t;
  const a = (za - seg.z0) / L;
  const b = (zb - seg.z0) / L;
  const at = (x: number, y: number, f: number) => (f <= 0 ? x : f >= 1 ? y : x + (y - x) * f);
  const diA = t.diA ?? 0;
  const diB = t.diB ?? 0;
  return { length: zb - za, dA: at(t.dA, t.dB, a), dB: at(t.dA, t.dB, b), diA: at(diA, diB, a), diB: at(diA, diB, b) };
}

/** Stiffness 1/∫dz/(G·J) of an element of a tapered segment, N·m/rad. */
export function taperElementStiffness(seg: ResolvedSegment, taper: ResolvedTaper, za: number, zb: number): number {
  if (za <= seg.z0 && zb >= seg.z1) return taper.stiffness;
  return taperStiffness(subTaper(seg, taper, za, zb), taper.G);
}

/** Consistent nodal loads of t linear from t1 to t2 (N·m/m) over an element of a tapered segment, N·m. */
export function taperElementLoads(seg: ResolvedSegment, taper: ResolvedTaper, za: number, zb: number, t1: number, t2: number): { fa: number; fb: number } {
  const whole = za <= seg.z0 && zb >= seg.z1;
  // The whole segment's F(L) = G/k is known from normalising: one integral fewer.
  return consistentLoads(subTaper(seg, taper, za, zb), t1, t2, whole ? taper.G / taper.stiffness : undefined);
}

/** The exact state inside an element of a tapered segment from its end torque T(za+) (z measured from the element's start). */
export function taperElementState(
  seg: ResolvedSegment,
  taper: ResolvedTaper,
  za: number,
  zb: number,
  phiA: number,
  phiB: number,
  T0: number,
  t1: number,
  t2: number,
): { state: TaperState; input: TaperInput } {
  const input = subTaper(seg, taper, za, zb);
  return { state: taperStateFromTorque(input, taper.G, phiA, phiB, T0, t1, t2), input };
}

/**
 * The largest twist rate |T(z)|/(G·J(z)) in an element and where (m from its start). Solid: with
 * T = T0 − ta·z − c·z²/2 and d = dA + s·z, d/dz (T/d⁴) = 0 is the quadratic
 *   (c·s)·z² + (3s·ta − c·dA)·z − (ta·dA + 4s·T0) = 0
 * (as the peak stress's in taper.ts, with d⁴ for d³), so the ends and its roots inside are the only
 * candidates: exact. Hollow: the sampled search with golden-section refinement of taper.ts.
 */
export function taperTwistRatePeak(input: TaperInput, G: number, state: TaperState, t1: number, t2: number): { z: number; rate: number } {
  const rate = (z: number) => Math.abs(state.torqueAt(z)) / (G * polarMomentAt(input, z));
  const L = input.length;
  if (!((input.diA ?? 0) > 0)) {
    const s = (input.dB - input.dA) / L;
    const c = (t2 - t1) / L;
    const candidates = [0, L, ...quadraticRoots(c * s, 3 * s * t1 - c * input.dA, -(t1 * input.dA + 4 * s * state.torqueStart))];
    let best = { z: 0, rate: -1 };
    for (const z of candidates) {
      if (!(z >= 0 && z <= L)) continue;
      const r = rate(z);
      if (r > best.rate) best = { z, rate: r };
    }
    return best;
  }
  const p = peakAbs(rate, L);
  return { z: p.z, rate: p.shear };
}

/** Real roots of a·x² + b·x + c = 0 (a may be 0), without cancellation. */
function quadraticRoots(a: number, b: number, c: number): number[] {
  if (a === 0) return b === 0 ? [] : [-c / b];
  const disc = b * b - 4 * a * c;
  if (disc < 0) return [];
  const q = -0.5 * (b + Math.sign(b || 1) * Math.sqrt(disc));
  return q === 0 ? [0] : [q / a, c / q];
}

/** τ/|T| at z (m, on the shaft) in a segment, 1/m³: r(z)/J(z) along a taper, the section's factor elsewhere. */
export function stationShearFactor(seg: ResolvedSegment, z: number): number {
  const taper = seg.taper;
  if (!taper) return seg.shearFactor;
  const t = taper.input;
  const x = Math.min(Math.max(z - seg.z0, 0), t.length);
  return (t.dA + ((t.dB - t.dA) * x) / t.length) / 2 / polarMomentAt(t, x);
}
