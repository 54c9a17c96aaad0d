/**
 * Load cases and combinations by superposition.
 *
 * The system is linear, so every result that is linear in the loads is a
 * column per load state: the assembled state alone (prescribed rotations,
 * misfits, offsets; no loads) and each load case alone (factor 1, no
 * assembled state). The pipeline solves one right-hand side per column with
 * its one factorisation and recovers each column once (rotations, element end
 * torques, reactions, mesh and coupling torques, shaft sums). A combination's
 * linear results are then the assembled column plus its factors times the
 * case columns — a few multiply-adds per station — and what is not linear
 * (peaks of |T|, stresses, the peak of a taper's τ, totals of twist, checks)
 * is found from those combined numbers by the same rules as for one load
 * state (`segmentPeaks`, the taper's own peak rule where a taper exists).
 *
 * The envelope is one pass over the combinations. What each combination
 * lists is evaluated again when it is written (`Superposition.evaluate`), so
 * memory stays that of one combination whatever their number.
 */
import { ModelError } from '../../shared-types/errors.js';
import type { Warning } from '../../shared-types/solution.js';
import type { ResolvedCombination, ResolvedModel, ResolvedSegment } from './normalise.js';
import { buildChecks, MAX_LISTED_CHECKS, loadedElementPeaks, taperElementPeaks, type CheckColumns, type ShaftColumns, type TaperPeakColumns } from './recover.js';
import { recoverRaisers, type RaiserColumns } from './raisers.js';
import { distributedIntensities, type StationLayout } from './stations.js';
import { Workspace } from './workspace.js';
import type { Overload } from './overload.js';

/**
 * Items (segments, gear meshes and couplings) times combinations up to which every combination
 * lists every item: about 10 MB of JSON. Beyond it each item is listed under the combination
 * that governs it (its envelope extreme), so the answer grows with the model, not with
 * model × combinations; one combination's full tables are those of the solve option `combination`.
 */
export const ALL_ITEMS_UP_TO = 100_000;

/**
 * The results that are linear in the loads: those of one load state (a column of the superposition)
 * and those of a combination (the columns' weighted sum).
 */
export interface LinearResults {
  /** Rotation of every dof, rad. */
  readonly phi: Float64Array;
  /** Element end torques T(z+) at the left, T(z−) at the right end, N·m. */
  readonly TL: Float64Array;
  readonly TR: Float64Array;
  /** Distributed torque at the element ends, N·m/m (zero for the assembled state). */
  readonly t1: Float64Array;
  readonly t2: Float64Array;
  /** Per support, gear mesh and coupling, N·m and N. */
  readonly reaction: Float64Array;
  readonly meshForce: Float64Array;
  readonly meshA: Float64Array;
  readonly meshB: Float64Array;
  readonly couplingA: Float64Array;
  readonly couplingB: Float64Array;
}

/** The results of one load state that are linear in its loads (a column of the superposition). */
export interface StateColumn extends LinearResults {
  /** Per shaft: Σ torques with its sign (the equilibrium residual before its absolute value). */
  readonly sums: Float64Array;
}

/** One combination: its weights on the columns (1 on the assembled state, then the case factors). */
export interface CombinationSolved {
  readonly id: string;
  readonly name?: string;
  readonly weights: Float64Array;
  readonly maxResidual: number;
  /** False when some number of its results is not finite (the finite guard refuses the answer). */
  readonly finite: boolean;
  /** Its overload factors (with shearYield and an LP solver); set after the solve. */
  overload?: Overload;
}

/** Extremes over the combinations, with the index of the combination that governs each. */
export interface Envelope {
  /** Per span (Superposition.spans; else empty): the extreme T, spread over the stations by `finishEnvelope`. */
  readonly spanMin: Float64Array;
  readonly spanMax: Float64Array;
  /** Per dof: rotation, T(z−) (of the element to the left) and T(z+) (to the right); ±Infinity where a side does not exist. */
  readonly rotationMin: Float64Array;
  readonly rotationMax: Float64Array;
  readonly leftMin: Float64Array;
  readonly leftMax: Float64Array;
  readonly rightMin: Float64Array;
  readonly rightMax: Float64Array;
  /** Per global segment: the largest |T| and its combination, with that combination's place, twist and twist rate. */
  readonly segMaxAbs: Float64Array;
  readonly segCombination: Int32Array;
  readonly segAt: Float64Array;
  readonly segTwist: Float64Array;
  readonly segRate: Float64Array;
  /** Per global layer: its stress in the combination of segCombination. */
  readonly segLayers: Float64Array;
  /**
   * Per global segment: the largest stress of any of its layers and its combination (the same as
   * segCombination unless the segment is tapered), with that combination's |T|, place, twist,
   * twist rate and layer stresses.
   */
  readonly stressMax: Float64Array;
  readonly stressCombination: Int32Array;
  readonly stressAbs: Float64Array;
  readonly stressAt: Float64Array;
  readonly stressTwist: Float64Array;
  readonly stressRate: Float64Array;
  readonly stressLayers: Float64Array;
  /** Per global segment of a taper: the largest twist rate and its combination (a uniform one's follows |T|). */
  readonly segRateMax: Float64Array;
  readonly segRateCombination: Int32Array;
  /** Per global layer: the largest |τ| and its combination. */
  readonly layerMaxShear: Float64Array;
  readonly layerCombination: Int32Array;
  /** Per shaft: the largest total twist and its combination. */
  readonly twistMax: Float64Array;
  readonly twistCombination: Int32Array;
  /** Per stress raiser: the largest local peak and its combination. */
  readonly raiserMax: Float64Array;
  readonly raiserCombination: Int32Array;
  /** Per gear mesh and coupling: the largest |force| and |torque on side A|, their combinations and those combinations' numbers. */
  readonly meshMaxAbs: Float64Array;
  readonly meshCombination: Int32Array;
  readonly meshForce: Float64Array;
  readonly meshA: Float64Array;
  readonly meshB: Float64Array;
  readonly couplingMaxAbs: Float64Array;
  readonly couplingCombination: Int32Array;
  readonly couplingA: Float64Array;
  readonly couplingB: Float64Array;
  /** Per support: the extreme reactions and their combinations. */
  readonly reactionMin: Float64Array;
  readonly reactionMax: Float64Array;
  readonly reactionMinAt: Int32Array;
  readonly reactionMaxAt: Int32Array;
}

/** Per combination, what the solve keeps of it besides the envelope. */
export interface CombinedAll {
  /** Largest |Σ torques| of a shaft, N·m. */
  readonly maxResidual: Float64Array;
  /** Largest peak |T| of a segment, N·m. */
  readonly torqueScale: Float64Array;
  /** 1 when every number it lists is finite. */
  readonly finite: Uint8Array;
}

/** The index of the combination to show: the one named, else the first; an unknown id is refused. */
export function shownCombination(model: ResolvedModel, id: string | undefined): number {
  if (model.loadCases.length === 0 || id === undefined) return 0;
  const k = model.combinations.findIndex((c) => c.id === id);
  if (k < 0) {
    const known = model.combinations.map((c) => `"${c.id}"`).join(', ');
    throw new ModelError([{ code: 'SN_UNRESOLVED', pointer: '', message: `no combination "${id}" in the model (it has ${known})` }]);
  }
  return k;
}

/** The model with one combination's loads: each load times its case's factor (the list and order kept, so stations agree). */
export function combinedModel(model: ResolvedModel, c: Pick<ResolvedCombination, 'factors'>): ResolvedModel {
  const f = c.factors;
  return {
    ...model,
    torques: model.torques.map((t) => ({ ...t, torque: f[t.caseIndex] * t.torque })),
    distributed: model.distributed.map((d) => ({ ...d, start: f[d.caseIndex] * d.start, end: f[d.caseIndex] * d.end })),
  };
}

