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
 * each excitation and the sum) is then refined by Brent's method
 * (golden section with parabolic steps) on the bracket of its grid
 * neighbours, to PEAK_SPEED_TOL relative in speed, so a resonance sharper
 * than the grid is not under-read. Solves at one speed serve every curve (one
 * solve gives every segment): they are kept by speed for the run. A peak is
 * assumed single between two grid neighbours (400 points put more than one
 * grid interval between two natural frequencies closer than 0.25 % of the
 * range apart only then). Where the peak is flat to round-off, the speed is
 * as good as the comparison of values allows (≈ 1e-8 of the peak's width),
 * and the peak value exact to round-off.
 *
 * Check, per layer with an allowable stress: the peak vibratory shear of the
 * sum response plus the layer's peak static shear (given by the caller:
 * the single load state's, or the worst combination's) against the allowable.
 */
import { ModelError } from '../../../shared-types/errors.js';
import type { ResolvedModel } from '../normalise.js';
import type { StationLayout } from '../stations.js';
import { elasticParts } from '../assemble.js';
import { reduceConstraints } from '../constraints.js';
import { ldlSymbolic } from '../sparse-solver.js';
import type { Workspace } from '../workspace.js';
import type { ResolvedDynamics, ResolvedExcitation } from './types.js';
import { ComplexPivotError, complexLdlNumeric, complexLdlSolve, type ComplexLdlFactor } from './complex-ldl.js';
import {
  buildForcedSystem,
  fillDynamicStiffness,
  forcedScratch,
  invSqrtOnePlus,
  taperElementPeak,
  uniformElementPeak,
  type SegmentInertia,
} from './forced-assembly.js';

