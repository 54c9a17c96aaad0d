/**
 * From the modes found (frequencies.ts) to what the solution reports: per mode its frequency, the
 * rotation at every station (and along every element, in closed form, for drawing), scaled so its
 * largest |φ| is +1, and the shares of strain and kinetic energy; then the crossings of every mode
 * with every excitation order in the operating range (contract, "Dynamics" and its binding readings).
 *
 * Energies (twice their value; the factor cancels in the shares), per element at the mode's ω:
 *   kinetic ∝ φᵀMφ (M = −∂K/∂ω², the exact ∫ m·φ² dz), strain = φᵀKφ + ω²·φᵀMφ (= ∫ GJ·φ'² dz);
 * an element vibrating clamped (sin nπξ, amplitude c): ∫ mφ² = mh·c²/2 and its strain ω² times that;
 * a disc J·φ²; a spring support, compliant mesh or coupling k·(p·φi + q·φj)². A rigid-body mode has
 * no strain: its strain shares are null.
 *
 * Drawing: inside a uniform element the exact shape (element.ts `uniformShape`) is sampled where it
 * curves (β > CURVED_BETA), a sample at most every SAMPLE_STEP radians of the wave (at most
 * MAX_SAMPLES per element); a tapered element is drawn straight between its stations.
 */
import type { SolveProgress } from '../progress.js';
import type { ResolvedModel } from '../normalise.js';
import type { StationLayout } from '../stations.js';
import type { SpringSet } from '../assemble.js';
import type { Reduction } from '../constraints.js';
import type { Warning } from '../../../shared-types/solution.js';
import { DynamicSystem } from './system.js';
import { SingularMatrixError } from '../sparse-solver.js';
import { ModelError } from '../../../shared-types/errors.js';
import { findModes, type ModeFound } from './frequencies.js';
import { uniformShape } from './element.js';

/** β below which an element is drawn straight, rad. */
const CURVED_BETA = 0.3;
/** Largest step of the wave between two samples, rad. */
const SAMPLE_STEP = 0.4;
/** Most interior samples of one element. */
const MAX_SAMPLES = 24;

/** One mode as the solution reports it (columns in typed arrays, not workspace memory). */
export interface ModeColumns {
  /** Hz. */
  readonly frequency: number;
  /** rad/s. */
  readonly angularFrequency: number;
  readonly rigidBody: boolean;
  readonly shafts: ReadonlyArray<{ readonly id: string; readonly stationZ: Float64Array; readonly rotation: Float64Array; readonly z: Float64Array; readonly shape: Float64Array }>;
  /** Strain-energy shares, one per item of `EnergyItems.strain` (null: a rigid-body mode). */
  readonly strain: Float64Array | null;
  /** Kinetic-energy shares, one per item of `EnergyItems.kinetic`. */
  readonly kinetic: Float64Array;
}

/**
 * The parts that hold energy, named as the solution names them, the same for every mode: strain in
 * every segment ("shaft[j]"), spring support, compliant mesh and coupling (their ids); kinetic in
 * every disc (its id) and every segment with inertia.
 */
export interface EnergyItems {
  readonly strain: readonly string[];
  readonly kinetic: readonly string[];
  /** Kinetic item of each segment (global segment index), −1 for a segment without inertia. */
  readonly kineticOfSegment: Int32Array;
}

/** A mode meeting an order of the reference speed. */
export interface Crossing {
  /** 1-based index into `modes`. */
  readonly mode: number;
  readonly order: number;
  /** Reference-shaft speed at which order × speed = the mode's circular frequency, rad/s. */
  readonly speed: number;
  readonly inRange: boolean;
  /** The operating range widened by the margin, rad/s. */
  readonly low: number;
  readonly high: number;
}

export interface DynamicsSolved {
  readonly items: EnergyItems;
  readonly modes: readonly ModeColumns[];
  readonly crossings: readonly Crossing[];
  /** Groups of shafts free to turn (rigid-body modes): statics cannot be solved when there are any. */
  readonly rigidGroups: number;
  readonly warnings: readonly Warning[];
}