/** The station layout with the distributed intensities of `combined` (stations and elements shared). */
export function combinedLayout(combined: ResolvedModel, layout: StationLayout, ws: Workspace): StationLayout {
  const t = distributedIntensities(combined, layout.z, layout.elemLeft.length, layout.stationAt, ws);
  return { ...layout, elemT1: t.elemT1, elemT2: t.elemT2 };
}

/** True when the model has an assembled state: a prescribed rotation, a misfit or a mesh offset. */
export function hasAssembledState(model: ResolvedModel): boolean {
  return (
    model.supports.some((s) => s.rotation !== 0) ||
    model.meshes.some((g) => g.offset !== 0) ||
    model.couplings.some((c) => c.misfit !== 0)
  );
}

/**
 * The model with its loads set to zero, the assembled state kept. Point and distributed torques stay
 * (with zero value) so that the stations, and so the elements, are those of the model.
 */
export function assembledStateModel(model: ResolvedModel): ResolvedModel {
  return {
    ...model,
    torques: model.torques.map((t) => ({ ...t, torque: 0 })),
    distributed: model.distributed.map((d) => ({ ...d, start: 0, end: 0 })),
  };
}

/** The factors of load case j alone (1 on it, 0 on the others). */
export function caseFactors(model: ResolvedModel, j: number): { factors: number[] } {
  return { factors: model.loadCases.map((_, i) => (i === j ? 1 : 0)) };
}

/** The weights of a combination on the columns: 1 on the assembled state, then its case factors. */
export function columnWeights(c: ResolvedCombination): Float64Array {
  return Float64Array.from([1, ...c.factors]);
}

/** One combination's results, evaluated from the columns: scratch arrays overwritten by the next evaluation. */
export interface CombinationState extends LinearResults, Pick<ShaftColumns, 'segMaxAbs' | 'segAt' | 'segTwist' | 'segRate' | 'layerMaxShear' | 'totalTwist'> {
  /** Per shaft: |Σ torques|, N·m. */
  readonly residual: Float64Array;
  maxResidual: number;
  raisers?: RaiserColumns;
}

/**
 * The columns of a solve with load cases and what evaluates a combination from them. Holds one
 * combination's scratch; nothing else is kept between evaluations.
 */
export class Superposition {
  readonly segBase: Int32Array;
  readonly layerBase: Int32Array;
  /** Every segment, numbered across shafts (global index g). */
  readonly segments: readonly ResolvedSegment[];
  /** Shaft of each global segment. */
  readonly segShaft: Int32Array;
  /** G·J of each global segment; NaN for a tapered one. */
  readonly rigidity: Float64Array;
  /** G·r (outer radius) of each global layer. */
  private readonly layerGr: Float64Array;
  /** Where each global segment starts, m. */
  private readonly segZ0: Float64Array;
  readonly hasTaper: boolean;
  /** True when some case has a distributed torque (then T is curved inside elements). */
  readonly distributed: boolean;
  /** Rotations and element end torques of the columns that can be nonzero, interleaved: entry i of column c at i·C + c. */
  private readonly C: number;
  private readonly first: number;
  private readonly P: Float64Array;
  private readonly L: Float64Array;
  /** Null when no case has a distributed torque: then T(z−) at an element's right end is its T(z+) (bit for bit). */
  private readonly R: Float64Array | null;
  /** Per element: 1 when its segment is tapered. */
  private readonly elemTaper: Uint8Array;
  private st: CombinationState;
  private readonly segPhiFrom: Float64Array;
  private readonly segPhiTo: Float64Array;
  private readonly segPeak: Float64Array;
  private readonly roots = new Float64Array(2);
  /** φ min and max of a shaft, in and out of `taperElementPeaks`. */
  private readonly phiRange = new Float64Array(2);
  /** True when every segment has an element (so the pass by station meets each). */
  private readonly spansCover: boolean;

  /**
   * Spans (a model without tapers and distributed torques): runs of elements between stations where
   * T may jump (a point torque, a support, a connection). T is one number along a span in every
   * column, and φ grows by T·h/GJ element by element, so a combination needs its T and its φ at the
   * start of each span (a sum over the columns) and one multiply-add per station. Null otherwise.
   */
  readonly spans: {
    readonly T: Float64Array;
    readonly P: Float64Array;
    readonly of: Int32Array;
    readonly flex: Float64Array;
    readonly elemOf: Int32Array;
    readonly t: Float64Array;
    readonly p: Float64Array;
    /** Runs of elements of one segment in one span, in order: their segment, span and the z where they start. */
    readonly pairSeg: Int32Array;
    readonly pairSpan: Int32Array;
    readonly pairZ: Float64Array;
    /** The station where each run starts. */
    readonly pairD: Int32Array;
    /** Per segment: its first and last station. */
    readonly segFrom: Int32Array;
    readonly segTo: Int32Array;
  } | null = null;

  constructor(
    readonly model: ResolvedModel,
    readonly layout: StationLayout,
    readonly columns: readonly StateColumn[],
    jumps?: Uint8Array,
  ) {
    const nShafts = model.shafts.length;
    this.segBase = new Int32Array(nShafts + 1);
    const segments: ResolvedSegment[] = [];
    model.shafts.forEach((sh, s) => {
      this.segBase[s + 1] = this.segBase[s] + sh.segments.length;
      segments.push(...sh.segments);
    });
    this.segments = segments;
    this.rigidity = Float64Array.from(segments, (sg) => (sg.taper ? Number.NaN : sg.rigidity));
    this.segShaft = new Int32Array(segments.length);
    for (let sh = 0; sh < nShafts; sh++) this.segShaft.fill(sh, this.segBase[sh], this.segBase[sh + 1]);
    this.layerBase = new Int32Array(segments.length + 1);
    segments.forEach((sg, g) => (this.layerBase[g + 1] = this.layerBase[g] + sg.layers.length));
    this.segZ0 = Float64Array.from(segments, (sg) => sg.z0);
    this.layerGr = Float64Array.from(segments.flatMap((sg) => sg.layers.map((l) => l.G * l.rOuter)));
    this.hasTaper = segments.some((sg) => sg.taper !== undefined);
    this.distributed = model.distributed.length > 0;
    const nSeg = segments.length;
    const f = (n: number) => new Float64Array(n);
    const elems = layout.elemLeft.length;
    this.st = {
      phi: f(layout.dofCount),
      TL: f(elems),
      TR: f(elems),
      t1: this.distributed ? f(elems) : layout.elemT1,
      t2: this.distributed ? f(elems) : layout.elemT2,
      reaction: f(model.supports.length),
      meshForce: f(model.meshes.length),
      meshA: f(model.meshes.length),
      meshB: f(model.meshes.length),
      couplingA: f(model.couplings.length),
      couplingB: f(model.couplings.length),
      residual: f(nShafts),
      maxResidual: 0,
      segMaxAbs: f(nSeg),
      segAt: f(nSeg),
      segTwist: f(nSeg),
      segRate: f(this.hasTaper ? nSeg : 0),
      layerMaxShear: f(this.layerBase[nSeg]),
      totalTwist: f(nShafts),
    };
    // The assembled state's column is left out when it is zero (a model without one).
    this.first = columns[0].phi.every((x) => x === 0) && columns[0].TL.every((x) => x === 0) ? 1 : 0;
    const C = (this.C = columns.length - this.first);
    const pack = (n: number, pick: (c: StateColumn) => Float64Array) => {
      const out = new Float64Array(n * C);
      for (let c = 0; c < C; c++) {
        const a = pick(columns[c + this.first]);
        for (let i = 0; i < n; i++) out[i * C + c] = a[i];
      }
      return out;
    };
    if (!this.hasTaper && !this.distributed && jumps) this.spans = this.makeSpans(jumps);
    // With spans a combination is formed from them: the rotations and end torques are not packed.
    this.P = this.spans ? new Float64Array(0) : pack(layout.dofCount, (c) => c.phi);
    this.L = this.spans ? new Float64Array(0) : pack(elems, (c) => c.TL);
    this.R = this.distributed ? pack(elems, (c) => c.TR) : null;
    if (!this.distributed) this.st = { ...this.st, TR: this.st.TL };
    this.elemTaper = new Uint8Array(elems);
    for (let e = 0; e < elems; e++) this.elemTaper[e] = this.segments[this.segBase[layout.shaftOf[layout.elemLeft[e]]] + layout.elemSegment[e]].taper ? 1 : 0;
    this.segPhiFrom = f(nSeg);
    this.segPhiTo = f(nSeg);
    this.segPeak = f(this.hasTaper ? nSeg : 0);
    const met = new Uint8Array(nSeg);
    for (let e = 0; e < elems; e++) met[this.segBase[layout.shaftOf[layout.elemLeft[e]]] + layout.elemSegment[e]] = 1;
    this.spansCover = met.every((x) => x === 1);
  }

