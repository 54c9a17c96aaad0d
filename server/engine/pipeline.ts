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
import { assertNoMechanism, elasticParts, findMechanisms, loadVector, reducedRhs, reducedSystem, type ElasticParts, type ReducedSystem } from './assemble.js';
import { reduceConstraints, type Reduction } from './constraints.js';
import { ldlNumeric, ldlSymbolic, SingularMatrixError, toFullCSC, type LdlFactor } from './sparse-solver.js';
import { denseFactor } from './dense-solver.js';
import { refinedSolve } from './refine.js';
import { buildChecks, elementTorques, expandRotations, jointTorques, recoverShafts, recoveryWarnings, type Recovered } from './recover.js';
import type { Solved } from './output.js';
import { recoverRaisers } from './raisers.js';
import type { Workspace } from './workspace.js';
import { solveDynamics, type DynamicsSolved } from './dynamics/modes.js';
import { forcedResponse } from './dynamics/forced.js';
import { segmentInertia } from './dynamics/forced-assembly.js';
import {
  abridgedWarning,
  assembledStateModel,
  caseFactors,
  columnWeights,
  combinedLayout,
  combinedModel,
  emptyEnvelope,
  finishEnvelope,
  hasAssembledState,
  listsAbridged,
  shownCombination,
  Superposition,
  type CombinationSolved,
  type StateColumn,
} from './combinations.js';
import { checkpoint, type SolveProgress } from './progress.js';

/** The phases of a solve, reported to `onPhase` with their durations. */
export type SolvePhase = 'stations' | 'assemble' | 'factorise' | 'recover' | 'dynamics' | 'output';

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
  // Natural frequencies, modes and crossings (contract, "Dynamics"): from the same parts and reduction.
  const dynamics = model.dynamics ? ws.stage(() => solveDynamics(model, layout, parts.springs, reduction, findMechanisms(parts.springs, reduction, ws), progress)) : undefined;
  if (dynamics) lap('dynamics');
  if (dynamics && dynamics.rigidGroups > 0) return dynamicsOnly(model, layout, reduction, dynamics, ws);
  ws.stage(() => assertNoMechanism(model, layout, parts.springs, reduction, ws));
  // (After the frequencies the phases have moved on: the next report is the factorisation's.)
  if (!dynamics) checkpoint(progress, 'assembly', 0.7);
  // K·x = f: the entries until the compressed columns are made, the diagonal and f until solved.
  const system = ws.stage(() => reducedSystem(parts.springs, parts.load, reduction, ws));
  lap('assemble');
  if (model.loadCases.length > 0) return withDynamics(solveCombinations(model, options, ws, { layout, parts, reduction, system, shown, lap }), dynamics, model, layout, ws, progress);

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
  return withDynamics(
    {
      model,
      layout,
      rec,
      maxResidual,
      warnings: [...recoveryWarnings(model, reduction), ...model.warnings, ...warnings],
      stats: { stations: layout.dofCount, unknowns: reduction.varCount, factorNonzeros, checksEvaluated: checks.total },
    },
    dynamics,
    model,
    layout,
    ws,
    progress,
  );
}

/**
 * A solve with its dynamics' results, warnings and failing crossings (counted among the checks),
 * and, with excitations and a speed range, the forced response: its check adds each layer's peak
 * static shear (the single state's, or the envelope's over the combinations; none when the statics
 * are omitted) to the peak vibratory shear.
 */
function withDynamics(
  solved: Solved,
  dynamics: DynamicsSolved | undefined,
  model: ResolvedModel,
  layout: StationLayout,
  ws: Workspace,
  progress: SolveProgress | undefined,
  staticsOmitted = false,
): Solved {
  if (!dynamics || !model.dynamics) return solved;
  const failing = dynamics.crossings.filter((c) => c.inRange).length;
  const staticShear = staticsOmitted ? null : (solved.cases?.envelope.layerMaxShear ?? solved.rec.layerMaxShear);
  const dyn = model.dynamics;
  const forced = ws.stage(() => forcedResponse({ model, layout, dynamics: dyn, inertia: segmentInertia(model), staticShear }, ws, { progress })) ?? undefined;
  return {
    ...solved,
    dynamics,
    ...(forced ? { forced } : {}),
    warnings: [...solved.warnings, ...dynamics.warnings],
    stats: { ...solved.stats, checksEvaluated: solved.stats.checksEvaluated + failing + (forced ? forced.checks.count : 0) },
  };
}


/**
 * A model free to spin, with dynamics (contract, binding reading): its dynamics are solved and its
 * statics, which have no solution, are omitted with a warning.
 */
