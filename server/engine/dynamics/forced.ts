/**
 * Forced response: harmonic torques at orders of the reference shaft's speed,
 * hysteretic damping on every elastic part, an exact complex solve at each
 * speed (forced-assembly.ts: the complex dynamic stiffness; complex-ldl.ts:
 * its L·D·Lᵀ over the symbolic phase of statics). No modal truncation.
 *
 * Excitation e is a torque of amplitude F_e at its point, of circular
 * frequency Ω = order_e · s, s the reference-shaft speed (rad/s) over the
 * operating range speed.min … speed.max. Excitations of one order share each
 * factorisation. Per segment and speed, the vibratory torque of e is the
 * largest |T(z)| of the complex internal torque k(1 + 2iζ)·Δφ along the
 * segment (interior maxima of elements with inertia found in closed form,
 * forced-assembly.ts), and the "sum" response is Σ_e of those amplitudes
 * (conservative: their largest values may lie at different points).
 * Vibratory shear: torque × the section's stress factor G·r/ΣGJ per layer (as
 * statics, recover.ts), along a taper the largest |T|·r(z)/J(z).
 *
 * Peaks: the response is sampled at GRID_SPEEDS speeds evenly spaced over the
 * range (ends included); every local maximum of every curve (each segment,
 * each excitation and the sum) is then refined on the bracket of its grid
 * neighbours to PEAK_SPEED_TOL relative in speed, so a resonance sharper than
 * the grid is not under-read: the rotations are solved exactly at Chebyshev
 * points of the bracket (9, doubled while the interpolation's tail shrinks, then halved) and
 * interpolated in speed, and each curve is
 * maximised on the interpolant by Brent's method (forced-peaks.ts), so every
 * curve peaking in one bracket shares the same few solves. A peak is
 * assumed single between two grid neighbours (two peaks closer than two grid
 * intervals, 0.5 % of the range, can hide one another). Where the peak is flat to round-off, the speed is
 * as good as the comparison of values allows (≈ 1e-8 of the peak's width, or
 * √ of the solves' round-off), and the peak value exact to the interpolation
 * tolerance (INTERP_TOL, 1e-10 relative).
 *
 * Check, per layer with an allowable stress: the peak vibratory shear of the
 * sum response plus the layer's peak static shear (given by the caller:
 * the single load state's, or the worst combination's) against the allowable.
 */
import { checkpoint, type SolveProgress } from '../progress.js';
import { ModelError } from '../../../shared-types/errors.js';
import type { ResolvedModel } from '../normalise.js';
import type { StationLayout } from '../stations.js';
import { elasticParts } from '../assemble.js';
import { reduceConstraints } from '../constraints.js';
import { ldlSymbolic } from '../sparse-solver.js';
import { globalNumbering } from '../recover.js';
import type { Workspace } from '../workspace.js';
import type { ResolvedDynamics, ResolvedExcitation } from './types.js';
import { ComplexPivotError, complexLdlNumeric, complexLdlSolve, type ComplexLdlFactor } from './complex-ldl.js';
import {
  buildForcedSystem,
  fillDynamicStiffness,
  forcedScratch,
  invSqrtOnePlus,
  taperElementPeak,
  uniformElementPeakAt,
  elementStiffnessAt,
  taperDynamicStiffness,
  type SegmentInertia,
} from './forced-assembly.js';
import { baryCoefficients, baryWeights, brentMax, chebPoints, chebTailTables, CHEB_LEVELS, INTERP_TOL, MAX_SPLITS } from './forced-peaks.js';

/**
 * A doubling of the points that leaves the worst Chebyshev tail above this fraction of the
 * previous level's has reached the solves' round-off (noise shrinks by about √2 per doubling;
 * a converging series by ρ^(m−1), and a ρ so close to 1 that this is under 16 leaves a tail far
 * above NOISE_CEILING)...
 */
const NOISE_PLATEAU = 1 / 16;
/** ...provided the tail is this small (relative): a larger tail that shrinks slowly is a resonance not yet resolved, not round-off. */
const NOISE_CEILING = 1e-6;

/** A piece of a bracket: its Chebyshev points, their barycentric weights and the exact rotations solved there. */
interface Piece {
  readonly nodes: Float64Array;
  readonly weights: Float64Array;
  readonly phis: Float64Array[];
}