  /** The spans of a model without tapers and distributed torques (see `spans`). */
  private makeSpans(jumps: Uint8Array): NonNullable<Superposition['spans']> {
    const { layout, columns, first: c0, C } = this;
    const { shaftStart, z, elemSegment } = layout;
    const of = new Int32Array(layout.dofCount);
    const elemOf = new Int32Array(layout.elemLeft.length);
    const flex = new Float64Array(layout.dofCount);
    const starts: number[] = [];
    for (let s = 0; s + 1 < shaftStart.length; s++) {
      const first = shaftStart[s];
      const last = shaftStart[s + 1] - 1;
      const g0 = this.segBase[s];
      for (let d = first; d <= last; d++) {
        // A span starts at the shaft's first station and at every station inside where T may jump.
        if (d === first || (jumps[d] && d < last)) starts.push(d);
        const span = starts.length - 1;
        of[d] = span;
        if (d > first && of[d - 1] === span) {
          const e = d - 1 - s;
          flex[d] = flex[d - 1] + (z[d] - z[d - 1]) / this.segments[g0 + elemSegment[e]].rigidity;
        }
        if (d < last) elemOf[d - s] = span;
      }
    }
    // Per span and column: T of its first element and φ at its first station.
    const n = starts.length;
    const T = new Float64Array(n * C);
    const P = new Float64Array(n * C);
    starts.forEach((d, span) => {
      const e = d - layout.shaftOf[d];
      for (let c = 0; c < C; c++) {
        const col = columns[c + c0];
        T[span * C + c] = col.TL[e];
        P[span * C + c] = col.phi[d];
      }
    });
    const pairSeg: number[] = [];
    const pairSpan: number[] = [];
    const pairZ: number[] = [];
    const pairD: number[] = [];
    const segFrom = new Int32Array(this.segments.length);
    const segTo = new Int32Array(this.segments.length);
    for (let s = 0; s + 1 < shaftStart.length; s++) {
      for (let d = shaftStart[s]; d < shaftStart[s + 1] - 1; d++) {
        const e = d - s;
        const g = this.segBase[s] + elemSegment[e];
        const q = pairSeg.length - 1;
        if (q < 0 || pairSeg[q] !== g || pairSpan[q] !== elemOf[e]) {
          pairSeg.push(g);
          pairSpan.push(elemOf[e]);
          pairZ.push(z[d]);
          pairD.push(d);
        }
        if (q < 0 || pairSeg[q] !== g) segFrom[g] = d;
        segTo[g] = d + 1;
      }
    }
    return {
      T,
      P,
      of,
      flex,
      elemOf,
      t: new Float64Array(n),
      p: new Float64Array(n),
      pairSeg: Int32Array.from(pairSeg),
      pairSpan: Int32Array.from(pairSpan),
      pairZ: Float64Array.from(pairZ),
      pairD: Int32Array.from(pairD),
      segFrom,
      segTo,
    };
  }

  /** Combination with column weights `w`: every result of it, into the scratch (valid until the next call). */
  evaluate(w: Float64Array, all = true): CombinationState {
    const st = this.st;
    const cols = this.columns;
    const combine = (out: Float64Array, pick: (c: StateColumn) => Float64Array, from: number) => {
      if (from === 0) out.set(pick(cols[0]));
      else out.fill(0);
      for (let c = Math.max(from, 1); c < cols.length; c++) {
        const wc = w[c];
        if (wc === 0) continue;
        const a = pick(cols[c]);
        for (let i = 0; i < out.length; i++) out[i] += wc * a[i];
      }
    };
    const C = this.C;
    const wa = w.subarray(this.first);
    const spread = (out: Float64Array, packed: Float64Array) => {
      for (let i = 0, b = 0; i < out.length; i++, b += C) {
        let x = 0;
        for (let c = 0; c < C; c++) x += wa[c] * packed[b + c];
        out[i] = x;
      }
    };
    const sp = this.spans;
    if (sp) {
      spread(sp.t, sp.T);
      spread(sp.p, sp.P);
      const { phi, TL } = st;
      const { of, flex, elemOf, t, p } = sp;
      for (let d = 0; d < phi.length; d++) phi[d] = p[of[d]] + t[of[d]] * flex[d];
      // The element end torques are read only by the stress raisers here (peaks and the envelope go by span).
      if (this.model.raisers.length > 0) for (let e = 0; e < TL.length; e++) TL[e] = t[elemOf[e]];
    } else {
      spread(st.phi, this.P);
      spread(st.TL, this.L);
      if (this.R) spread(st.TR, this.R);
    }
    if (this.distributed) {
      combine(st.t1, (c) => c.t1, 1);
      combine(st.t2, (c) => c.t2, 1);
    }
    combine(st.reaction, (c) => c.reaction, 0);
    combine(st.meshForce, (c) => c.meshForce, 0);
    // For the envelope alone (`all` false), the torques on the gears and the couplings' side b are
    // left for `connection` to sum where an extreme needs them.
    if (all) {
      combine(st.meshA, (c) => c.meshA, 0);
      combine(st.meshB, (c) => c.meshB, 0);
      combine(st.couplingB, (c) => c.couplingB, 0);
    }
    combine(st.couplingA, (c) => c.couplingA, 0);
    combine(st.residual, (c) => c.sums, 0);
    let maxResidual = 0;
    for (let s = 0; s < st.residual.length; s++) {
      st.residual[s] = Math.abs(st.residual[s]);
      maxResidual = Math.max(maxResidual, st.residual[s]);
    }
    st.maxResidual = maxResidual;
    this.segmentPeaks();
    if (this.skeleton === undefined && this.model.raisers.length === 0) this.skeleton = this.checks(st);
    st.raisers = this.model.raisers.length > 0 ? recoverRaisers(this.model, { ...this.layout, elemT1: st.t1, elemT2: st.t2 }, st) : undefined;
    return st;
  }

  /**
   * Every combination (its column weights) into `env`: by station (`passBySpan`) where the model
   * has spans and no stress raisers, else evaluated one by one. `byStation` false: one by one always
   * (the reference the tests hold the pass to).
   */
  combineAll(weights: readonly Float64Array[], env: Envelope, byStation = true): CombinedAll {
    const K = weights.length;
    if (byStation && K > 0 && this.spans && this.model.raisers.length === 0 && this.spansCover) {
      // The checks' kinds, places and limits (`checkList`) are made from the first combination evaluated.
      if (this.skeleton === undefined) this.evaluate(weights[0], false);
      return this.passBySpan(weights, env);
    }
    const out = { maxResidual: new Float64Array(K), torqueScale: new Float64Array(K), finite: new Uint8Array(K) };
    weights.forEach((w, k) => {
      const r = this.evaluate(w, false);
      addToEnvelope(env, this, r, k, w);
      let torqueScale = 0;
      for (let g = 0; g < r.segMaxAbs.length; g++) torqueScale = Math.max(torqueScale, r.segMaxAbs[g]);
      out.maxResidual[k] = r.maxResidual;
      out.torqueScale[k] = torqueScale;
      out.finite[k] = combinationFinite(r) ? 1 : 0;
    });
    return out;
  }

