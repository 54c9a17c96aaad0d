/**
 * Dynamics: the resolved input (SI, indices) shared by the natural-frequency part
 * (frequencies.ts and its neighbours) and the forced-response part (forced.ts).
 * normalise.ts fills `ResolvedModel.dynamics` from the model's `dynamics` object
 * (contract: "Dynamics"); stations.ts makes every excitation's point a station.
 */
import type { ShaftPoint } from '../normalise.js';

/** A harmonic torque of `order` × the reference shaft's speed, applied at a point. */
export interface ResolvedExcitation extends ShaftPoint {
  readonly id: string;
  /** Amplitude, N·m. */
  readonly amplitude: number;
  /** Cycles per revolution of the reference shaft (`speed.shaft`). */
  readonly order: number;
}

export interface ResolvedDynamics {
  /** How many of the lowest natural frequencies to find (rigid-body modes count); ignored with maxFrequency. */
  readonly modes: number;
  /** Every mode up to this circular frequency, rad/s; null: the lowest `modes`. */
  readonly maxFrequency: number | null;
  /** The operating range of the reference shaft, rad/s; null when not given. */
  readonly speed: { readonly shaft: number; readonly min: number; readonly max: number } | null;
  /** Excitation orders per revolution of the reference shaft. */
  readonly orders: readonly number[];
  /** Relative widening of the operating range around each crossing (0.1 = ±10 %). */
  readonly margin: number;
  /** Damping ratio ζ of every elastic part: a stiffness k becomes k (1 + 2iζ). */
  readonly damping: number;
  readonly excitations: readonly ResolvedExcitation[];
}