/** Speeds of the coarse grid over the operating range (ends included). */
export const GRID_SPEEDS = 400;
/** Relative tolerance, in speed, to which each local maximum is refined. */
export const PEAK_SPEED_TOL = 1e-9;
/** Most Brent iterations for one peak (golden section alone needs about 40 from a grid bracket). */
const MAX_PEAK_ITERATIONS = 100;

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
  const segBase = ws.i32(nShafts + 1);
  for (let s = 0; s < nShafts; s++) segBase[s + 1] = segBase[s] + model.shafts[s].segments.length;
  const nSeg = segBase[nShafts];
  const layerBase = ws.i32(nSeg + 1);
  const segShearFactor = ws.f64(nSeg);
  const segTaper = ws.u8(nSeg);
  for (let s = 0, g = 0; s < nShafts; s++) {
    for (const sg of model.shafts[s].segments) {
      layerBase[g + 1] = layerBase[g] + sg.layers.length;
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
  const evaluate = (s: number, out: Float64Array): void => {
    out.fill(0);
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
            T = uniformElementPeak(sys.elemK[el], sys.elemC[el], omega, 2 * zeta, wr, wi, pr[a], pi[a], pr[a + 1], pi[a + 1], scratch2);
            tau = T * segShearFactor[g];
          }
          if (T > out[tBase + g]) out[tBase + g] = T;
          if (tau > out[sBase + g]) out[sBase + g] = tau;
        }
      }
    }
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
    evaluate(speeds[i], row);
    for (let q = 0; q < stride; q++) {
      torque[q * nS + i] = row[q];
      shear[q * nS + i] = row[stride + q];
    }
  }

  // Peaks: each local maximum refined; solves kept by speed for the run.
  const memo = new Map<number, Float64Array>();
  const at = (s: number): Float64Array => {
    let r = memo.get(s);
    if (r === undefined) {
      r = new Float64Array(2 * stride);
      evaluate(s, r);
      memo.set(s, r);
    }
    return r;
  };
  const peakTorque = ws.f64(stride);
  const peakSpeed = ws.f64(stride);
  const peakShear = ws.f64(stride);
  const peakShearSpeed = ws.f64(stride);
  /** The peak of series `q` (of `cols`, offset `off` in an evaluation): [value, speed]. */
  const peakOf = (cols: Float64Array, q: number, off: number): [number, number] => {
    let best = -1;
    let bestS = min;
    const base = q * nS;
    for (let i = 0; i < nS; i++) {
      const v = cols[base + i];
      if (v > best) {
        best = v;
        bestS = speeds[i];
      }
    }
    if (nS === 1) return [best, bestS];
    for (let i = 0; i < nS; i++) {
      const v = cols[base + i];
      if (!(v > 0)) continue;
      const up = i === 0 || v > cols[base + i - 1];
      const down = i === nS - 1 || v >= cols[base + i + 1];
      if (!up || !down) continue;
      const a = speeds[Math.max(0, i - 1)];
      const b = speeds[Math.min(nS - 1, i + 1)];
      const fa = cols[base + Math.max(0, i - 1)];
      const fb = cols[base + Math.min(nS - 1, i + 1)];
      const r = brentMax((s) => at(s)[off + q], a, fa, b, fb, speeds[i], v);
      if (r[0] > best) {
        best = r[0];
        bestS = r[1];
      }
    }
    return [best, bestS];
  };
  for (let c = 0; c < curves; c++) {
    for (let g = 0; g < nSeg; g++) {
      const q = c * nSeg + g;
      if (c === E && E === 1) {
        // One excitation: the sum is that excitation.
        peakTorque[q] = peakTorque[g];
        peakSpeed[q] = peakSpeed[g];
        peakShear[q] = peakShear[g];
        peakShearSpeed[q] = peakShearSpeed[g];
        continue;
      }
      const [t, ts] = peakOf(torque, q, 0);
      peakTorque[q] = t;
      peakSpeed[q] = ts;
      if (segTaper[g]) {
        const [v, vs] = peakOf(shear, q, stride);
        peakShear[q] = v;
        peakShearSpeed[q] = vs;
      } else {
        peakShear[q] = t * segShearFactor[g];
        peakShearSpeed[q] = ts;
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
  };
}

/**
 * The largest value of f on [a, b] near x (f(x) = fx known) by Brent's method for a minimum
 * applied to −f (golden section with parabolic steps; Brent, "Algorithms for Minimization
 * without Derivatives", 1973, procedure localmin), to PEAK_SPEED_TOL relative in x. The ends,
 * whose values fa and fb are known, are candidates too (a peak at the end of the range).
 * Answers [value, where].
 */
export function brentMax(f: (x: number) => number, a: number, fa: number, b: number, fb: number, x: number, fx: number): [number, number] {
  const C = (3 - Math.sqrt(5)) / 2;
  let lo = a;
  let hi = b;
  let v = x;
  let w = x;
  let fv = -fx;
  let fw = -fx;
  let fxx = -fx;
  let d = 0;
  let e = 0;
  for (let it = 0; it < MAX_PEAK_ITERATIONS; it++) {
    const m = 0.5 * (lo + hi);
    const tol = PEAK_SPEED_TOL * Math.abs(x) * 0.25 + 1e-300;
    const t2 = 2 * tol;
    if (Math.abs(x - m) <= t2 - 0.5 * (hi - lo)) break;
    let useGolden = true;
    if (Math.abs(e) > tol) {
      // Parabola through x, w, v.
      let r = (x - w) * (fxx - fv);
      let q = (x - v) * (fxx - fw);
      let p = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) p = -p;
      else q = -q;
      r = e;
      e = d;
      if (Math.abs(p) < Math.abs(0.5 * q * r) && p > q * (lo - x) && p < q * (hi - x)) {
        d = p / q;
        const u = x + d;
        if (u - lo < t2 || hi - u < t2) d = x < m ? tol : -tol;
        useGolden = false;
      }
    }
    if (useGolden) {
      e = x < m ? hi - x : lo - x;
      d = C * e;
    }
    const u = Math.abs(d) >= tol ? x + d : x + (d > 0 ? tol : -tol);
    const fu = -f(u);
    if (fu <= fxx) {
      if (u < x) hi = x;
      else lo = x;
      v = w;
      fv = fw;
      w = x;
      fw = fxx;
      x = u;
      fxx = fu;
    } else {
      if (u < x) lo = u;
      else hi = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  let best: [number, number] = [-fxx, x];
  if (fa > best[0]) best = [fa, a];
  if (fb > best[0]) best = [fb, b];
  return best;
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
      message: `the dynamic stiffness is singular at ${speed.toPrecision(6)} rad/s near shaft "${id}": a part with neither stiffness nor inertia (a free group without inertia), or a speed exactly at an undamped resonance`,
      shafts: [id],
    },
  ]);
}
