/**
 * One solve, stage by stage, and the lifetime of every work array: this is
 * the only code that reserves and gives back work memory.
 *
 * A stage is a function of the model and of earlier stages' results that
 * takes its arrays from the workspace and returns what it made; it frees
 * nothing. Each runs through `ws.stage`, which gives back, when the stage
 * returns, the arrays it took and did not return (its scratch). A result is
 * given back here (`ws.release`) on the line after the last stage that reads
 * it; what is never given back is read by the output, until the session ends.
 */
import { ModelError } from '../../shared-types/errors.js';
import type { Warning } from '../../shared-types/solution.js';
import type { ResolvedModel } from './normalise.js';
import { buildStations, type StationLayout } from './stations.js';
import { assertNoMechanism, elasticParts, loadVector, reducedRhs, reducedSystem, type ElasticParts, type ReducedSystem } from './assemble.js';
import { reduceConstraints, type Reduction } from './constraints.js';
import { ldlNumeric, ldlSymbolic, SingularMatrixError, toFullCSC, type LdlFactor } from './sparse-solver.js';
import { denseFactor } from './dense-solver.js';
import { refinedSolve } from './refine.js';
import { buildChecks, elementTorques, expandRotations, jointTorques, recoverShafts, recoveryWarnings, type Recovered } from './recover.js';
import type { Solved } from './output.js';
import { recoverRaisers } from './raisers.js';
import type { Workspace } from './workspace.js';
import { addToEnvelope, combinedLayout, combinedModel, emptyEnvelope, shownCombination, type CombinationSolved } from './combinations.js';
import { checkpoint, type SolveProgress } from './progress.js';

/** The phases of a solve, reported to `onPhase` with their durations. */
export type SolvePhase = 'stations' | 'assemble' | 'factorise' | 'recover' | 'output';

/** What the pipeline reads of the solve's options. */
export interface PipelineOptions {
  readonly solver?: 'sparse' | 'dense';
  readonly diagramPoints?: number;
  /** With load cases: the id of the combination the top-level results show (else the first). */
  readonly combination?: string;
  readonly onPhase?: (phase: SolvePhase, ms: number) => void;
  /**
   * Progress reports and the abort signal (progress.ts): checked between the stages
   * (`checkpoint`), and in later long loops every 2^k iterations (`loopCheckpoint`);
   * an abort throws `SolveAborted` and the workspace's session gives every array back.
   */
  readonly progress?: SolveProgress;
}

/**
 * Bytes of large work arrays per station of `stationEstimate`, a little more
 * than the most measured (about 350 per station on a loaded chain of 1e6
 * stations, scratch given back being reused): reserved in one piece at the
 * start of a large solve.
 */
export const LARGE_BYTES_PER_STATION = 400;
/** Bytes of small work arrays per station: sizes the first chunk of a fresh workspace. */
const SMALL_BYTES_PER_STATION = 320;

/** Solves `model` in the workspace's current session; the result's columns live until the session ends. */
export function solvePipeline(model: ResolvedModel, options: PipelineOptions, ws: Workspace): Solved {
  const shown = shownCombination(model, options.combination);
  const stations = stationEstimate(model);
  ws.reserve(LARGE_BYTES_PER_STATION * stations, SMALL_BYTES_PER_STATION * stations);
  const lap = phaseClock(options.onPhase);
  const progress = options.progress;

  // Stations and elements: read by every later stage and by the output.
  checkpoint(progress, 'stations', 0);
  const layout = ws.stage(() => buildStations(model, ws));
  lap('stations');
  checkpoint(progress, 'assembly', 0);

  // Springs, constraint edges and loads: read until the joint torques are recovered.
  const parts = ws.stage(() => elasticParts(model, layout, ws));
  // The constraints eliminated, φ = α·x + β: read until the rotations are expanded.
  const shaftName = (dof: number) => model.shafts[layout.shaftOf[dof]].id;
  checkpoint(progress, 'assembly', 0.4);
  const reduction = ws.stage(() => reduceConstraints(layout.dofCount, parts.edges, shaftName, ws));
  checkpoint(progress, 'assembly', 0.6);
  ws.stage(() => assertNoMechanism(model, layout, parts.springs, reduction, ws));
  checkpoint(progress, 'assembly', 0.7);
  // K·x = f: the entries until the compressed columns are made, the diagonal and f until solved.
  const system = ws.stage(() => reducedSystem(parts.springs, parts.load, reduction, ws));
  lap('assemble');
  if (model.loadCases.length > 0) return solveCombinations(model, options, ws, { layout, parts, reduction, system, shown, lap });

  const warnings: Warning[] = [];
  const { xs, factorNonzeros } = solveLoads(model, layout, options, ws, parts, reduction, system, [{ load: parts.load, rhs: () => system.rhs }], warnings);
  const x = xs[0];
  lap('factorise');

  // Rotations of every dof, and the end torques of every element: read by the output.
  checkpoint(progress, 'recovery', 0);
  const phi = ws.stage(() => expandRotations(reduction, x, ws));
  ws.release(x, reduction.varOf, reduction.alpha, reduction.beta);
  checkpoint(progress, 'recovery', 0.1);
  const ends = ws.stage(() => elementTorques(model, layout, parts.springs, phi, ws));
  checkpoint(progress, 'recovery', 0.25);
  // Reactions and connection torques; where T jumps (read by the diagrams only).
  const joints = ws.stage(() => jointTorques(model, layout, parts, phi, ws));
  const { springs, load } = parts;
  ws.release(springs.k, springs.i, springs.j, springs.p, springs.q, springs.c, load);
  checkpoint(progress, 'recovery', 0.4);
  const shafts = ws.stage(() => recoverShafts(model, layout, phi, ends, joints.jumps, options.diagramPoints ?? 8, ws));
  ws.release(joints.jumps);
  checkpoint(progress, 'recovery', 0.85);
  const raisers = model.raisers.length > 0 ? recoverRaisers(model, layout, ends) : undefined;
  const checks = ws.stage(() => buildChecks(model, shafts, ws, raisers));
  lap('recover');
  checkpoint(progress, 'recovery', 1);

  const rec: Recovered = { phi, ...ends, ...shafts, raisers, residual: joints.residual, reactions: joints.reactions, gearMeshes: joints.gearMeshes, couplings: joints.couplings, checks };
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
    warnings: [...recoveryWarnings(model, reduction), ...model.warnings, ...warnings],
    stats: { stations: layout.dofCount, unknowns: reduction.varCount, factorNonzeros, checksEvaluated: checks.total },
  };
}