/** The natural frequencies, modes and crossings of a model with `dynamics` (its statics' layout and reduction). */
export function solveDynamics(
  model: ResolvedModel,
  layout: StationLayout,
  springs: SpringSet,
  red: Reduction,
  rigidGroups: readonly number[][],
  progress?: SolveProgress,
): DynamicsSolved {
  const dyn = model.dynamics;
  if (dyn === null) throw new Error('solveDynamics: the model has no dynamics');
  const sys = new DynamicSystem(model, layout, springs, red);
  const dofOfVar = new Int32Array(red.varCount).fill(-1);
  red.varOf.forEach((u, d) => {
    if (u >= 0 && dofOfVar[u] < 0) dofOfVar[u] = d;
  });
  const shaftsOfGroup = (g: readonly number[]) => [...new Set(g.map((u) => model.shafts[layout.shaftOf[dofOfVar[u]]].id))];
  let found: ReturnType<typeof findModes>;
  try {
    found = findModes(sys, dyn, rigidGroups, shaftsOfGroup, progress);
  } catch (err) {
    if (!(err instanceof SingularMatrixError)) throw err;
    throw new ModelError([
      {
        code: 'SN_ILL_CONDITIONED',
        pointer: '/dynamics',
        message: 'the dynamic stiffness stays singular to working precision near a trial frequency: check for stiffnesses, sizes or inertias many orders of magnitude apart (units?)',
      },
    ]);
  }
  const items = energyItems(model, springs);
  const modes = found.modes.map((m) => modeColumns(sys, m, items));
  const crossings: Crossing[] = [];
  if (dyn.speed !== null) {
    const low = dyn.speed.min * (1 - dyn.margin);
    const high = dyn.speed.max * (1 + dyn.margin);
    modes.forEach((m, i) => {
      if (m.rigidBody) return;
      for (const order of dyn.orders) {
        const speed = m.angularFrequency / order;
        crossings.push({ mode: i + 1, order, speed, inRange: low <= speed && speed <= high, low, high });
      }
    });
  }
  const warnings = [...found.warnings];
  if (dyn.speed !== null && dyn.orders.length === 0) {
    warnings.push({ code: 'SN_DYN_NO_ORDERS', message: 'an operating speed is given without "orders": no crossings are looked for (no excitation is assumed)' });
  }
  return { items, modes, crossings, rigidGroups: rigidGroups.length, warnings };
}

/** The energy items of a model (see EnergyItems). */
function energyItems(model: ResolvedModel, springs: SpringSet): EnergyItems {
  const strain: string[] = [];
  const discs = model.discs.map((d) => d.id);
  const segs: string[] = [];
  let nSeg = 0;
  for (const shaft of model.shafts) nSeg += shaft.segments.length;
  const kineticOfSegment = new Int32Array(nSeg).fill(-1);
  let g = 0;
  for (const shaft of model.shafts) {
    shaft.segments.forEach((seg, j) => {
      const name = `${shaft.id}[${j}]`;
      strain.push(name);
      if ((seg.rhoIp ?? 0) > 0 || (seg.taper?.density ?? 0) > 0) {
        kineticOfSegment[g] = discs.length + segs.length;
        segs.push(name);
      }
      g++;
    });
  }
  for (let x = 0; x < springs.count - springs.elemCount; x++) {
    const ref = springs.ref[x];
    const kind = springs.kind[x];
    strain.push(kind === 'support' ? model.supports[ref].id : kind === 'mesh' ? model.meshes[ref].id : model.couplings[ref].id);
  }
  return { strain, kinetic: [...discs, ...segs], kineticOfSegment };
}

/** Rotation of every station in a mode (0 where held), from the reduced unknowns. */
function stationRotations(sys: DynamicSystem, x: Float64Array): Float64Array {
  const { varOf, alpha } = sys.red;
  const phi = new Float64Array(varOf.length);
  for (let d = 0; d < varOf.length; d++) phi[d] = varOf[d] >= 0 ? alpha[d] * x[varOf[d]] : 0;
  return phi;
}