  /**
   * Every combination (column weights `weights`) into `env` in one pass by station, for a model with
   * spans and no stress raisers: the numbers of `evaluate` and `addToEnvelope` taken combination by
   * combination, bit for bit (the same sums in the same order; the first combination wins ties).
   * Per span the T and φ of every combination at its start are formed once into rows K long;
   * each station, each run of a segment in a span and each segment's end then sweep those rows
   * with the envelope's extremes held in locals. A shaft's extremes of φ are at its spans' ends
   * (φ is p + t·flex along a span, flex growing), so its total twist reads those only.
   */
  private passBySpan(weights: readonly Float64Array[], env: Envelope): CombinedAll {
    const sp = this.spans as NonNullable<Superposition['spans']>;
    const { layout, columns, C, first: c0, layerBase, layerGr, rigidity, segBase, segZ0 } = this;
    const { shaftStart, elemSegment } = layout;
    const { T, P, of, flex, pairD, pairZ, segTo } = sp;
    const K = weights.length;
    const f = () => new Float64Array(K);
    // The weights on the packed columns, combination by combination: W[k·C + c].
    const W = new Float64Array(C * K);
    for (let k = 0; k < K; k++) for (let c = 0; c < C; c++) W[k * C + c] = weights[k][c0 + c];
    const rows: PassRows = { K, tK: f(), pK: f(), mK: f(), atK: f(), shMin: f(), shMax: f(), zero: f(), torqueScale: f() };
    const { shMin, shMax, zero } = rows;
    let cur = f();
    let from = f();
    const maxResidual = f();
    let q = 0;
    for (let s = 0; s + 1 < shaftStart.length; s++) {
      const first = shaftStart[s];
      const last = shaftStart[s + 1] - 1;
      let n = -1;
      let open = -1;
      for (let d = first; d <= last; d++) {
        if (of[d] !== n) {
          // A span starts: its T and φ in every combination (the sums of `evaluate`, in its order).
          n = of[d];
          spanRows(W, C, T, P, n * C, rows);
          spanExtremes(rows, env.spanMin, env.spanMax, n);
        }
        // φ at this station in every combination, and its extremes.
        // A shaft's extremes of φ: at its first station, then at its spans' ends.
        const ends = d === first ? 1 : of[d - 1] !== n || d === last || of[d + 1] !== n ? 2 : 0;
        rotationRow(rows, flex[d], cur, env.rotationMin, env.rotationMax, d, ends);
        if (open >= 0 && d === segTo[open]) {
          // The segment ends here: its peak, twist and layer stresses per combination, into the envelope.
          segmentEnd(env, rows, open, rigidity[open], layerBase[open], layerBase[open + 1], layerGr, from, cur);
          open = -1;
        }
        if (d === last) break;
        const g = segBase[s] + elemSegment[d - s];
        if (g !== open) {
          // A segment starts: φ here is its start's; the next station's goes to the other row.
          open = g;
          const t = from;
          from = cur;
          cur = t;
          // Its first run (every segment has one, starting here): its peak from 0, at the segment's start while 0.
          runPeaks(rows, pairZ[q++], segZ0[g]);
        } else if (pairD[q] === d) runPeaks(rows, pairZ[q++], Number.NaN);
      }
      let best = env.twistMax[s];
      for (let k = 0; k < K; k++) {
        const x = shMax[k] - shMin[k];
        zero[k] += x * 0;
        if (x > best) {
          best = x;
          env.twistCombination[s] = k;
        }
      }
      env.twistMax[s] = best;
    }
    // Supports, gear meshes, couplings and shaft sums: few; combination by combination, as `evaluate` sums them.
    const nc = columns.length;
    const pack = (pick: (c: StateColumn) => Float64Array) => {
      const n = pick(columns[0]).length;
      const out = new Float64Array(n * nc);
      for (let c = 0; c < nc; c++) {
        const a = pick(columns[c]);
        for (let i = 0; i < n; i++) out[i * nc + c] = a[i];
      }
      return out;
    };
    const reaction = pack((c) => c.reaction);
    const meshForce = pack((c) => c.meshForce);
    const couplingA = pack((c) => c.couplingA);
    const sums = pack((c) => c.sums);
    const nR = reaction.length / nc;
    const nM = meshForce.length / nc;
    const nK = couplingA.length / nc;
    const nS = sums.length / nc;
    // Up to four combinations' sums per kind: entry i of the j-th at j·n + i.
    const xr = new Float64Array(4 * nR);
    const xm = new Float64Array(4 * nM);
    const xc = new Float64Array(4 * nK);
    const xs = new Float64Array(4 * nS);
    // `evaluate` skips a column whose weight is 0; with none such, no test per term.
    const dense = (k: number) => weights[k].every((v) => v !== 0);
    for (let k = 0; k < K; ) {
      // Four combinations without a zero weight at a time (each its own sum, term by term in column order), else one.
      const J = k + 3 < K && dense(k) && dense(k + 1) && dense(k + 2) && dense(k + 3) ? 4 : 1;
      if (J === 4) {
        const [w0, w1, w2, w3] = [weights[k], weights[k + 1], weights[k + 2], weights[k + 3]];
        connectionSums4(w0, w1, w2, w3, reaction, nc, xr);
        connectionSums4(w0, w1, w2, w3, meshForce, nc, xm);
        connectionSums4(w0, w1, w2, w3, couplingA, nc, xc);
        connectionSums4(w0, w1, w2, w3, sums, nc, xs);
      } else {
        const w = weights[k];
        const d = dense(k);
        connectionSums(w, reaction, nc, d, xr);
        connectionSums(w, meshForce, nc, d, xm);
        connectionSums(w, couplingA, nc, d, xc);
        connectionSums(w, sums, nc, d, xs);
      }
      for (let j = 0; j < J; j++, k++) {
        const w = weights[k];
        let z0 = 0;
        for (let i = 0, o = j * nR; i < nR; i++) {
          const x = xr[o + i];
          z0 += x * 0;
          if (x < env.reactionMin[i]) {
            env.reactionMin[i] = x;
            env.reactionMinAt[i] = k;
          }
          if (x > env.reactionMax[i]) {
            env.reactionMax[i] = x;
            env.reactionMaxAt[i] = k;
          }
        }
        for (let i = 0, o = j * nM; i < nM; i++) {
          const x = xm[o + i];
          z0 += x * 0;
          if (Math.abs(x) > env.meshMaxAbs[i]) {
            env.meshMaxAbs[i] = Math.abs(x);
            env.meshCombination[i] = k;
            env.meshForce[i] = x;
            env.meshA[i] = this.connection(w, (c) => c.meshA, i);
            env.meshB[i] = this.connection(w, (c) => c.meshB, i);
          }
        }
        for (let i = 0, o = j * nK; i < nK; i++) {
          const x = xc[o + i];
          z0 += x * 0;
          if (Math.abs(x) > env.couplingMaxAbs[i]) {
            env.couplingMaxAbs[i] = Math.abs(x);
            env.couplingCombination[i] = k;
            env.couplingA[i] = x;
            env.couplingB[i] = this.connection(w, (c) => c.couplingB, i);
          }
        }
        let res = 0;
        for (let i = 0, o = j * nS; i < nS; i++) res = Math.max(res, Math.abs(xs[o + i]));
        maxResidual[k] = res;
        zero[k] += z0 + res * 0;
      }
    }
    const finite = new Uint8Array(K);
    for (let k = 0; k < K; k++) finite[k] = zero[k] === 0 ? 1 : 0;
    return { maxResidual, torqueScale: rows.torqueScale, finite };
  }

