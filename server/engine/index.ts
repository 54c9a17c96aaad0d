/**
 * The engine's public face: pure functions from a model to a solution.
 * No HTTP, no store, no I/O.
 */
import type { Solution } from '../../shared-types/solution.js';
import { normaliseModel, type ResolvedModel } from './normalise.js';
import { solvePipeline, type SolvePhase } from './pipeline.js';
import { toSolution, writeSolutionJson, type Solved } from './output.js';
import { assertFiniteResults } from './finite-guard.js';
import { Workspace } from './workspace.js';
import { withOverload, type LpSolver } from './overload.js';
import { checkpoint, writingSink, type SolveProgress } from './progress.js';

export { normaliseModel } from './normalise.js';
export type { ResolvedModel } from './normalise.js';
export type { Solved } from './output.js';
export type { SolvePhase } from './pipeline.js';
export { Workspace } from './workspace.js';
export { loadLpSolver, type LpSolver } from './overload.js';
export { SolveAborted, overallFraction, throttled, PROGRESS_PHASES, DYNAMICS_PHASES, type ProgressPhase, type SolveProgress } from './progress.js';

/** Options of a solve. */
export interface SolveOptions {
  /** 'sparse' (default) or 'dense' (ml-matrix reference path, for cross-checks; O(n³)). */
  solver?: 'sparse' | 'dense';
  /** Interior diagram points per element where T(z) is curved (default 8); 0 keeps breakpoints only. */
  diagramPoints?: number;
  /** A model with load cases: the combination whose results the top-level fields show (default: the first). */
  combination?: string;
  /**
   * Called after each phase with its duration, ms: 'stations', 'assemble',
   * 'factorise' (with the solve), 'recover' (every result, in columns) and
   * 'output' (writing the solution object or its JSON text).
   */
  onPhase?: (phase: SolvePhase, ms: number) => void;
  /**
   * Work memory to use and keep warm for the holder's next solve (the CLI
   * process, the request thread, a worker). Without one, or when it is busy
   * (a solve inside another's output), the solve makes its own.
   */
  workspace?: Workspace;
  /**
   * A loaded LP solver (`await loadLpSolver()`, once per process): with it, and some material with
   * shearYield, the solution has `overload` (first yield and plastic collapse factors).
   */
  lp?: LpSolver;
  /**
   * Progress reports (phase, fraction of it done) and the abort signal, checked
   * between the steps of the solve and once per piece of JSON written: when
   * `aborted` turns true the solve throws `SolveAborted` and gives its work memory
   * back. Without it the checks cost one comparison each (see progress.ts).
   */
  progress?: SolveProgress;
}

/** Solves a model (raw JSON, units as typed). Throws ModelError for a model it cannot solve. */
export function solveModel(model: unknown, options: SolveOptions = {}): Solution {
  return solveResolved(normaliseModel(model), options);
}

/** Solves an already normalised model (the benchmark times this part: parsing excluded). */
export function solveResolved(model: ResolvedModel, options: SolveOptions = {}): Solution {
  return withSolved(model, options, toSolution);
}

/**
 * Solves a model (raw JSON) and writes the JSON text of its solution to
 * `sink`, in pieces of about `pieceChars` characters: the same text as
 * `JSON.stringify(solveModel(model))`, without building the solution object.
 */
export function solveModelJson(model: unknown, sink: (text: string) => void, options: SolveOptions = {}, pieceChars?: number): void {
  withSolved(normaliseModel(model), options, (solved) => writeSolutionJson(solved, writingSink(sink, options.progress, solved.stats.stations), pieceChars));
}

/**
 * Solves, then hands the finished solve (in columns) to `use` and answers
 * what it answers. The columns are work arrays: they are valid only during
 * `use`, which must copy out whatever it keeps.
 */
export function withSolved<T>(model: ResolvedModel, options: SolveOptions, use: (solved: Solved) => T): T {
  const ws = options.workspace && !options.workspace.busy ? options.workspace : new Workspace();
  return ws.session(() => {
    const solved = withOverload(solvePipeline(model, options, ws), options.lp, options);
    assertFiniteResults(solved);
    const t0 = options.onPhase ? performance.now() : 0;
    checkpoint(options.progress, 'writing', 0);
    const answer = use(solved);
    options.onPhase?.('output', performance.now() - t0);
    options.progress?.report('writing', 1); // done: an abort now would throw away a finished answer
    return answer;
  });
}

/** Upper bound of the stations and the shafts a model will have, cheap, for size limits before solving. */
export function modelSize(model: unknown): { stations: number; shafts: number } {
  const m = (model ?? {}) as Record<string, unknown>;
  const len = (k: string) => (Array.isArray(m[k]) ? (m[k] as unknown[]).length : 0);
  const shafts = Array.isArray(m.shafts) ? (m.shafts as Array<{ segments?: unknown }>) : [];
  const segments = shafts.reduce((n, s) => n + (s && Array.isArray(s.segments) ? s.segments.length : 0), 0);
  const stations =
    shafts.length +
    segments +
    len('supports') +
    len('torques') +
    len('discs') +
    len('stressRaisers') +
    2 * (len('distributedTorques') + len('gearMeshes') + len('couplings')) +
    dynamicExcitations(m.dynamics);
  return { stations, shafts: shafts.length };
}

/** Excitations of a model's `dynamics` (each one a station), 0 when absent or not a list. */
function dynamicExcitations(d: unknown): number {
  const e = d !== null && typeof d === 'object' ? (d as { excitations?: unknown }).excitations : undefined;
  return Array.isArray(e) ? e.length : 0;
}