function dynamicsOnly(model: ResolvedModel, layout: StationLayout, reduction: Reduction, dynamics: DynamicsSolved, ws: Workspace): Solved {
  const omitted: Warning = {
    code: 'SN_STATICS_OMITTED',
    message: 'some shafts are free to spin (rigid-body modes at 0 Hz): the static part (torques, reactions, stresses, checks) has no solution and is omitted; the dynamics are solved',
  };
  // The static part, empty: shafts without stations or segments, no reactions, no checks.
  const nShafts = model.shafts.length;
  const none = new Float64Array(0);
  const zeros = new Float64Array(nShafts);
  const view: ResolvedModel = { ...model, shafts: model.shafts.map((sh) => ({ ...sh, segments: [] })), raisers: [], loadCases: [], combinations: [] };
  const rec: Recovered = {
    phi: none,
    TL: none,
    TR: none,
    segBase: new Int32Array(nShafts + 1),
    segMaxAbs: none,
    segAt: none,
    segTwist: none,
    segRate: none,
    layerBase: new Int32Array(1),
    layerMaxShear: none,
    totalTwist: zeros,
    residual: zeros,
    diagStart: new Int32Array(nShafts),
    diagCount: new Int32Array(nShafts),
    dZ: none,
    dT: none,
    dPhi: none,
    dTau: none,
    reactions: [],
    gearMeshes: [],
    couplings: [],
    checks: { total: 0, listed: new Int32Array(0), kind: new Uint8Array(0), shaft: new Int32Array(0), segment: new Int32Array(0), layer: new Int32Array(0), value: none, limit: none, utilisation: none },
  };
  return withDynamics(
    {
      model: view,
      layout: { ...layout, dofCount: 0, shaftStart: new Int32Array(nShafts + 1) },
      rec,
      maxResidual: 0,
      warnings: [...recoveryWarnings(model, reduction), ...model.warnings, omitted],
      stats: { stations: layout.dofCount, unknowns: reduction.varCount, factorNonzeros: 0, checksEvaluated: 0 },
    },
    dynamics,
    model,
    layout,
    ws,
    undefined,
    true,
  );
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
 * A model with load cases, by superposition: one factorisation; one right-hand side for the
 * combination shown (its top-level results are those of a model with its loads typed in), one
 * for the assembled state (when there is one) and one per load case alone; each column
 * recovered once; then every combination from the columns in one pass that fills the envelope.
 */
function solveCombinations(model: ResolvedModel, options: PipelineOptions, ws: Workspace, a: Assembled): Solved {
  const { layout, parts, reduction, system, shown, lap } = a;
  const warnings: Warning[] = [];
  // The cases alone carry no assembled state: the springs' misfits and offsets and the constraints' shifts are zero for them.
  const bare = { springs: { ...parts.springs, c: ws.f64(parts.springs.c.length) }, reduction: { ...reduction, beta: ws.f64(reduction.beta.length) } };
  const full = { springs: parts.springs, reduction };
  const withAssembled = hasAssembledState(model);
  const stateOf = (m: ResolvedModel, sys: typeof full) => {
    const lay = combinedLayout(m, layout, ws);
    return { model: m, layout: lay, load: loadVector(m, lay, ws), ...sys };
  };
  const top = stateOf(combinedModel(model, model.combinations[shown]), full);
  const states = [stateOf(assembledStateModel(model), full), ...model.loadCases.map((_, j) => stateOf(combinedModel(model, caseFactors(model, j)), bare))];
  const solved = [top, ...states.filter((_, c) => c > 0 || withAssembled)];
  const rights = solved.map((st) => ({ load: st.load, springs: st.springs, reduction: st.reduction, rhs: () => reducedRhs(st.springs, st.load, st.reduction, ws) }));
  const { xs, factorNonzeros } = solveLoads(model, layout, options, ws, parts, reduction, system, rights, warnings);
  lap('factorise');

  // Every column recovered once: rotations, element end torques, what supports and connections carry, shaft sums.
  let next = 1;
  let jumps: Uint8Array | undefined;
  const columns: StateColumn[] = states.map((st, c) => {
    // Progress: each column recovered, then the pass over the combinations.
    checkpoint(options.progress, 'recovery', (0.6 * c) / states.length);
    if (c === 0 && !withAssembled) return zeroColumn(model, layout, ws);
    const x = xs[next++];
    const phi = ws.stage(() => expandRotations(st.reduction, x, ws));
    ws.release(x);
    const ends = ws.stage(() => elementTorques(st.model, st.layout, st.springs, phi, ws));
    const joints = ws.stage(() => jointTorques(st.model, st.layout, { ...parts, springs: st.springs, load: st.load }, phi, ws));
    // Where T may jump is the same in every column (every load's station counts, whatever its value).
    if (jumps === undefined) jumps = joints.jumps;
    else ws.release(joints.jumps);
    ws.release(joints.residual, st.load);
    return {
      phi,
      TL: ends.TL,
      TR: ends.TR,
      t1: st.layout.elemT1,
      t2: st.layout.elemT2,
      reaction: Float64Array.from(joints.reactions, (r) => r.torque),
      meshForce: Float64Array.from(joints.gearMeshes, (g) => g.force),
      meshA: Float64Array.from(joints.gearMeshes, (g) => g.torqueA),
      meshB: Float64Array.from(joints.gearMeshes, (g) => g.torqueB),
      couplingA: Float64Array.from(joints.couplings, (g) => g.torqueA),
      couplingB: Float64Array.from(joints.couplings, (g) => g.torqueB),
      sums: joints.sums,
    };
  });

  // The combination shown: every result, station tables and diagrams included, from its own solve.
  const x = xs[0];
  const phi = ws.stage(() => expandRotations(reduction, x, ws));
  ws.release(x);
  const ends = ws.stage(() => elementTorques(top.model, top.layout, parts.springs, phi, ws));
  const joints = ws.stage(() => jointTorques(top.model, top.layout, { ...parts, load: top.load }, phi, ws));
  const shafts = ws.stage(() => recoverShafts(top.model, top.layout, phi, ends, joints.jumps, options.diagramPoints ?? 8, ws));
  ws.release(joints.jumps);
  const raisers = model.raisers.length > 0 ? recoverRaisers(top.model, top.layout, ends) : undefined;
  const checks = ws.stage(() => buildChecks(top.model, shafts, ws, raisers));
  const rec: Recovered = { phi, ...ends, ...shafts, raisers, residual: joints.residual, reactions: joints.reactions, gearMeshes: joints.gearMeshes, couplings: joints.couplings, checks };
  let maxResidual = 0;
  for (let n = 0; n < rec.residual.length; n++) maxResidual = Math.max(maxResidual, rec.residual[n]);

  // Every combination from the columns, into the envelope.
  const superposition = new Superposition(model, layout, columns, jumps);
  const envelope = emptyEnvelope(superposition);
  const lost: string[] = [];
  const weights = model.combinations.map(columnWeights);
  checkpoint(options.progress, 'recovery', 0.7);
  const all = superposition.combineAll(weights, envelope);
  checkpoint(options.progress, 'recovery', 0.95);
  const combinations: CombinationSolved[] = model.combinations.map((c, k) => {
    const maxResidual = all.maxResidual[k];
    if (maxResidual > 1e-8 * all.torqueScale[k]) lost.push(c.id);
    return { id: c.id, ...(c.name === undefined ? {} : { name: c.name }), weights: weights[k], maxResidual, finite: all.finite[k] === 1 };
  });
  finishEnvelope(envelope, superposition);
  const { springs, load } = parts;
  ws.release(springs.k, springs.i, springs.j, springs.p, springs.q, springs.c, load, reduction.varOf, reduction.alpha, reduction.beta);
  lap('recover');
  if (lost.length > 0) {
    warnings.push({
      code: 'SN_PRECISION_LOST',
      message: `equilibrium holds only loosely in combination${lost.length === 1 ? '' : 's'} ${lost.map((id) => `"${id}"`).join(', ')}: sizes or stiffnesses many orders of magnitude apart cost digits (check the units)`,
    });
  }
  const abridged = listsAbridged(model, superposition.segments.length);
  if (abridged) warnings.push(abridgedWarning(model, superposition.segments.length));
  return {
    model: top.model,
    layout: top.layout,
    rec,
    maxResidual,
    warnings: [...recoveryWarnings(model, reduction), ...model.warnings, ...warnings],
    stats: { stations: layout.dofCount, unknowns: reduction.varCount, factorNonzeros, checksEvaluated: checks.total },
    cases: { combination: model.combinations[shown].id, combinations, envelope, superposition, abridged },
  };
}

/** The column of a model without an assembled state: zero. */
function zeroColumn(model: ResolvedModel, layout: StationLayout, ws: Workspace): StateColumn {
  const elems = layout.elemLeft.length;
  return {
    phi: ws.f64(layout.dofCount),
    TL: ws.f64(elems),
    TR: ws.f64(elems),
    t1: ws.f64(elems),
    t2: ws.f64(elems),
    reaction: new Float64Array(model.supports.length),
    meshForce: new Float64Array(model.meshes.length),
    meshA: new Float64Array(model.meshes.length),
    meshB: new Float64Array(model.meshes.length),
    couplingA: new Float64Array(model.couplings.length),
    couplingB: new Float64Array(model.couplings.length),
    sums: new Float64Array(model.shafts.length),
  };
}

/** Stations a resolved model can have at most (each point on a shaft may be one). */
export function stationEstimate(model: ResolvedModel): number {
  let n = model.shafts.length + model.supports.length + model.torques.length + model.discs.length + model.raisers.length + (model.dynamics?.excitations.length ?? 0);
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
 * K·x = f for every load given (refined against its own springs and reduction where it has them: a case
 * alone has no assembled state), its right-hand side made when it is solved: one factorisation
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
  rights: ReadonlyArray<{ readonly load: Float64Array; readonly rhs: () => Float64Array; readonly springs?: ElasticParts['springs']; readonly reduction?: Reduction }>,
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
    return ws.stage(() => refinedSolve(r.springs ?? parts.springs, r.load, r.reduction ?? reduction, r.rhs(), symbolic, factor, ws));
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