  /** One number of one connection (column `pick`, entry n) in the combination with column weights `w`. */
  connection(w: Float64Array, pick: (c: StateColumn) => Float64Array, n: number): number {
    let x = pick(this.columns[0])[n];
    for (let c = 1; c < this.columns.length; c++) if (w[c] !== 0) x += w[c] * pick(this.columns[c])[n];
    return x;
  }

  /** The reactions of the combination with column weights `w` alone, into `out`. */
  reactions(w: Float64Array, out: Float64Array): Float64Array {
    out.fill(0);
    this.columns.forEach((c, j) => {
      for (let n = 0; n < out.length; n++) out[n] += w[j] * c.reaction[n];
    });
    return out;
  }

  /** The checks of the combination last evaluated, every one (arrays of their own). */
  checks(st: CombinationState): CheckColumns {
    const cols = { ...st, segBase: this.segBase, layerBase: this.layerBase } as unknown as ShaftColumns;
    return buildChecks(this.model, cols, new Workspace(), st.raisers);
  }

  private skeleton?: CheckColumns;

  /**
   * The checks `only` (indices into the model's list of checks), each governed by one combination,
   * worst first: the kinds, places and limits are the model's (`checkList`, built once), the values
   * the envelope's. Null for a model with stress raisers (a raiser's check follows the side that
   * governs, which can differ by combination): then `checks` lists them.
   */
  someChecks(env: Envelope, only: readonly number[]): CheckColumns | null {
    const sk = this.skeleton;
    if (sk === undefined) return null;
    const { kind, shaft, segment, layer, limit, value, utilisation } = sk;
    // Each check is listed under the combination that governs it: its value is the envelope's extreme.
    for (const m of only) {
      const g = this.segBase[shaft[m]] + segment[m];
      const k = kind[m];
      value[m] =
        k === 0
          ? env.layerMaxShear[this.layerBase[g] + layer[m]]
          : k === 1
            ? this.segments[g].taper
              ? env.segRateMax[g]
              : env.segMaxAbs[g] / this.segments[g].rigidity
            : env.twistMax[shaft[m]];
      utilisation[m] = value[m] / limit[m];
    }
    const listed = [...only].sort((x, y) => utilisation[y] - utilisation[x] || x - y).slice(0, MAX_LISTED_CHECKS);
    return { ...sk, listed: Int32Array.from(listed) };
  }

  /**
   * Every check of the model (kinds, places, limits; values of the state evaluated) for
   * `someChecks`: made once, from the first combination evaluated. Null with stress raisers.
   */
  checkList(): CheckColumns | null {
    return this.skeleton ?? null;
  }

  /**
   * Per segment: the largest |T| and where, the twist, the largest twist rate of a taper; per
   * layer the largest |τ|; per shaft the total twist (max φ − min φ, interior extremes
   * included): the rules of `recoverShafts`, without its diagrams.
   */
  private segmentPeaks(): void {
    const { model, layout, st, segPhiFrom, segPhiTo, segPeak, roots, phiRange } = this;
    const { z, shaftStart, elemSegment } = layout;
    const { phi, TL, TR, t1: T1s, t2: T2s, segMaxAbs: segMax, segAt, segRate, totalTwist } = st;
    const peaks: TaperPeakColumns = { segMax, segAt, segPeak, segRate };
    segMax.fill(0);
    segPhiFrom.fill(Number.NaN);
    if (this.hasTaper) {
      segRate.fill(Number.NaN);
      segPeak.fill(0);
    }
    const plain = !this.hasTaper && !this.distributed;
    const sp = this.spans;
    if (sp) {
      // By span: each run of a segment in a span has one |T| (the first run of the largest wins, at its start).
      const { pairSeg, pairSpan, pairZ, t, segFrom, segTo } = sp;
      segAt.set(this.segZ0);
      for (let q = 0; q < pairSeg.length; q++) {
        const g = pairSeg[q];
        const a = Math.abs(t[pairSpan[q]]);
        if (a > segMax[g]) {
          segMax[g] = a;
          segAt[g] = pairZ[q];
        }
      }
      for (let g = 0; g < this.segments.length; g++) {
        segPhiFrom[g] = phi[segFrom[g]];
        segPhiTo[g] = phi[segTo[g]];
      }
      for (let s = 0; s < model.shafts.length; s++) {
        let phiMin = phi[shaftStart[s]];
        let phiMax = phiMin;
        for (let d = shaftStart[s] + 1; d < shaftStart[s + 1]; d++) {
          const x = phi[d];
          if (x < phiMin) phiMin = x;
          if (x > phiMax) phiMax = x;
        }
        totalTwist[s] = phiMax - phiMin;
      }
    }
    for (let s = 0; s < model.shafts.length && !sp; s++) {
      const shaft = model.shafts[s];
      const first = shaftStart[s];
      const last = shaftStart[s + 1] - 1;
      const e0 = first - s;
      const g0 = this.segBase[s];
      for (let k = 0; k < shaft.segments.length; k++) segAt[g0 + k] = shaft.segments[k].z0;
      let phiMin = phi[first];
      let phiMax = phi[first];
      if (plain) {
        // Uniform, no distributed torque: T is constant along each element; its peaks at the stations.
        for (let e = e0; e < e0 + (last - first); e++) {
          const d = first + (e - e0);
          const g = g0 + elemSegment[e];
          if (Number.isNaN(segPhiFrom[g])) segPhiFrom[g] = phi[d];
          const p1 = phi[d + 1];
          segPhiTo[g] = p1;
          const a = Math.abs(TL[e]);
          if (a > segMax[g]) {
            segMax[g] = a;
            segAt[g] = z[d];
          }
          if (p1 < phiMin) phiMin = p1;
          if (p1 > phiMax) phiMax = p1;
        }
        totalTwist[s] = phiMax - phiMin;
        continue;
      }
      for (let e = e0; e < e0 + (last - first); e++) {
        const d = first + (e - e0);
        const g = g0 + elemSegment[e];
        if (Number.isNaN(segPhiFrom[g])) segPhiFrom[g] = phi[d];
        segPhiTo[g] = phi[d + 1];
        const T1 = TL[e];
        const T2 = TR[e];
        const t1 = T1s[e];
        const t2 = T2s[e];
        const loaded = t1 !== 0 || t2 !== 0;
        const sg = this.segments[g];
        if (this.elemTaper[e] && sg.taper) {
          phiRange[0] = phiMin;
          phiRange[1] = phiMax;
          taperElementPeaks(sg, sg.taper, g, z[d], z[d + 1], phi[d], phi[d + 1], T1, T2, t1, t2, peaks, phiRange, roots);
          phiMin = phiRange[0];
          phiMax = phiRange[1];
          continue;
        }
        const a1 = Math.abs(T1);
        if (a1 > segMax[g]) {
          segMax[g] = a1;
          segAt[g] = z[d];
        }
        const a2 = Math.abs(T2);
        if (a2 > segMax[g]) {
          segMax[g] = a2;
          segAt[g] = z[d + 1];
        }
        const p0 = phi[d];
        const p1 = phi[d + 1];
        if (p0 < phiMin) phiMin = p0;
        if (p0 > phiMax) phiMax = p0;
        if (p1 < phiMin) phiMin = p1;
        if (p1 > phiMax) phiMax = p1;
        if (loaded) {
          phiRange[0] = phiMin;
          phiRange[1] = phiMax;
          loadedElementPeaks(g, z[d], z[d + 1] - z[d], p0, T1, t1, t2, sg.rigidity, segMax, segAt, phiRange, roots);
          phiMin = phiRange[0];
          phiMax = phiRange[1];
        }
      }
      totalTwist[s] = phiMax - phiMin;
    }
    const { segTwist, layerMaxShear } = st;
    const { layerBase, layerGr, rigidity } = this;
    for (let g = 0; g < segTwist.length; g++) {
      segTwist[g] = segPhiTo[g] - segPhiFrom[g];
      // τ = G·r·|T| / ΣGJ per layer (the arithmetic of recoverShafts); a taper's peak is its own.
      const gj = rigidity[g];
      if (Number.isNaN(gj)) {
        layerMaxShear[layerBase[g]] = segPeak[g];
        continue;
      }
      const maxAbs = segMax[g];
      for (let l = layerBase[g]; l < layerBase[g + 1]; l++) layerMaxShear[l] = (layerGr[l] * maxAbs) / gj;
    }
  }
}

