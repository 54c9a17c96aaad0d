/**
 * The engine's public face: pure functions from a model to a solution.
 * No HTTP, no store, no I/O.
 */
import { ModelError } from '../../shared-types/errors.js';
import { SOLUTION_FORMAT, type Solution } from '../../shared-types/solution.js';
import { normaliseModel, type ResolvedModel } from './normalise.js';
import { buildStations, type StationLayout } from './stations.js';
import { assemble, findMechanisms, type Assembly } from './assemble.js';
import { SingularMatrixError, SparseLDLT } from './sparse-solver.js';
import { solveDense } from './dense-solver.js';
import { expandRotations, recover } from './recover.js';

export { normaliseModel } from './normalise.js';
export type { ResolvedModel } from './normalise.js';

/** Options of a solve. */
export interface SolveOptions {
  /** 'sparse' (default) or 'dense' (ml-matrix reference path, for cross-checks; O(n³)). */
  solver?: 'sparse' | 'dense';
  /** Interior diagram points per element where T(z) is curved (default 8); 0 keeps breakpoints only. */
  diagramPoints?: number;
}

/** Solves a model (raw JSON, units as typed). Throws ModelError for a model it cannot solve. */
export function solveModel(model: unknown, options: SolveOptions = {}): Solution {
  return solveResolved(normaliseModel(model), options);
}

/** Solves an already normalised model (the benchmark times this part: parsing excluded). */
export function solveResolved(model: ResolvedModel, options: SolveOptions = {}): Solution {
  const layout = buildStations(model);
  const asm = assemble(model, layout);
  assertNoMechanism(model, layout, asm);
  let x: Float64Array;
  let factorNonzeros = 0;
  const warnings = [];
  try {
    if (options.solver === 'dense') {
      x = solveDense(asm.system, asm.rhs);
    } else {
      const ldl = new SparseLDLT(asm.system);
      factorNonzeros = ldl.factorNonzeros;
      x = ldl.solve(asm.rhs);
      if (ldl.minPivotRatio < 1e-10) {
        warnings.push({
          code: 'SN_STIFFNESS_SPREAD',
          message: `stiffnesses in the model differ by about ${(1 / ldl.minPivotRatio).toExponential(0)}: results may lose ${Math.round(-Math.log10(ldl.minPivotRatio))} of their 16 digits`,
        });
      }
    }
  } catch (err) {
    if (err instanceof SingularMatrixError) {
      throw new ModelError([
        {
          code: 'SN_ILL_CONDITIONED',
          pointer: '',
          message: 'the stiffness matrix is singular to working precision: check for parts many orders of magnitude stiffer than their neighbours',
        },
      ]);
    }
    throw err;
  }
  const phi = expandRotations(asm, x);
  const rec = recover(model, layout, asm, phi, options.diagramPoints ?? 8);
  return {
    format: SOLUTION_FORMAT,
    name: model.name,
    shafts: rec.shafts,
    reactions: rec.reactions,
    gearMeshes: rec.gearMeshes,
    couplings: rec.couplings,
    equilibrium: { maxResidual: rec.residuals.reduce((m, r) => Math.max(m, r.residual), 0), shafts: rec.residuals },
    checks: rec.checks,
    warnings: [...rec.warnings, ...warnings],
    stats: { stations: layout.dofCount, unknowns: asm.reduction.varCount, factorNonzeros },
  };
}

/** Throws SN_MECHANISM naming the shafts of every group free to turn. */
function assertNoMechanism(model: ResolvedModel, layout: StationLayout, asm: Assembly): void {
  const groups = findMechanisms(asm.springs, asm.reduction);
  if (groups.length === 0) return;
  // Unknown → one of its dofs → shaft.
  const dofOfVar = new Int32Array(asm.reduction.varCount).fill(-1);
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
