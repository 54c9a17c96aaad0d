/**
 * The engine's public face: pure functions from a model to a solution.
 * No HTTP, no store, no I/O.
 */
import type { Solution } from '../../shared-types/solution.js';

/** Options of a solve. */
export interface SolveOptions {
  /** 'sparse' (default) or 'dense' (ml-matrix reference path, for cross-checks; O(n³)). */
  solver?: 'sparse' | 'dense';
  /** Interior diagram points per element where T(z) is curved (default 8); 0 keeps breakpoints only. */
  diagramPoints?: number;
}

/** Solves a model (raw JSON, units as typed). Throws ModelError (shared-types/errors.ts) for a model it cannot solve. */
export function solveModel(model: unknown, options: SolveOptions = {}): Solution {
  void model;
  void options;
  throw new Error('engine not landed yet');
}

/** Upper bound of the stations and the shafts a model will have, cheap, for size limits before solving. */
export function modelSize(model: { shafts?: unknown[] } & Record<string, unknown>): { stations: number; shafts: number } {
  void model;
  throw new Error('engine not landed yet');
}