/** One mode's stations, drawing, scale and energy shares. */
function modeColumns(sys: DynamicSystem, mode: ModeFound, items: EnergyItems): ModeColumns {
  const { model, layout } = sys;
  const { shaftStart, z, elemLeft } = layout;
  const w2 = mode.omega * mode.omega;
  sys.assemble(w2);
  const phi = stationRotations(sys, mode.x);
  const interior = new Map<number, { n: number; c: number }>();
  for (const p of mode.interior) interior.set(p.e, { n: p.n, c: p.c });
  // The drawing, per shaft: stations and interior samples, unscaled.
  const shafts = model.shafts.map((shaft, s) => {
    const zs: number[] = [];
    const ps: number[] = [];
    for (let d = shaftStart[s]; d < shaftStart[s + 1]; d++) {
      zs.push(z[d]);
      ps.push(phi[d]);
      if (d === shaftStart[s + 1] - 1) break;
      const e = d - s;
      const c = sys.tapers[e] ? 0 : sys.c[e];
      const beta = Math.sqrt(c * Math.max(w2, 0));
      const inner = interior.get(e);
      let samples = beta > CURVED_BETA ? Math.ceil(beta / SAMPLE_STEP) - 1 : 0;
      if (inner) samples = Math.max(samples, 4 * inner.n);
      samples = Math.min(samples, MAX_SAMPLES);
      for (let k = 1; k <= samples; k++) {
        const xi = k / (samples + 1);
        zs.push(z[d] + xi * (z[d + 1] - z[d]));
        const nodal = inner ? phi[d] + (phi[d + 1] - phi[d]) * xi : uniformShape(c, w2, phi[d], phi[d + 1], xi);
        ps.push(nodal + (inner ? inner.c * Math.sin(inner.n * Math.PI * xi) : 0));
      }
    }
    return { id: shaft.id, first: shaftStart[s], z: Float64Array.from(zs), shape: Float64Array.from(ps) };
  });
  // Scale: the largest |φ| at the stations (along the elements where every station is at rest) is +1.
  let big = 0;
  for (let d = 0; d < phi.length; d++) if (Math.abs(phi[d]) > Math.abs(big)) big = phi[d];
  if (big === 0) for (const sh of shafts) for (const v of sh.shape) if (Math.abs(v) > Math.abs(big)) big = v;
  const f = big === 0 ? 1 : 1 / big;
  // Energies (twice; unscaled: shares only), in the order of the items.
  const nSeg = items.kineticOfSegment.length;
  const strainOf = new Float64Array(items.strain.length);
  const kineticOf = new Float64Array(items.kinetic.length);
  const segIndex = new Int32Array(model.shafts.length + 1);
  model.shafts.forEach((sh, s) => (segIndex[s + 1] = segIndex[s] + sh.segments.length));
  for (let e = 0; e < sys.elemCount; e++) {
    const i = elemLeft[e];
    const g = segIndex[layout.shaftOf[i]] + layout.elemSegment[e];
    const d = sys.dyn[e];
    const a = phi[i];
    const b = phi[i + 1];
    const mass = d.m1 * a * a + 2 * d.mb * a * b + d.m2 * b * b;
    let strain = d.a1 * a * a + 2 * d.b * a * b + d.a2 * b * b + w2 * mass;
    let kinetic = mass;
    const inner = interior.get(e);
    if (inner) {
      kinetic = (sys.mh[e] * inner.c * inner.c) / 2;
      strain = w2 * kinetic;
    }
    strainOf[g] += strain;
    const kg = items.kineticOfSegment[g];
    if (kg >= 0) kineticOf[kg] += kinetic;
  }
  const springs = sys.springs;
  const ne = springs.elemCount;
  for (let x = 0; x < springs.count - ne; x++) {
    const j = springs.j[x];
    const stretch = springs.p[x] * phi[springs.i[x]] + (j >= 0 ? springs.q[x] * phi[j] : 0);
    strainOf[nSeg + x] = springs.k[ne + x] * stretch * stretch;
  }
  model.discs.forEach((disc, k) => {
    const p = phi[layout.stationAt(disc.shaft, disc.z)];
    kineticOf[k] = disc.inertia * p * p;
  });
  const shares = (values: Float64Array) => {
    let total = 0;
    for (let k = 0; k < values.length; k++) total += Math.max(values[k], 0);
    for (let k = 0; k < values.length; k++) values[k] = total > 0 ? Math.max(values[k], 0) / total : 0;
    return values;
  };
  return {
    frequency: mode.omega / (2 * Math.PI),
    angularFrequency: mode.omega,
    rigidBody: mode.rigid,
    shafts: shafts.map((sh, s) => {
      const rotation = new Float64Array(shaftStart[s + 1] - shaftStart[s]);
      for (let k = 0; k < rotation.length; k++) rotation[k] = phi[sh.first + k] * f + 0; // + 0: no −0 in the answer
      for (let k = 0; k < sh.shape.length; k++) sh.shape[k] = sh.shape[k] * f + 0;
      return { id: sh.id, stationZ: z.slice(shaftStart[s], shaftStart[s + 1]), rotation, z: sh.z, shape: sh.shape };
    }),
    strain: mode.rigid ? null : shares(strainOf),
    kinetic: shares(kineticOf),
  };
}