/** An empty envelope for the model of `sup`. */
export function emptyEnvelope(sup: Superposition): Envelope {
  const { model, layout } = sup;
  const f = (n: number, v: number) => new Float64Array(n).fill(v);
  const i = (n: number) => new Int32Array(n);
  const segments = sup.segments.length;
  const layers = sup.layerBase[segments];
  const spans = sup.spans ? sup.spans.t.length : 0;
  return {
    spanMin: f(spans, Infinity),
    spanMax: f(spans, -Infinity),
    rotationMin: f(layout.dofCount, Infinity),
    rotationMax: f(layout.dofCount, -Infinity),
    leftMin: f(layout.dofCount, Infinity),
    leftMax: f(layout.dofCount, -Infinity),
    rightMin: f(layout.dofCount, Infinity),
    rightMax: f(layout.dofCount, -Infinity),
    segMaxAbs: f(segments, -Infinity),
    segCombination: i(segments),
    segAt: f(segments, 0),
    segTwist: f(segments, 0),
    segRate: f(segments, 0),
    segLayers: f(layers, 0),
    stressMax: f(segments, -Infinity),
    stressCombination: i(segments),
    stressAbs: f(segments, 0),
    stressAt: f(segments, 0),
    stressTwist: f(segments, 0),
    stressRate: f(segments, 0),
    stressLayers: f(layers, 0),
    segRateMax: f(segments, -Infinity),
    segRateCombination: i(segments),
    layerMaxShear: f(layers, -Infinity),
    layerCombination: i(layers),
    twistMax: f(model.shafts.length, -Infinity),
    twistCombination: i(model.shafts.length),
    raiserMax: f(model.raisers.length, -Infinity),
    raiserCombination: i(model.raisers.length),
    meshMaxAbs: f(model.meshes.length, -Infinity),
    meshCombination: i(model.meshes.length),
    meshForce: f(model.meshes.length, 0),
    meshA: f(model.meshes.length, 0),
    meshB: f(model.meshes.length, 0),
    couplingMaxAbs: f(model.couplings.length, -Infinity),
    couplingCombination: i(model.couplings.length),
    couplingA: f(model.couplings.length, 0),
    couplingB: f(model.couplings.length, 0),
    reactionMin: f(model.supports.length, Infinity),
    reactionMax: f(model.supports.length, -Infinity),
    reactionMinAt: i(model.supports.length),
    reactionMaxAt: i(model.supports.length),
  };
}

/**
 * Takes combination `k` (column weights `w`, evaluated into `r`) into the envelope (the first
 * combination wins ties).
 */
export function addToEnvelope(env: Envelope, sup: Superposition, r: CombinationState, k: number, w: Float64Array): void {
  const { shaftStart } = sup.layout;
  const { phi, TL, TR } = r;
  const { rotationMin, rotationMax, leftMin, leftMax, rightMin, rightMax } = env;
  const sp = sup.spans;
  if (sp) {
    // T is one number per span: its extremes per span, spread over the stations once all are in.
    const { t } = sp;
    const { spanMin, spanMax } = env;
    for (let n = 0; n < t.length; n++) {
      spanMin[n] = Math.min(spanMin[n], t[n]);
      spanMax[n] = Math.max(spanMax[n], t[n]);
    }
    for (let d = 0; d < phi.length; d++) {
      rotationMin[d] = Math.min(rotationMin[d], phi[d]);
      rotationMax[d] = Math.max(rotationMax[d], phi[d]);
    }
  }
  for (let s = 0; s + 1 < shaftStart.length && !sp; s++) {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    rotationMin[first] = Math.min(rotationMin[first], phi[first]);
    rotationMax[first] = Math.max(rotationMax[first], phi[first]);
    // Station d > first reads T(z−) of element d − 1 − s; station d < last reads T(z+) of element d − s.
    for (let d = first; d < last; d++) {
      const e = d - s;
      const p = phi[d + 1];
      rotationMin[d + 1] = Math.min(rotationMin[d + 1], p);
      rotationMax[d + 1] = Math.max(rotationMax[d + 1], p);
      const right = TL[e];
      rightMin[d] = Math.min(rightMin[d], right);
      rightMax[d] = Math.max(rightMax[d], right);
      const left = TR[e];
      leftMin[d + 1] = Math.min(leftMin[d + 1], left);
      leftMax[d + 1] = Math.max(leftMax[d + 1], left);
    }
  }
  const most = (value: Float64Array, best: Float64Array, at: Int32Array) => {
    for (let n = 0; n < value.length; n++) {
      if (value[n] > best[n]) {
        best[n] = value[n];
        at[n] = k;
      }
    }
  };
  const { layerBase, rigidity } = sup;
  // A taper's twist rate is its own; a uniform segment's is |T| / GJ (rigidity NaN marks a taper).
  const rate = (g: number) => (Number.isNaN(rigidity[g]) ? r.segRate[g] : r.segMaxAbs[g] / rigidity[g]);
  for (let g = 0; g < r.segMaxAbs.length; g++) {
    const l0 = layerBase[g];
    const l1 = layerBase[g + 1];
    if (r.segMaxAbs[g] > env.segMaxAbs[g]) {
      env.segMaxAbs[g] = r.segMaxAbs[g];
      env.segCombination[g] = k;
      env.segAt[g] = r.segAt[g];
      env.segTwist[g] = r.segTwist[g];
      env.segRate[g] = rate(g);
      for (let l = l0; l < l1; l++) env.segLayers[l] = r.layerMaxShear[l];
    }
    let stress = -Infinity;
    for (let l = l0; l < l1; l++) {
      const tau = r.layerMaxShear[l];
      stress = Math.max(stress, tau);
      if (tau > env.layerMaxShear[l]) {
        env.layerMaxShear[l] = tau;
        env.layerCombination[l] = k;
      }
    }
    if (stress > env.stressMax[g]) {
      env.stressMax[g] = stress;
      env.stressCombination[g] = k;
      env.stressAbs[g] = r.segMaxAbs[g];
      env.stressAt[g] = r.segAt[g];
      env.stressTwist[g] = r.segTwist[g];
      env.stressRate[g] = rate(g);
      for (let l = l0; l < l1; l++) env.stressLayers[l] = r.layerMaxShear[l];
    }
  }
  most(r.segRate, env.segRateMax, env.segRateCombination);
  most(r.totalTwist, env.twistMax, env.twistCombination);
  if (r.raisers) most(r.raisers.peak, env.raiserMax, env.raiserCombination);
  for (let n = 0; n < r.meshForce.length; n++) {
    if (Math.abs(r.meshForce[n]) > env.meshMaxAbs[n]) {
      env.meshMaxAbs[n] = Math.abs(r.meshForce[n]);
      env.meshCombination[n] = k;
      env.meshForce[n] = r.meshForce[n];
      env.meshA[n] = sup.connection(w, (c) => c.meshA, n);
      env.meshB[n] = sup.connection(w, (c) => c.meshB, n);
    }
  }
  for (let n = 0; n < r.couplingA.length; n++) {
    if (Math.abs(r.couplingA[n]) > env.couplingMaxAbs[n]) {
      env.couplingMaxAbs[n] = Math.abs(r.couplingA[n]);
      env.couplingCombination[n] = k;
      env.couplingA[n] = r.couplingA[n];
      env.couplingB[n] = sup.connection(w, (c) => c.couplingB, n);
    }
  }
  for (let n = 0; n < r.reaction.length; n++) {
    const x = r.reaction[n];
    if (x < env.reactionMin[n]) {
      env.reactionMin[n] = x;
      env.reactionMinAt[n] = k;
    }
    if (x > env.reactionMax[n]) {
      env.reactionMax[n] = x;
      env.reactionMaxAt[n] = k;
    }
  }
}

