/**
 * The engine's public face: pure functions from a model to a solution.
 * No HTTP, no store, no I/O.
 */
import { ModelError } from '../../shared-types/errors.js';
import type { Solution, Warning } from '../../shared-types/solution.js';
import { normaliseModel, type ResolvedModel } from './normalise.js';
import { buildStations, type StationLayout } from './stations.js';
import { assemble, findMechanisms, readSpring, spring, type Assembly } from './assemble.js';
import { SingularMatrixError, SparseLDLT } from './sparse-solver.js';
import { solveDense } from './dense-solver.js';
import { expandRotations, recover } from './recover.js';
import { f64, i32, release, reserveLarge, withArena } from './arena.js';
import { toSolution, writeSolutionJson, type Solved } from './output.js';
import { assertFiniteResults } from './finite-guard.js';

export { normaliseModel } from './normalise.js';
export type { ResolvedModel } from './normalise.js';
export type { Solved } from './output.js';

/** The phases of a solve, reported to `onPhase` with their durations. */
export type SolvePhase = 'stations' | 'assemble' | 'factorise' | 'recover' | 'output';

/** Options of a solve. */
export interface SolveOptions {
  /** 'sparse' (default) or 'dense' (ml-matrix reference path, for cross-checks; O(n³)). */
  solver?: 'sparse' | 'dense';
  /** Interior diagram points per element where T(z) is curved (default 8); 0 keeps breakpoints only. */
  diagramPoints?: number;
  /**
   * Called after each phase with its duration, ms: 'stations', 'assemble',
   * 'factorise' (with the solve), 'recover' (every result, in columns) and
   * 'output' (writing the solution object or its JSON text).
   */
  onPhase?: (phase: SolvePhase, ms: number) => void;
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
  withSolved(normaliseModel(model), options, (solved) => writeSolutionJson(solved, sink, pieceChars));
}

/**
 * Solves, then hands the finished solve (in columns) to `use` and answers
 * what it answers. The columns are work arrays: they are valid only during
 * `use`, which must copy out whatever it keeps.
 */
export function withSolved<T>(model: ResolvedModel, options: SolveOptions, use: (solved: Solved) => T): T {
  return withArena(() => {
    reserveLarge(LARGE_BYTES_PER_STATION * stationEstimate(model));
    const solved = solveInArena(model, options);
    assertFiniteResults(solved);
    const t0 = options.onPhase ? performance.now() : 0;
    const answer = use(solved);
    options.onPhase?.('output', performance.now() - t0);
    return answer;
  });
}

/**
 * Bytes of large work arrays per station of `stationEstimate`, a little more
 * than the most measured (about 350 per station on a loaded chain of 1e6
 * stations, arrays given back with `release` being reused): reserved in one
 * piece at the start of a large solve.
 */
const LARGE_BYTES_PER_STATION = 400;

/** Stations a resolved model can have at most (each point on a shaft may be one). */
function stationEstimate(model: ResolvedModel): number {
  let n = model.shafts.length + model.supports.length + model.torques.length + model.discs.length;
  for (const shaft of model.shafts) n += shaft.segments.length;
  return n + 2 * (model.distributed.length + model.meshes.length + model.couplings.length);
}