/** Speeds of the coarse grid over the operating range (ends included). */
export const GRID_SPEEDS = 400;
/** Relative tolerance, in speed, to which each local maximum is refined. */
export const PEAK_SPEED_TOL = 1e-9;

export interface ForcedInput {
  readonly model: ResolvedModel;
  readonly layout: StationLayout;
  readonly dynamics: ResolvedDynamics;
  /** The shafts' own inertia per segment (forced-assembly.ts segmentInertia). */
  readonly inertia: SegmentInertia;
  /**
   * Per layer, numbered as recover.ts's layerBase (Recovered.layerMaxShear, or the envelope's),
   * the peak static |τ|, Pa; null when the static part was not solved (then the check is the
   * vibratory stress alone, and says so).
   */
  readonly staticShear: Float64Array | null;
}

export interface ForcedOptions {
  /** Coarse grid size (default GRID_SPEEDS); at least 2 unless min = max. */
  readonly gridSpeeds?: number;
  /** false: the peaks are the grid's largest values, unrefined (for timing the sweep alone; default true). */
  readonly refine?: boolean;
  /** Relative tolerance in speed of the refined peaks (default PEAK_SPEED_TOL). */
  readonly peakTolerance?: number;
  /** Progress and abort: a checkpoint per grid speed (the first half) and per refined bracket (the second). */
  readonly progress?: SolveProgress;
}

/** The checks of peak vibratory plus static shear against the allowable, one per layer with an allowable. */
export interface ForcedChecks {
  readonly count: number;
  /** Shaft index, segment index within the shaft, layer index within the segment. */
  readonly shaft: Int32Array;
  readonly segment: Int32Array;
  readonly layer: Int32Array;
  /** Peak vibratory |τ| of the sum response, Pa; the static |τ| added (NaN: not solved), Pa. */
  readonly vibratory: Float64Array;
  readonly static: Float64Array;
  /** Reference speed of the vibratory peak, rad/s. */
  readonly speed: Float64Array;
  readonly value: Float64Array;
  readonly limit: Float64Array;
}

/**
 * The forced response in columns. Curves c = 0 … E − 1 are the excitations (in the model's
 * order), c = E the sum. Segments are numbered across shafts (segBase). Series of curve c and
 * segment g: torque[(c·segments + g)·speeds.length + i].
 */
export interface ForcedSolved {
  readonly speeds: Float64Array;
  readonly excitations: readonly ResolvedExcitation[];
  readonly curves: number;
  readonly segments: number;
  readonly segBase: Int32Array;
  /** Vibratory torque amplitude, N·m, and shear amplitude (largest layer), Pa, at each grid speed. */
  readonly torque: Float64Array;
  readonly shear: Float64Array;
  /** Per curve and segment [c·segments + g]: peak torque and its speed; peak shear and its speed. */
  readonly peakTorque: Float64Array;
  readonly peakSpeed: Float64Array;
  readonly peakShear: Float64Array;
  readonly peakShearSpeed: Float64Array;
  /** Per layer (layerBase numbering): peak vibratory |τ| of the sum response, Pa. */
  readonly layerBase: Int32Array;
  readonly layerPeakShear: Float64Array;
  readonly checks: ForcedChecks;
  /** Complex solves made (one per distinct order and speed evaluated). */
  readonly solves: number;
  readonly damping: number;
  /** True when no static stress was given: checks hold the vibratory stress alone. */
  readonly staticOmitted: boolean;
  /** The model it was solved for (the output names segments and layers from it: a solution whose statics are omitted shows shafts without segments). */
  readonly model: ResolvedModel;
}

/**
 * The forced response of `model`, or null when it has no excitation or no operating range.
 * Throws ModelError SN_DYN_NO_DAMPING without damping and SN_DYN_FORCED_SINGULAR on a
 * vanishing pivot (a part with neither stiffness nor inertia).
 */