/** After the last combination: the extremes of T kept per span, spread over the stations. */
export function finishEnvelope(env: Envelope, sup: Superposition): void {
  const sp = sup.spans;
  if (!sp) return;
  const { shaftStart } = sup.layout;
  for (let s = 0; s + 1 < shaftStart.length; s++) {
    const first = shaftStart[s];
    const last = shaftStart[s + 1] - 1;
    for (let d = first; d <= last; d++) {
      if (d > first) {
        const n = sp.elemOf[d - 1 - s];
        env.leftMin[d] = env.spanMin[n];
        env.leftMax[d] = env.spanMax[n];
      }
      if (d < last) {
        const n = sp.elemOf[d - s];
        env.rightMin[d] = env.spanMin[n];
        env.rightMax[d] = env.spanMax[n];
      }
    }
  }
}

/** True when every number a combination lists is finite (NaN·0 and ±∞·0 are NaN; finite·0 is ±0). */
export function combinationFinite(r: CombinationState): boolean {
  // Twist rates of tapers follow from |T| and J (NaN marks a uniform segment's): not walked.
  let s = r.maxResidual * 0;
  s += timesZero(r.segMaxAbs) + timesZero(r.segTwist) + timesZero(r.layerMaxShear) + timesZero(r.totalTwist);
  // A gear's and a coupling side's torque are a mesh force times a radius, and side a's torque with the sign changed.
  s += timesZero(r.reaction) + timesZero(r.meshForce) + timesZero(r.couplingA);
  if (r.raisers) s += timesZero(r.raisers.peak);
  return s === 0;
}

/** Σ a[i]·0: 0 when every entry is finite, NaN otherwise. */
function timesZero(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * 0;
  return s;
}

/** The combination that governs check m of `c` (its envelope extreme). */
export function checkGovernedBy(env: Envelope, sup: Superposition, c: CheckColumns, m: number): number {
  const kind = c.kind[m];
  if (kind === 2) return env.twistCombination[c.shaft[m]];
  if (kind === 3) return env.raiserCombination[c.segment[m]];
  const g = sup.segBase[c.shaft[m]] + c.segment[m];
  if (kind === 0) return env.layerCombination[sup.layerBase[g] + c.layer[m]];
  return sup.segments[g].taper ? env.segRateCombination[g] : env.segCombination[g];
}

/** True when the combinations list only the items each governs (the model × combinations is large). */
export function listsAbridged(model: ResolvedModel, segments: number): boolean {
  return model.combinations.length * (segments + model.meshes.length + model.couplings.length) > ALL_ITEMS_UP_TO;
}

/** Said when the combinations list only the items each governs. */
export function abridgedWarning(model: ResolvedModel, segments: number): Warning {
  const items = segments + model.meshes.length + model.couplings.length;
  return {
    code: 'SN_COMBINATIONS_ABRIDGED',
    message:
      `${model.combinations.length} combinations × ${items} segments, gear meshes and couplings exceed ${ALL_ITEMS_UP_TO.toLocaleString('en')}: ` +
      'each combination lists its reactions, and the segments, meshes, couplings and checks it governs (its envelope extremes) only; ' +
      'every item of one combination: the solve option "combination" (command line: --combination ID)',
  };
}

/** What each combination governs (its envelope extremes): per combination, in model order. */
export interface Governed {
  /** Global segment indices: its peak |T| or its largest layer stress. */
  readonly segments: number[][];
  readonly meshes: number[][];
  readonly couplings: number[][];
  /** Indices into the model's checks; null for a model with stress raisers (filtered per combination). */
  readonly checks: number[][] | null;
}

/** Buckets every segment, mesh, coupling and check under the combination(s) that govern it. */
export function governedItems(env: Envelope, sup: Superposition, combinations: number, checks: CheckColumns | null): Governed {
  const bucket = () => Array.from({ length: combinations }, (): number[] => []);
  const segments = bucket();
  for (let g = 0; g < sup.segments.length; g++) {
    segments[env.segCombination[g]].push(g);
    if (env.stressCombination[g] !== env.segCombination[g]) segments[env.stressCombination[g]].push(g);
  }
  const meshes = bucket();
  env.meshCombination.forEach((k, n) => meshes[k].push(n));
  const couplings = bucket();
  env.couplingCombination.forEach((k, n) => couplings[k].push(n));
  let byCheck: number[][] | null = null;
  if (checks) {
    byCheck = bucket();
    for (let m = 0; m < checks.total; m++) byCheck[checkGovernedBy(env, sup, checks, m)].push(m);
  }
  return { segments, meshes, couplings, checks: byCheck };
}

/** The rows of the pass by station (`passBySpan`), each K long: one entry per combination. */
interface PassRows {
  readonly K: number;
  /** T and φ at the start of the span at hand. */
  readonly tK: Float64Array;
  readonly pK: Float64Array;
  /** Of the segment at hand: the largest |T| so far and where. */
  readonly mK: Float64Array;
  readonly atK: Float64Array;
  /** Of the shaft at hand: the extremes of φ so far. */
  readonly shMin: Float64Array;
  readonly shMax: Float64Array;
  /** Σ x·0 over every number a combination lists: 0 when all are finite (as `combinationFinite`). */
  readonly zero: Float64Array;
  /** The largest peak |T| of a segment. */
  readonly torqueScale: Float64Array;
}

/** T and φ at the start of the span whose packed entries start at nC, in every combination: Σ over the columns from 0, in column order. */
function spanRows(W: Float64Array, C: number, T: Float64Array, P: Float64Array, nC: number, rows: PassRows): void {
  const { K, tK, pK } = rows;
  let k = 0;
  // Four combinations at a time (each its own sum, term by term in column order), then the rest.
  for (; k + 3 < K; k += 4) {
    let t0 = 0;
    let t1 = 0;
    let t2 = 0;
    let t3 = 0;
    let p0 = 0;
    let p1 = 0;
    let p2 = 0;
    let p3 = 0;
    for (let c = 0, i = k * C; c < C; c++, i++) {
      const a = T[nC + c];
      const b = P[nC + c];
      const w0 = W[i];
      const w1 = W[i + C];
      const w2 = W[i + 2 * C];
      const w3 = W[i + 3 * C];
      t0 += w0 * a;
      p0 += w0 * b;
      t1 += w1 * a;
      p1 += w1 * b;
      t2 += w2 * a;
      p2 += w2 * b;
      t3 += w3 * a;
      p3 += w3 * b;
    }
    tK[k] = t0;
    tK[k + 1] = t1;
    tK[k + 2] = t2;
    tK[k + 3] = t3;
    pK[k] = p0;
    pK[k + 1] = p1;
    pK[k + 2] = p2;
    pK[k + 3] = p3;
  }
  for (; k < K; k++) {
    let t = 0;
    let p = 0;
    for (let c = 0, i = k * C; c < C; c++, i++) {
      t += W[i] * T[nC + c];
      p += W[i] * P[nC + c];
    }
    tK[k] = t;
    pK[k] = p;
  }
}