/** The solve itself; its work arrays come from the arena. */
function solveInArena(model: ResolvedModel, options: SolveOptions): Solved {
  const phase = options.onPhase;
  let t0 = phase ? performance.now() : 0;
  const lap = (name: SolvePhase) => {
    if (!phase) return;
    const t = performance.now();
    phase(name, t - t0);
    t0 = t;
  };
  const layout = buildStations(model);
  lap('stations');
  const asm = assemble(model, layout);
  assertNoMechanism(model, layout, asm);
  lap('assemble');
  let x: Float64Array;
  let factorNonzeros = 0;
  const warnings: Warning[] = [];
  try {
    if (options.solver === 'dense') {
      x = solveDense(asm.system, asm.rhs);
    } else {
      const ldl = new SparseLDLT(asm.system, { consume: true });
      factorNonzeros = ldl.factorNonzeros;
      x = refine(asm, ldl.solve(asm.rhs), (r, out) => ldl.solve(r, out));
      ldl.dispose();
      release(asm.system.diag, asm.rhs);
      if (ldl.minPivotRatio < 1e-10) {
        warnings.push({
          code: 'SN_STIFFNESS_SPREAD',
          message: `stiffnesses in the model differ by about ${(1 / ldl.minPivotRatio).toExponential(0)}: results may lose ${Math.round(-Math.log10(ldl.minPivotRatio))} of their 16 digits`,
        });
      }
    }
  } catch (err) {
    if (err instanceof SingularMatrixError) {
      // Name the shaft whose unknown lost its pivot (the dense path cannot tell: the first shaft then).
      let dof = 0;
      if (err.column >= 0) dof = asm.reduction.varOf.indexOf(err.column);
      const s = layout.shaftOf[Math.max(dof, 0)];
      throw new ModelError([
        {
          code: 'SN_ILL_CONDITIONED',
          pointer: `/shafts/${s}`,
          message: `the stiffness matrix is singular to working precision near shaft "${model.shafts[s].id}": check for stiffnesses or sizes many orders of magnitude apart (units?)`,
          shafts: [model.shafts[s].id],
        },
      ]);
    }
    throw err;
  }
  lap('factorise');
  const phi = expandRotations(asm, x);
  release(x, asm.reduction.varOf, asm.reduction.alpha, asm.reduction.beta);
  const rec = recover(model, layout, asm, phi, options.diagramPoints ?? 8);
  lap('recover');
  let maxResidual = 0;
  for (let k = 0; k < rec.residual.length; k++) maxResidual = Math.max(maxResidual, rec.residual[k]);
  let torqueScale = 0;
  for (let k = 0; k < rec.segMaxAbs.length; k++) torqueScale = Math.max(torqueScale, rec.segMaxAbs[k]);
  if (maxResidual > 1e-8 * torqueScale) {
    warnings.push({
      code: 'SN_PRECISION_LOST',
      message: `equilibrium holds only to ${maxResidual.toExponential(1)} N·m against torques of ${torqueScale.toExponential(1)} N·m: sizes or stiffnesses many orders of magnitude apart cost digits (check the units)`,
    });
  }
  return {
    model,
    layout,
    rec,
    maxResidual,
    warnings: [...rec.warnings, ...warnings],
    stats: { stations: layout.dofCount, unknowns: asm.reduction.varCount, factorNonzeros, checksEvaluated: rec.checks.total },
  };
}

/**
 * Iterative refinement: x += K⁻¹·(f − K·x) while the residual shrinks at
 * least by half (at most three steps). The residual is summed spring by
 * spring in difference form, k·(φ_j − φ_i), so it is accurate to round-off
 * of the torques rather than of k·φ: on long chains, where the triangular
 * solves carry errors along the chain, this recovers the reactions to
 * round-off of the torques.
 */
function refine(asm: Assembly, x: Float64Array, solve: (r: Float64Array, out: Float64Array) => Float64Array): Float64Array {
  const n = x.length;
  const answer = x;
  // Four vectors for the whole refinement: the residual, the correction, and the best and trial solutions.
  const r = f64(n);
  const dx = f64(n);
  let trial = f64(n);
  let best = springResidual(asm, x, r);
  // Below a few ulps of the torques summed into it, the residual is round-off: nothing to gain.
  for (let step = 0; step < 3 && best.norm > 16 * Number.EPSILON * best.scale; step++) {
    solve(r, dx);
    for (let k = 0; k < n; k++) trial[k] = x[k] + dx[k];
    const next = springResidual(asm, trial, r);
    if (!(next.norm < best.norm)) break;
    const kept = x;
    x = trial;
    trial = kept;
    const gain = best.norm / next.norm;
    best = next;
    // A step that does not halve the residual has met the floor of the residual's own round-off.
    if (gain < 2) break;
  }
  // The best solution is handed back in the vector that came in; the rest is work space.
  if (x !== answer) {
    answer.set(x);
    release(r, dx, x);
  } else release(r, dx, trial);
  return answer;
}