export function forcedResponse(input: ForcedInput, ws: Workspace, options: ForcedOptions = {}): ForcedSolved | null {
  const { model, layout, dynamics, inertia } = input;
  const exc = dynamics.excitations;
  if (exc.length === 0 || dynamics.speed === null) return null;
  const zeta = dynamics.damping;
  if (!(zeta > 0)) {
    throw new ModelError([
      {
        code: 'SN_DYN_NO_DAMPING',
        pointer: '/dynamics/damping',
        message: 'a forced response needs a damping ratio above 0: without damping the response at a resonance is unbounded (a common estimate for steel drivetrains is 0.01–0.05; it must be supplied)',
      },
    ]);
  }
  const { min, max } = dynamics.speed;
  const nS = min === max ? 1 : Math.max(2, options.gridSpeeds ?? GRID_SPEEDS);

  // The static reduction, and the pattern of the dynamic stiffness on it.
  const parts = elasticParts(model, layout, ws);
  const shaftName = (dof: number) => model.shafts[layout.shaftOf[dof]].id;
  const red = reduceConstraints(layout.dofCount, parts.edges, shaftName, ws);
  const springs = parts.springs;
  const sys = buildForcedSystem(model, layout, springs, red, inertia, ws);
  const { n, csc } = sys;
  const sym = ldlSymbolic({ n, Ap: csc.Ap, Ai: csc.Ai, Ax: csc.Axr }, ws);

  const nShafts = model.shafts.length;
  const { segBase, layerBase } = globalNumbering(model, ws);
  const nSeg = segBase[nShafts];
  const segShearFactor = ws.f64(nSeg);
  const segTaper = ws.u8(nSeg);
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const sg of model.shafts[s].segments) {
      segShearFactor[g] = sg.shearFactor;
      segTaper[g] = sg.taper ? 1 : 0;
      g++;
    }
  }
  const E = exc.length;
  const curves = E + 1;
  const stride = curves * nSeg;

  // Excitations by order: one factorisation per order and speed.
  const orders = [...new Set(exc.map((e) => e.order))];
  const excDof = exc.map((e) => layout.stationAt(e.shaft, e.z));
  const excOrder = exc.map((e) => orders.indexOf(e.order));

  const br = ws.f64(n);
  const bi = ws.f64(n);
  const xr = ws.f64(n);
  const xi = ws.f64(n);
  const yr = ws.f64(n);
  const yi = ws.f64(n);
  const pr = ws.f64(layout.dofCount);
  const pi = ws.f64(layout.dofCount);
  const scratch = forcedScratch();
  const scratch2 = forcedScratch();
  const [wr, wi] = invSqrtOnePlus(2 * zeta);
  const { varOf, alpha } = red;
  const { elemLeft } = layout;
  const ne = springs.elemCount;
  let factor: ComplexLdlFactor | undefined;
  let solves = 0;

  /** Torque (first `stride`) and shear (next `stride`) of every curve and segment at speed s, into out. */
  // Per excitation in an evaluation's rotations: φ at every dof, then Δφ across every element (re, im each).
  const phiStride = 2 * layout.dofCount + 2 * ne;
  // With `phis` (a bracket's Chebyshev point), only the rotations are kept: the values there are
  // recovered from them by valueAt, as everywhere else on the piece.
  const evaluate = (s: number, out: Float64Array | null, phis?: Float64Array): void => {
    out?.fill(0);
    for (let o = 0; o < orders.length; o++) {
      const omega = orders[o] * s;
      fillDynamicStiffness(sys, springs, red, omega, zeta, scratch);
      try {
        factor = complexLdlNumeric(sym, csc, sys.dr, sys.di, ws, factor);
      } catch (err) {
        if (!(err instanceof ComplexPivotError)) throw err;
        throw singular(model, layout, red.varOf, err.column, s);
      }
      solves++;
      for (let e = 0; e < E; e++) {
        if (excOrder[e] !== o) continue;
        br.fill(0);
        bi.fill(0);
        const d = excDof[e];
        const u = varOf[d];
        if (u >= 0) br[u] += alpha[d] * exc[e].amplitude;
        complexLdlSolve(sym, factor, br, bi, xr, xi, yr, yi);
        for (let k = 0; k < pr.length; k++) {
          const v = varOf[k];
          pr[k] = v >= 0 ? alpha[k] * xr[v] : 0;
          pi[k] = v >= 0 ? alpha[k] * xi[v] : 0;
        }
        if (phis) {
          const nd = pr.length;
          const base = e * phiStride;
          phis.set(pr, base);
          phis.set(pi, base + nd);
          for (let el = 0; el < ne; el++) {
            const a = elemLeft[el];
            phis[base + 2 * nd + el] = pr[a + 1] - pr[a];
            phis[base + 2 * nd + ne + el] = pi[a + 1] - pi[a];
          }
        }
        if (out === null) continue;
        const tBase = e * nSeg;
        const sBase = stride + e * nSeg;
        for (let el = 0; el < ne; el++) {
          const a = elemLeft[el];
          const g = sys.elemSeg[el];
          let T: number;
          let tau: number;
          if (sys.elemTaper[el]) {
            const p = taperElementPeak(sys, el, omega, zeta, pr[a], pi[a], pr[a + 1], pi[a + 1]);
            T = p.torque;
            tau = p.shear;
          } else {
            T = uniformElementPeakAt(sys, el, omega, 2 * zeta, wr, wi, pr[a], pi[a], pr[a + 1], pi[a + 1], scratch2);
            tau = T * segShearFactor[g];
          }
          if (T > out[tBase + g]) out[tBase + g] = T;
          if (tau > out[sBase + g]) out[sBase + g] = tau;
        }
      }
    }
    if (out === null) return;
    for (let g = 0; g < nSeg; g++) {
      let t = 0;
      let sh = 0;
      for (let e = 0; e < E; e++) {
        t += out[e * nSeg + g];
        sh += out[stride + e * nSeg + g];
      }
      out[E * nSeg + g] = t;
      out[stride + E * nSeg + g] = sh;
    }
  };

  // The coarse grid.
  const speeds = ws.f64(nS);
  for (let i = 0; i < nS; i++) speeds[i] = nS === 1 ? min : i === nS - 1 ? max : min + ((max - min) * i) / (nS - 1);
  const torque = ws.f64(stride * nS);
  const shear = ws.f64(stride * nS);
  const row = new Float64Array(2 * stride);
  for (let i = 0; i < nS; i++) {
    checkpoint(options.progress, 'forced response', (0.5 * i) / nS);
    evaluate(speeds[i], row);
    for (let q = 0; q < stride; q++) {
      torque[q * nS + i] = row[q];
      shear[q * nS + i] = row[stride + q];
    }
  }

  // Peaks: each local maximum refined on the interpolated response (forced-peaks.ts).
  const peakTorque = ws.f64(stride);
  const peakSpeed = ws.f64(stride);
  const peakShear = ws.f64(stride);
  const peakShearSpeed = ws.f64(stride);
  // Every series' grid maximum, and its local maxima gathered by grid index (position in a row:
  // torque of curve c, segment g at c·nSeg + g; shear at stride + the same; a shear series only
  // for a tapered segment, whose shear is not its torque times a constant).
  const refine = nS > 1 && options.refine !== false;
  const bestValue = new Float64Array(2 * stride).fill(-1);
  const bestSpeed = new Float64Array(2 * stride).fill(min);
  const jobs = new Map<number, number[]>();
  const scan = (cols: Float64Array, q: number, p: number): void => {
    const base = q * nS;
    for (let i = 0; i < nS; i++) {
      const v = cols[base + i];
      if (v > bestValue[p]) {
        bestValue[p] = v;
        bestSpeed[p] = speeds[i];
      }
      if (!refine || !(v > 0)) continue;
      const up = i === 0 || v > cols[base + i - 1];
      const down = i === nS - 1 || v >= cols[base + i + 1];
      if (!up || !down) continue;
      const list = jobs.get(i);
      if (list) list.push(p);
      else jobs.set(i, [p]);
    }
  };
  const curvesRefined = E === 1 ? 1 : curves;
  for (let c = 0; c < curvesRefined; c++) {
    for (let g = 0; g < nSeg; g++) {
      const q = c * nSeg + g;
      scan(torque, q, q);
      if (segTaper[g]) scan(shear, q, stride + q);
    }
  }
  // Elements of each segment (contiguous: elements run shaft by shaft, z ascending).
  const segFirst = new Int32Array(nSeg).fill(-1);
  const segEnd = new Int32Array(nSeg);
  for (let el = 0; el < ne; el++) {
    const g = sys.elemSeg[el];
    if (segFirst[g] < 0) segFirst[g] = el;
    segEnd[g] = el + 1;
  }
  const tol = options.peakTolerance ?? PEAK_SPEED_TOL;
  const levels = CHEB_LEVELS.map((m) => ({ m, weights: baryWeights(m), tails: chebTailTables(m) }));
  const lam = new Float64Array(CHEB_LEVELS[CHEB_LEVELS.length - 1]);
  const nd = layout.dofCount;
  // The rotations of the Chebyshev points, taken from the workspace in blocks (large arrays: one
  // slab, kept warm between solves, rather than many chunks let go to the collector), and used
  // again by the next run of pieces (`solved` is cleared: runs share no point).
  const NODES_PER_BLOCK = 32;
  const blocks: Float64Array[] = [];
  let blockAt = -1;
  let blockUsed = NODES_PER_BLOCK;
  /** The rotations at speed s (an exact solve, or the one made there before: nested points share). */
  const rotationsAt = (s: number): Float64Array => {
    let hit = solved.get(s);
    if (hit === undefined) {
      if (blockUsed === NODES_PER_BLOCK) {
        if (++blockAt === blocks.length) blocks.push(ws.f64(NODES_PER_BLOCK * E * phiStride));
        blockUsed = 0;
      }
      hit = blocks[blockAt].subarray(blockUsed * E * phiStride, (blockUsed + 1) * E * phiStride);
      blockUsed++;
      evaluate(s, null, hit);
      solved.set(s, hit);
    }
    return hit;
  };
  /**
   * The worst Chebyshev tail of the rotations at a level's points, relative to its quantity's size
   * (Δφ with a floor of 1e-15 of the largest Δφ): chebTail's sums for every quantity at once, the
   * points in the outer loop (each point's rotations read in order), the same sums in the same order.
   */
  const acc1 = new Float64Array(phiStride);
  const acc2 = new Float64Array(phiStride);
  const accSize = new Float64Array(phiStride);
  const worstTail = (phis: Float64Array[], tails: ReturnType<typeof chebTailTables>): number => {
    const m = phis.length;
    const { c1, c2 } = tails;
    const norm = 2 / (m - 1);
    let worst = 0;
    for (let e = 0; e < E; e++) {
      const base = e * phiStride;
      acc1.fill(0);
      acc2.fill(0);
      accSize.fill(0);
      for (let j = 0; j < m; j++) {
        const f = phis[j];
        const w1 = c1[j];
        const w2 = c2[j];
        for (let k = 0; k < phiStride; k++) {
          const v = f[base + k];
          acc1[k] += v * w1;
          acc2[k] += v * w2;
          const av = Math.abs(v);
          if (av > accSize[k]) accSize[k] = av;
        }
      }
      let scale = 0;
      let dScale = 0;
      for (let k = 0; k < 2 * nd; k++) scale = Math.max(scale, accSize[k]);
      for (let k = 2 * nd; k < phiStride; k++) dScale = Math.max(dScale, accSize[k]);
      if (scale > 0) for (let k = 0; k < 2 * nd; k++) worst = Math.max(worst, (norm * (0.5 * Math.abs(acc1[k]) + Math.abs(acc2[k]))) / scale);
      for (let k = 2 * nd; k < phiStride; k++) {
        const size = Math.max(1e-15 * dScale, accSize[k]);
        if (size > 0) worst = Math.max(worst, (norm * (0.5 * Math.abs(acc1[k]) + Math.abs(acc2[k]))) / size);
      }
    }
    return worst;
  };
  /**
   * Exact solves at the Chebyshev points of [lo, hi], the points doubled (nested: every earlier
   * solve kept) while the tail shrinks, then halved, until every interpolated rotation converges.
   */
  const pieces = (lo: number, hi: number, depth: number, out: Piece[]): void => {
    let prev = Infinity;
    for (let l = 0; ; l++) {
      const { m, weights, tails } = levels[l];
      const nodes = chebPoints(lo, hi, m);
      const phis: Float64Array[] = [];
      for (let j = 0; j < m; j++) phis.push(rotationsAt(nodes[j]));
      const worst = worstTail(phis, tails);
      // Converged; or at the round-off of the solves themselves (doubling the points no longer
      // shrinks a small tail fourfold: a plateau); or split enough.
      const last = l === levels.length - 1;
      const plateau = worst > NOISE_PLATEAU * prev && worst <= NOISE_CEILING;
      if (worst <= INTERP_TOL || plateau || (last && depth >= MAX_SPLITS)) {
        out.push({ nodes, weights, phis });
        return;
      }
      if (last) break;
      prev = worst;
    }
    const mid = 0.5 * (lo + hi);
    pieces(lo, mid, depth + 1, out);
    pieces(mid, hi, depth + 1, out);
  };
  /** Series p (a position in a row) at speed s from the rotations interpolated on piece `pc`. */
  const valueAt = (pc: Piece, p: number, s: number): number => {
    // At a Chebyshev point, its own exact rotations (no interpolation).
    const m = pc.nodes.length;
    let at = -1;
    for (let j = 0; j < m && at < 0; j++) if (pc.nodes[j] === s) at = j;
    if (at < 0) baryCoefficients(pc.nodes, pc.weights, s, lam);
    const isShear = p >= stride;
    const q = isShear ? p - stride : p;
    const c = Math.floor(q / nSeg);
    const g = q - c * nSeg;
    let total = 0;
    for (let e = c === E ? 0 : c; e < (c === E ? E : c + 1); e++) {
      const omega = exc[e].order * s;
      const base = e * phiStride;
      let segT = 0;
      let segS = 0;
      for (let el = segFirst[g]; el < segEnd[g]; el++) {
        const a = elemLeft[el];
        let ar = 0;
        let ai = 0;
        let dr = 0;
        let di = 0;
        if (at >= 0) {
          const f = pc.phis[at];
          ar = f[base + a];
          ai = f[base + nd + a];
          dr = f[base + 2 * nd + el];
          di = f[base + 2 * nd + ne + el];
        } else for (let j = 0; j < m; j++) {
          const f = pc.phis[j];
          const l = lam[j];
          ar += l * f[base + a];
          ai += l * f[base + nd + a];
          dr += l * f[base + 2 * nd + el];
          di += l * f[base + 2 * nd + ne + el];
        }
        let T: number;
        let tau: number;
        if (sys.elemTaper[el]) {
          taperDynamicStiffness(sys, el, omega, zeta);
          const r = taperElementPeak(sys, el, omega, zeta, ar, ai, ar + dr, ai + di);
          T = r.torque;
          tau = r.shear;
        } else {
          elementStiffnessAt(sys, el, omega, zeta, wr, wi, scratch);
          T = uniformElementPeakAt(sys, el, omega, 2 * zeta, wr, wi, ar, ai, ar + dr, ai + di, scratch2);
          tau = T * segShearFactor[g];
        }
        if (T > segT) segT = T;
        if (tau > segS) segS = tau;
      }
      total += isShear ? segS : segT;
    }
    return total;
  };
  const solved = new Map<number, Float64Array>();
  // Brackets that overlap or touch (grid maxima two apart or closer) share one run of pieces.
  const order = [...jobs.keys()].sort((a, b) => a - b);
  for (let r = 0; r < order.length; ) {
    checkpoint(options.progress, 'forced response', 0.5 + (0.5 * r) / order.length);
    let t = r;
    while (t + 1 < order.length && order[t + 1] <= order[t] + 2) t++;
    const list: Piece[] = [];
    solved.clear();
    blockAt = -1;
    blockUsed = NODES_PER_BLOCK;
    pieces(speeds[Math.max(0, order[r] - 1)], speeds[Math.min(nS - 1, order[t] + 1)], 0, list);
    for (let u = r; u <= t; u++) {
      const i = order[u];
      const bLo = speeds[Math.max(0, i - 1)];
      const bHi = speeds[Math.min(nS - 1, i + 1)];
      for (const p of jobs.get(i)!) {
        for (const pc of list) {
          const m = pc.nodes.length;
          const a = Math.max(pc.nodes[0], bLo);
          const b = Math.min(pc.nodes[m - 1], bHi);
          if (!(a < b)) continue;
          // Candidates: the bracket's ends on the interpolant, the exact Chebyshev points inside.
          const xs = [a];
          const fs = [valueAt(pc, p, a)];
          for (let k = 0; k < m; k++) {
            if (pc.nodes[k] > a && pc.nodes[k] < b) {
              xs.push(pc.nodes[k]);
              fs.push(valueAt(pc, p, pc.nodes[k]));
            }
          }
          xs.push(b);
          fs.push(valueAt(pc, p, b));
          let best = 0;
          for (let k = 1; k < xs.length; k++) if (fs[k] > fs[best]) best = k;
          const lo = Math.max(0, best - 1);
          const hi = Math.min(xs.length - 1, best + 1);
          const [v, where] = brentMax((x) => valueAt(pc, p, x), xs[lo], fs[lo], xs[hi], fs[hi], xs[best], fs[best], tol);
          if (v > bestValue[p]) {
            bestValue[p] = v;
            bestSpeed[p] = where;
          }
        }
      }
    }
    r = t + 1;
  }
  for (let c = 0; c < curves; c++) {
    for (let g = 0; g < nSeg; g++) {
      const q = c * nSeg + g;
      // One excitation: the sum is that excitation.
      const src = E === 1 ? g : q;
      peakTorque[q] = bestValue[src];
      peakSpeed[q] = bestSpeed[src];
      if (segTaper[g]) {
        peakShear[q] = bestValue[stride + src];
        peakShearSpeed[q] = bestSpeed[stride + src];
      } else {
        peakShear[q] = bestValue[src] * segShearFactor[g];
        peakShearSpeed[q] = bestSpeed[src];
      }
    }
  }

  // Per layer: the sum response's peak vibratory shear; the checks.
  const layerPeakShear = ws.f64(layerBase[nSeg]);
  let nChecks = 0;
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const sg of model.shafts[s].segments) {
      const q = E * nSeg + g;
      sg.layers.forEach((l, j) => {
        layerPeakShear[layerBase[g] + j] = sg.taper ? peakShear[q] : (l.G * l.rOuter * peakTorque[q]) / sg.rigidity;
        if (l.allowableShear !== null) nChecks++;
      });
      g++;
    }
  }
  const checks: ForcedChecks = {
    count: nChecks,
    shaft: ws.i32(nChecks),
    segment: ws.i32(nChecks),
    layer: ws.i32(nChecks),
    vibratory: ws.f64(nChecks),
    static: ws.f64(nChecks),
    speed: ws.f64(nChecks),
    value: ws.f64(nChecks),
    limit: ws.f64(nChecks),
  };
  let k = 0;
  for (let s = 0, g = 0; s < nShafts; s++) {
    model.shafts[s].segments.forEach((sg, index) => {
      sg.layers.forEach((l, j) => {
        if (l.allowableShear === null) return;
        const vib = layerPeakShear[layerBase[g] + j];
        const st = input.staticShear === null ? Number.NaN : input.staticShear[layerBase[g] + j];
        checks.shaft[k] = s;
        checks.segment[k] = index;
        checks.layer[k] = j;
        checks.vibratory[k] = vib;
        checks.static[k] = st;
        checks.speed[k] = sg.taper ? peakShearSpeed[E * nSeg + g] : peakSpeed[E * nSeg + g];
        checks.value[k] = vib + (Number.isNaN(st) ? 0 : st);
        checks.limit[k++] = l.allowableShear;
      });
      g++;
    });
  }
  return {
    speeds,
    excitations: exc,
    curves,
    segments: nSeg,
    segBase,
    torque,
    shear,
    peakTorque,
    peakSpeed,
    peakShear,
    peakShearSpeed,
    layerBase,
    layerPeakShear,
    checks,
    solves,
    damping: zeta,
    staticOmitted: input.staticShear === null,
    model: input.model,
  };
}

/** SN_DYN_FORCED_SINGULAR naming the shaft of the unknown whose pivot vanished. */
function singular(model: ResolvedModel, layout: StationLayout, varOf: Int32Array, column: number, speed: number): ModelError {
  const dof = Math.max(0, varOf.indexOf(column));
  const s = layout.shaftOf[dof];
  const id = model.shafts[s].id;
  return new ModelError([
    {
      code: 'SN_DYN_FORCED_SINGULAR',
      pointer: '/dynamics',
      message: `the dynamic stiffness is singular at ${speed.toPrecision(6)} rad/s near shaft "${id}": a part with neither stiffness to a support nor inertia, or a free system at speed 0 (its rigid-body mode is an undamped resonance: start the operating range above 0)`,
      shafts: [id],
    },
  ]);
}