/** What the combinations' solve takes over from the assembly. */
interface Assembled {
  readonly layout: StationLayout;
  readonly parts: ElasticParts;
  readonly reduction: Reduction;
  readonly system: ReducedSystem;
  /** Index of the combination the top-level results show. */
  readonly shown: number;
  readonly lap: (phase: SolvePhase) => void;
}

/**
 * A model with load cases: one factorisation, then per combination its load
 * vector and right-hand side (the assembled state in it unfactored), its
 * solve, and every result recovered from its own rotations. The station
 * columns of every combination but the shown one are given back once they
 * are in the envelope.
 */
function solveCombinations(model: ResolvedModel, options: PipelineOptions, ws: Workspace, a: Assembled): Solved {
  const { layout, parts, reduction, system, shown, lap } = a;
  const warnings: Warning[] = [];
  const states = model.combinations.map((c) => {
    const m = combinedModel(model, c);
    const lay = combinedLayout(m, layout, ws);
    return { combination: c, model: m, layout: lay, load: loadVector(m, lay, ws) };
  });
  const rights = states.map((st) => ({ load: st.load, rhs: () => reducedRhs(parts.springs, st.load, reduction, ws) }));
  const { xs, factorNonzeros } = solveLoads(model, layout, options, ws, parts, reduction, system, rights, warnings);
  lap('factorise');

  let segments = 0;
  let layers = 0;
  for (const sh of model.shafts) {
    segments += sh.segments.length;
    for (const sg of sh.segments) layers += sg.layers.length;
  }
  const envelope = emptyEnvelope(layout.dofCount, segments, layers, model.supports.length);
  const combos: CombinationSolved[] = [];
  let checksEvaluated = 0;
  const lost: string[] = [];
  states.forEach((st, k) => {
    const phi = ws.stage(() => expandRotations(reduction, xs[k], ws));
    ws.release(xs[k]);
    const ends = ws.stage(() => elementTorques(st.model, st.layout, parts.springs, phi, ws));
    const joints = ws.stage(() => jointTorques(st.model, st.layout, { ...parts, load: st.load }, phi, ws));
    const shafts = ws.stage(() => recoverShafts(st.model, st.layout, phi, ends, joints.jumps, options.diagramPoints ?? 8, ws));
    ws.release(joints.jumps);
    const raisers = model.raisers.length > 0 ? recoverRaisers(st.model, st.layout, ends) : undefined;
    const checks = ws.stage(() => buildChecks(st.model, shafts, ws, raisers));
    const rec: Recovered = { phi, ...ends, ...shafts, raisers, residual: joints.residual, reactions: joints.reactions, gearMeshes: joints.gearMeshes, couplings: joints.couplings, checks };
    let maxResidual = 0;
    for (let n = 0; n < rec.residual.length; n++) maxResidual = Math.max(maxResidual, rec.residual[n]);
    let torqueScale = 0;
    for (let n = 0; n < rec.segMaxAbs.length; n++) torqueScale = Math.max(torqueScale, rec.segMaxAbs[n]);
    if (maxResidual > 1e-8 * torqueScale) lost.push(st.combination.id);
    addToEnvelope(envelope, layout, rec, k);
    if (k === shown) checksEvaluated = checks.total;
    // Only the shown combination's stations and diagrams are written: the others' are given back.
    else ws.release(rec.phi, rec.TL, rec.TR, rec.dZ, rec.dT, rec.dPhi, rec.dTau, st.load, st.layout.elemT1, st.layout.elemT2);
    const name = st.combination.name;
    combos.push({ id: st.combination.id, ...(name === undefined ? {} : { name }), rec, maxResidual });
  });
  const { springs, load } = parts;
  ws.release(springs.k, springs.i, springs.j, springs.p, springs.q, springs.c, load, reduction.varOf, reduction.alpha, reduction.beta);
  lap('recover');
  if (lost.length > 0) {
    warnings.push({
      code: 'SN_PRECISION_LOST',
      message: `equilibrium holds only loosely in combination${lost.length === 1 ? '' : 's'} ${lost.map((id) => `"${id}"`).join(', ')}: sizes or stiffnesses many orders of magnitude apart cost digits (check the units)`,
    });
  }
  const top = combos[shown];
  return {
    model: states[shown].model,
    layout: states[shown].layout,
    rec: top.rec,
    maxResidual: top.maxResidual,
    warnings: [...recoveryWarnings(model, reduction), ...model.warnings, ...warnings],
    stats: { stations: layout.dofCount, unknowns: reduction.varCount, factorNonzeros, checksEvaluated },
    cases: { combination: top.id, combinations: combos, envelope },
  };
}

