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
 * The largest twist rate |T(z)|/(G·J(z)) in an element and where (m from its start). Without a
 * distributed torque T is constant and a solid taper's J is monotone, so the smaller end governs;
 * otherwise the same sampled search with golden-section refinement as the peak stress (taper.ts).
 */
export function taperTwistRatePeak(input: TaperInput, G: number, state: TaperState, loaded: boolean): { z: number; rate: number } {
  const rate = (z: number) => Math.abs(state.torqueAt(z)) / (G * polarMomentAt(input, z));
  if (!loaded && !((input.diA ?? 0) > 0)) {
    const a = rate(0);
    const b = rate(input.length);
    return a >= b ? { z: 0, rate: a } : { z: input.length, rate: b };
  }
  const p = peakAbs(rate, input.length);
  return { z: p.z, rate: p.shear };
}

/** τ/|T| at z (m, on the shaft) in a segment, 1/m³: r(z)/J(z) along a taper, the section's factor elsewhere. */
export function stationShearFactor(seg: ResolvedSegment, z: number): number {
  const taper = seg.taper;
  if (!taper) return seg.shearFactor;
  const t = taper.input;
  const x = Math.min(Math.max(z - seg.z0, 0), t.length);
  return (t.dA + ((t.dB - t.dA) * x) / t.length) / 2 / polarMomentAt(t, x);
}
