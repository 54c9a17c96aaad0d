/**
 * The forced response in the solution (shaftnet-solution/1, "Solution additions"):
 * `forcedResponse` with the contract's binding fields (`speeds`, and per segment `item`,
 * `torque`, `shear`, `peakTorque`, `peakSpeed`: the sum response Σ_e |T_e|) and the detail
 * beyond them (per excitation, peak shear, the checks). SI: rad/s, N·m, Pa. solution.ts
 * imports it as the optional `forcedResponse` field.
 */
import Type, { type Static } from 'typebox';

const Num = Type.Number();

/** One segment's response against speed, and its peaks. */
export const ForcedSegment = Type.Object({
  /** The segment as "<shaft id>[<segment index>]". */
  item: Type.String(),
  /** Vibratory torque amplitude at each speed of `speeds` (largest along the segment), N·m. */
  torque: Type.Array(Num),
  /** Vibratory shear stress amplitude at each speed (largest layer, largest along a taper), Pa. */
  shear: Type.Array(Num),
  /** The peak over the operating range (every local maximum refined between grid speeds), N·m, and its reference speed, rad/s. */
  peakTorque: Num,
  peakSpeed: Num,
  /** The peak shear amplitude, Pa, and its reference speed, rad/s. */
  peakShear: Num,
  peakShearSpeed: Num,
});
export type ForcedSegment = Static<typeof ForcedSegment>;

/** The response to one excitation alone. */
export const ForcedExcitation = Type.Object({
  id: Type.String(),
  /** Cycles per revolution of the reference shaft. */
  order: Num,
  /** Torque amplitude, N·m. */
  amplitude: Num,
  segments: Type.Array(ForcedSegment),
});
export type ForcedExcitation = Static<typeof ForcedExcitation>;

/** Peak vibratory shear (sum response) plus peak static shear of a layer against its allowable. */
export const ForcedCheck = Type.Object({
  kind: Type.Literal('vibratoryShear'),
  shaft: Type.String(),
  segment: Type.Integer(),
  layer: Type.Integer(),
  material: Type.String(),
  /** Peak vibratory shear amplitude of the layer, Pa, and the reference speed where it peaks, rad/s. */
  vibratory: Num,
  speed: Num,
  /** The layer's peak static shear added, Pa; null when the static part was not solved (a mechanism). */
  static: Type.Union([Num, Type.Null()]),
  value: Num,
  limit: Num,
  utilisation: Num,
  pass: Type.Boolean(),
});
export type ForcedCheck = Static<typeof ForcedCheck>;

export const ForcedResponse = Type.Object({
  /** Reference-shaft speeds of the grid, rad/s (evenly spaced over the operating range, ends included). */
  speeds: Type.Array(Num),
  /** The sum response Σ_e |T_e| of every segment, in the model's shaft and segment order. */
  segments: Type.Array(ForcedSegment),
  excitations: Type.Array(ForcedExcitation),
  /** Damping ratio ζ used: every elastic stiffness k became k (1 + 2iζ). */
  damping: Num,
  /** Worst utilisation first. */
  checks: Type.Array(ForcedCheck),
  /** Complex factorisations made (grid and peak refinement). */
  solves: Type.Integer(),
});
export type ForcedResponse = Static<typeof ForcedResponse>;