/**
 * The extremes of T over the combinations in span n, and each combination's torque scale: its largest
 * peak |T| of a segment is its largest |T| of a span (every span has a run of some segment).
 */
function spanExtremes(rows: PassRows, spanMin: Float64Array, spanMax: Float64Array, n: number): void {
  const { K, tK, torqueScale } = rows;
  let lo = spanMin[n];
  let hi = spanMax[n];
  for (let k = 0; k < K; k++) {
    const t = tK[k];
    lo = Math.min(lo, t);
    hi = Math.max(hi, t);
    const a = Math.abs(t);
    if (a > torqueScale[k]) torqueScale[k] = a;
  }
  spanMin[n] = lo;
  spanMax[n] = hi;
}

/**
 * φ = p + t·flex at station d in every combination (into `out`), and its extremes; with `shaft` 1 the
 * shaft's extremes start from it, with 2 they take it in (the rules of `segmentPeaks`: strict, the first kept).
 */
function rotationRow(rows: PassRows, fd: number, out: Float64Array, rotationMin: Float64Array, rotationMax: Float64Array, d: number, shaft: number): void {
  const { K, tK, pK, shMin, shMax } = rows;
  let lo = rotationMin[d];
  let hi = rotationMax[d];
  if (shaft === 0) {
    for (let k = 0; k < K; k++) {
      const x = pK[k] + tK[k] * fd;
      out[k] = x;
      lo = Math.min(lo, x);
      hi = Math.max(hi, x);
    }
  } else if (shaft === 1) {
    for (let k = 0; k < K; k++) {
      const x = pK[k] + tK[k] * fd;
      out[k] = x;
      shMin[k] = x;
      shMax[k] = x;
      lo = Math.min(lo, x);
      hi = Math.max(hi, x);
    }
  } else {
    for (let k = 0; k < K; k++) {
      const x = pK[k] + tK[k] * fd;
      out[k] = x;
      if (x < shMin[k]) shMin[k] = x;
      if (x > shMax[k]) shMax[k] = x;
      lo = Math.min(lo, x);
      hi = Math.max(hi, x);
    }
  }
  rotationMin[d] = lo;
  rotationMax[d] = hi;
}

/**
 * A run of a segment in the span at hand, starting at z: the segment's largest |T| (the first largest
 * kept). `z0` not NaN: the segment's first run, its peak starting from 0 at z0 (the segment's start).
 */
function runPeaks(rows: PassRows, z: number, z0: number): void {
  const { K, tK, mK, atK } = rows;
  if (z0 === z0) {
    for (let k = 0; k < K; k++) {
      const a = Math.abs(tK[k]);
      if (a > 0) {
        mK[k] = a;
        atK[k] = z;
      } else {
        mK[k] = 0;
        atK[k] = z0;
      }
    }
    return;
  }
  for (let k = 0; k < K; k++) {
    const a = Math.abs(tK[k]);
    if (a > mK[k]) {
      mK[k] = a;
      atK[k] = z;
    }
  }
}

/**
 * Segment g ends: per combination its peak |T| (rows.mK, at rows.atK), twist (φ `to` − φ `from`), twist
 * rate |T|/GJ and layer stresses G·r·|T|/GJ, into the envelope as `addToEnvelope` takes them.
 */
function segmentEnd(env: Envelope, rows: PassRows, g: number, gj: number, l0: number, l1: number, layerGr: Float64Array, from: Float64Array, to: Float64Array): void {
  const { K, mK, atK, zero } = rows;
  const { segLayers, stressLayers, layerMaxShear, layerCombination } = env;
  let best = env.segMaxAbs[g];
  let stressBest = env.stressMax[g];
  // |T| of the combination holding the largest stress: a layer's τ = G·r·|T|/GJ never falls as |T| grows, so
  // no |T| up to it raises a layer's or the segment's stress (nor makes a τ infinite while that stress is finite).
  let stressM = stressBest === -Infinity ? -Infinity : env.stressAbs[g];
  // Σ x·0 over the numbers of every combination: 0 unless one is not finite (then taken per combination below).
  let sum0 = 0;
  for (let k = 0; k < K; k++) {
    const m = mK[k];
    const twist = to[k] - from[k];
    const z0 = m * 0 + twist * 0;
    if (m > best) {
      best = m;
      env.segCombination[g] = k;
      env.segAt[g] = atK[k];
      env.segTwist[g] = twist;
      env.segRate[g] = m / gj;
      for (let l = l0; l < l1; l++) segLayers[l] = (layerGr[l] * m) / gj;
    }
    if (m <= stressM && stressBest < Infinity) {
      sum0 += z0;
      continue;
    }
    let stress = -Infinity;
    let z1 = z0;
    for (let l = l0; l < l1; l++) {
      const tau = (layerGr[l] * m) / gj;
      z1 += tau * 0;
      stress = Math.max(stress, tau);
      if (tau > layerMaxShear[l]) {
        layerMaxShear[l] = tau;
        layerCombination[l] = k;
      }
    }
    if (stress > stressBest) {
      stressBest = stress;
      stressM = m;
      env.stressCombination[g] = k;
      env.stressAbs[g] = m;
      env.stressAt[g] = atK[k];
      env.stressTwist[g] = twist;
      env.stressRate[g] = m / gj;
      for (let l = l0; l < l1; l++) stressLayers[l] = (layerGr[l] * m) / gj;
    }
    sum0 += z1;
  }
  env.segMaxAbs[g] = best;
  env.stressMax[g] = stressBest;
  if (sum0 !== 0) {
    for (let k = 0; k < K; k++) {
      const m = mK[k];
      let z1 = m * 0 + (to[k] - from[k]) * 0;
      for (let l = l0; l < l1; l++) z1 += ((layerGr[l] * m) / gj) * 0;
      zero[k] += z1;
    }
  }
}

/**
 * One combination's number of every item of a packed connection array (`nc` columns per item, the
 * assembled state's first), into `out`: as `evaluate` sums them (a zero weight's column skipped).
 */
function connectionSums(w: Float64Array, a: Float64Array, nc: number, dense: boolean, out: Float64Array): void {
  const items = a.length / nc;
  for (let i = 0, b = 0; i < items; i++, b += nc) {
    let x = a[b];
    if (dense) for (let c = 1; c < nc; c++) x += w[c] * a[b + c];
    else
      for (let c = 1; c < nc; c++) {
        const wc = w[c];
        if (wc !== 0) x += wc * a[b + c];
      }
    out[i] = x;
  }
}

/** As `connectionSums` for four combinations without a zero weight at once: the j-th's into out[j·items + i]. */
function connectionSums4(w0: Float64Array, w1: Float64Array, w2: Float64Array, w3: Float64Array, a: Float64Array, nc: number, out: Float64Array): void {
  const items = a.length / nc;
  for (let i = 0, b = 0; i < items; i++, b += nc) {
    let x0 = a[b];
    let x1 = x0;
    let x2 = x0;
    let x3 = x0;
    for (let c = 1; c < nc; c++) {
      const v = a[b + c];
      x0 += w0[c] * v;
      x1 += w1[c] * v;
      x2 += w2[c] * v;
      x3 += w3[c] * v;
    }
    out[i] = x0;
    out[items + i] = x1;
    out[2 * items + i] = x2;
    out[3 * items + i] = x3;
  }
}