/** Stations a resolved model can have at most (each point on a shaft may be one). */
export function stationEstimate(model: ResolvedModel): number {
  let n = model.shafts.length + model.supports.length + model.torques.length + model.discs.length + model.raisers.length;
  for (const shaft of model.shafts) n += shaft.segments.length;
  return n + 2 * (model.distributed.length + model.meshes.length + model.couplings.length);
}

/** Calls `onPhase` with the time since the previous call (nothing without it). */
function phaseClock(onPhase: PipelineOptions['onPhase']): (phase: SolvePhase) => void {
  if (!onPhase) return () => {};
  let t0 = performance.now();
  return (phase) => {
    const t = performance.now();
    onPhase(phase, t - t0);
    t0 = t;
  };
}

/**
 * K·x = f for every load given, its right-hand side made when it is solved: one factorisation
 * for all of them, the sparse L·D·Lᵀ refined against each load's own spring residual, or the
 * dense reference path. Gives back the system's entries, diagonal and base right-hand side once
 * read; warns when the pivots show stiffnesses far apart.
 */
function solveLoads(
  model: ResolvedModel,
  layout: StationLayout,
  options: PipelineOptions,
  ws: Workspace,
  parts: ElasticParts,
  reduction: Reduction,
  system: ReducedSystem,
  rights: ReadonlyArray<{ readonly load: Float64Array; readonly rhs: () => Float64Array }>,
  warnings: Warning[],
): { xs: Float64Array[]; factorNonzeros: number } {
  if (options.solver === 'dense') {
    checkpoint(options.progress, 'factorisation', 0);
    const solveK = illConditionedAsModelError(model, layout, reduction, () => denseFactor(system.matrix));
    return { xs: rights.map((r) => solveK(r.rhs())), factorNonzeros: 0 };
  }
  const progress = options.progress;
  checkpoint(progress, 'factorisation', 0);
  const csc = ws.stage(() => toFullCSC(system.matrix, ws));
  ws.release(system.matrix.rows, system.matrix.cols, system.matrix.vals);
  checkpoint(progress, 'factorisation', 0.2);
  const symbolic = ws.stage(() => ldlSymbolic(csc, ws));
  checkpoint(progress, 'factorisation', 0.5);
  const factor: LdlFactor = illConditionedAsModelError(model, layout, reduction, () =>
    ws.stage(() => ldlNumeric(symbolic, csc, system.matrix.diag, ws)),
  );
  ws.release(csc.Ap, csc.Ai, csc.Ax, system.matrix.diag, symbolic.pinv, symbolic.parent);
  const factorNonzeros = symbolic.Lp[symbolic.n];
  const xs = rights.map((r, k) => {
    checkpoint(progress, 'solve', k / rights.length);
    return ws.stage(() => refinedSolve(parts.springs, r.load, reduction, r.rhs(), symbolic, factor, ws));
  });
  ws.release(system.rhs, symbolic.perm, symbolic.Lp, factor.Li, factor.Lx, factor.D);
  if (factor.minPivotRatio < 1e-10) {
    warnings.push({
      code: 'SN_STIFFNESS_SPREAD',
      message: `stiffnesses in the model differ by about ${(1 / factor.minPivotRatio).toExponential(0)}: results may lose ${Math.round(-Math.log10(factor.minPivotRatio))} of their 16 digits`,
    });
  }
  return { xs, factorNonzeros };
}

/** Runs a factorisation; a lost pivot becomes SN_ILL_CONDITIONED naming the shaft of its unknown. */
function illConditionedAsModelError<T>(model: ResolvedModel, layout: StationLayout, red: Reduction, factorise: () => T): T {
  try {
    return factorise();
  } catch (err) {
    if (!(err instanceof SingularMatrixError)) throw err;
    // The dense path cannot tell which unknown: the first shaft then.
    const dof = err.column >= 0 ? red.varOf.indexOf(err.column) : 0;
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
}