/** f − K·x of the reduced system into `r`, summed over the springs in difference form; with its largest entry. */
function springResidual(asm: Assembly, x: Float64Array, r: Float64Array): { norm: number; scale: number } {
  const { springs: s, load } = asm;
  const { varOf, alpha, beta } = asm.reduction;
  r.fill(0);
  let scale = 0;
  for (let m = 0; m < s.count; m++) {
    readSpring(s, m);
    const { i, j, p, q, c } = spring;
    const u = varOf[i];
    const v = j >= 0 ? varOf[j] : -1;
    // Stretch g = p·φ_i + q·φ_j − c; the spring's force k·g acts on u with −p·α_i and on v with −q·α_j.
    const pi = p * (u >= 0 ? alpha[i] * x[u] + beta[i] : beta[i]);
    const qj = j >= 0 ? q * (v >= 0 ? alpha[j] * x[v] + beta[j] : beta[j]) : 0;
    const f = s.k[m] * (pi + qj - c);
    const fu = f * p * alpha[i];
    const fv = f * q * (j >= 0 ? alpha[j] : 0);
    if (u >= 0) r[u] -= fu;
    if (v >= 0) r[v] -= fv;
    scale = Math.max(scale, Math.abs(fu), Math.abs(fv));
  }
  for (let d = 0; d < load.length; d++) {
    const u = varOf[d];
    if (u >= 0 && load[d] !== 0) r[u] += alpha[d] * load[d];
    scale = Math.max(scale, Math.abs(load[d]));
  }
  let norm = 0;
  for (let k = 0; k < r.length; k++) norm = Math.max(norm, Math.abs(r[k]));
  return { norm, scale };
}

/** Throws SN_MECHANISM naming the shafts of every group free to turn. */
function assertNoMechanism(model: ResolvedModel, layout: StationLayout, asm: Assembly): void {
  const groups = findMechanisms(asm.springs, asm.reduction);
  if (groups.length === 0) return;
  // Unknown → one of its dofs → shaft.
  const dofOfVar = i32(asm.reduction.varCount).fill(-1);
  asm.reduction.varOf.forEach((u, d) => {
    if (u >= 0 && dofOfVar[u] < 0) dofOfVar[u] = d;
  });
  const issues = groups.map((g) => {
    const shafts = [...new Set(g.map((u) => model.shafts[layout.shaftOf[dofOfVar[u]]].id))];
    const list = shafts.map((s) => `"${s}"`).join(', ');
    return {
      code: 'SN_MECHANISM' as const,
      pointer: '/supports',
      message: `${shafts.length === 1 ? 'shaft' : 'shafts'} ${list} can spin freely: add a fixed or spring support, or connect ${shafts.length === 1 ? 'it' : 'them'} to a supported shaft`,
      shafts,
    };
  });
  throw new ModelError(issues);
}

/** Upper bound of the stations and the shafts a model will have, cheap, for size limits before solving. */
export function modelSize(model: unknown): { stations: number; shafts: number } {
  const m = (model ?? {}) as Record<string, unknown>;
  const len = (k: string) => (Array.isArray(m[k]) ? (m[k] as unknown[]).length : 0);
  const shafts = Array.isArray(m.shafts) ? (m.shafts as Array<{ segments?: unknown }>) : [];
  const segments = shafts.reduce((n, s) => n + (s && Array.isArray(s.segments) ? s.segments.length : 0), 0);
  const stations =
    shafts.length + segments + len('supports') + len('torques') + len('discs') + 2 * (len('distributedTorques') + len('gearMeshes') + len('couplings'));
  return { stations, shafts: shafts.length };
}
